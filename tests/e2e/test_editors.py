"""(Adapted from the project's real-LSP-clients recipe; cases of our own in cases.json.)
Clients B and C: real editors (Neovim 0.7 headless, Emacs 28 + Eglot 1.9 in batch mode)
drive the server; each editor writes JSON lines, which we check here.

Env: LSP_SERVER_CMD (absolute paths! Eglot starts it from the project root, not the cwd),
     LSP_TIMEOUT_MS, LSP_E2E_REQUIRE_EDITORS=1 to fail instead of skip when an editor
     is not installed.  Cases come from cases.json.
"""
import json
import os
import pathlib
import re
import shlex
import shutil
import subprocess
import sys
import time

import pytest

HERE = pathlib.Path(__file__).resolve().parent
DEFAULT_CMD = f"{shlex.quote(str(HERE.parent.parent / 'target' / 'debug' / 'markwell'))} serve"
SERVER_CMD = os.environ.get("LSP_SERVER_CMD", DEFAULT_CMD)
CASES = json.loads((HERE / "cases.json").read_text(encoding="utf-8"))
TIMEOUT_MS = int(os.environ.get("LSP_TIMEOUT_MS", "10000"))

EDITORS = {
    # -u NONE: no user config/plugins/filetype detection; -i NONE: no shada; -n: no swap
    "nvim": ["nvim", "--headless", "-u", "NONE", "-i", "NONE", "-n",
             "-c", f"luafile {HERE / 'nvim_lsp_e2e.lua'}"],
    # plain --batch (not -Q): Debian's site-start must run so elpa-eglot is on the load-path
    "emacs": ["emacs", "--batch", "-l", str(HERE / "eglot-e2e.el")],
}
# LSP_E2E_EDITORS="nvim" runs only Neovim (default: both)
EDITORS = {name: argv for name, argv in EDITORS.items()
           if name in os.environ.get("LSP_E2E_EDITORS", "nvim emacs").split()}


def range_key(r: str):
    """'1:8-1:11' -> (1, 8, 1, 11): the drivers sort numerically, not as strings."""
    return tuple(int(x) for x in re.split(r"[:-]", r))


def run_editor(editor, case, tmp_path):
    if shutil.which(EDITORS[editor][0]) is None:
        if os.environ.get("LSP_E2E_REQUIRE_EDITORS") == "1":
            pytest.fail(f"{editor} not installed")
        pytest.skip(f"{editor} not installed")
    doc = tmp_path / case["file"]
    doc.write_text(case["text"], encoding="utf-8")
    out = tmp_path / "out.jsonl"
    env = dict(os.environ,
               LSP_SERVER_CMD=SERVER_CMD,
               LSP_TEST_FILE=str(doc),
               LSP_ROOT_DIR=str(tmp_path),
               LSP_OUT=str(out),
               LSP_LANGUAGE_ID=case.get("language_id", "plaintext"),
               LSP_TIMEOUT_MS=str(TIMEOUT_MS),
               LSP_EXPECT_RANGES=",".join(sorted(case["expect_ranges"], key=range_key)))
    # per-test logs: nvim writes the server's stderr (and, with LSP_NVIM_LOG_LEVEL=debug,
    # all traffic) to $XDG_CACHE_HOME/nvim/lsp.log; eglot keeps stderr in its events buffer
    env["XDG_CACHE_HOME"] = str(tmp_path / "cache")
    env["LSP_EGLOT_EVENTS"] = str(tmp_path / "eglot-events.log")
    env.pop("LSP_APPEND_LINE", None)
    if case.get("append_line"):
        env["LSP_APPEND_LINE"] = case["append_line"]
    t0 = time.monotonic()
    # outer timeout: a Lua error without a quit leaves headless nvim running forever
    proc = subprocess.run(["timeout", "-k", "5", str(TIMEOUT_MS // 1000 * 4 + 10), *EDITORS[editor]],
                          env=env, cwd=tmp_path, stdin=subprocess.DEVNULL,
                          capture_output=True, text=True)
    elapsed = time.monotonic() - t0
    events = [json.loads(line) for line in out.read_text(encoding="utf-8").splitlines() if line.strip()]
    print(f"{editor} {case['name']}: rc={proc.returncode} {elapsed:.2f}s\n{proc.stderr[-3000:]}")
    for log in (tmp_path / "cache" / "nvim" / "lsp.log", tmp_path / "eglot-events.log"):
        if log.exists():  # shown by pytest only when the test fails
            print(f"---- {log.name} (tail) ----\n{log.read_text(errors='replace')[-4000:]}")
    return proc, events


@pytest.mark.parametrize("case", CASES, ids=[c["name"] for c in CASES])
@pytest.mark.parametrize("editor", sorted(EDITORS))
def test_editor(editor, case, tmp_path):
    proc, events = run_editor(editor, case, tmp_path)
    failed = [e for e in events if e["kind"] == "check" and not e["ok"]]
    errors = [e for e in events if e["kind"] == "script_error"]
    assert not errors, errors
    assert not failed, failed
    assert proc.returncode == 0, proc.stderr[-2000:]
    assert events[-1] == {"kind": "done", "failures": 0}

    if "expect_after_apply" in case:
        applied = [e for e in events if e["kind"] == "after_apply"]
        assert applied, "no code action with an edit was applied"
        # nvim's lines have no trailing "" for the final newline, Emacs's split-string has one
        got = "\n".join(applied[0]["lines"]).rstrip("\n")
        assert got == case["expect_after_apply"].rstrip("\n")
