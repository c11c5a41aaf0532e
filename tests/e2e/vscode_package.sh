#!/usr/bin/env bash
# Builds the VS Code extension in editor-configs/vscode from its lock file (npm ci), compiles it
# and packages it to a .vsix with @vscode/vsce, then checks what the package holds: the compiled
# entry point, the language chosen by the file name, and the language client it needs.
set -euo pipefail
cd "$(dirname "$0")/../../editor-configs/vscode"
command -v npm >/dev/null 2>&1 || { echo "vscode_package.sh: npm is missing (Node.js 20 with npm is needed)" >&2; exit 1; }
npm ci --no-audit --no-fund --loglevel=error
npm run --silent compile
npm run --silent package >/dev/null
python3 - <<'PY'
import json, zipfile
with zipfile.ZipFile("markwell.vsix") as vsix:
    names = set(vsix.namelist())
    for needed in ("extension/out/extension.js", "extension/package.json",
                   "extension/node_modules/vscode-languageclient/package.json"):
        assert needed in names, f"markwell.vsix lacks {needed}"
    manifest = json.loads(vsix.read("extension/package.json"))
    [language] = manifest["contributes"]["languages"]
    assert language["filenamePatterns"] == ["*.chart.json"], language
    assert "markwell.server.path" in manifest["contributes"]["configuration"]["properties"]
    entry = vsix.read("extension/out/extension.js").decode()
    assert 'args: ["serve"]' in entry or "args: ['serve']" in entry, "the server is not started as `serve`"
print("vscode: markwell.vsix packaged and checked")
PY
