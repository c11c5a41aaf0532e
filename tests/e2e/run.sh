#!/bin/sh
# End-to-end tests of `markwell serve` through real LSP clients: pytest-lsp (client A),
# headless Neovim 0.7 (client B) and Emacs 28 + Eglot 1.9 in batch mode (client C), and the
# set-ups shipped in editor-configs/ loaded unchanged (test_shipped_configs.py).
#
# Usage: tests/e2e/run.sh /absolute/path/to/markwell [pytest args...]
#
# Needs python3 (>= 3.10, with venv) and, for the editor clients, `nvim` and `emacs` + eglot:
#   apt-get install -y --no-install-recommends neovim emacs-nox elpa-eglot
# The Python packages come from requirements.lock.txt into a venv at $MARKWELL_E2E_VENV
# (default: target/e2e-venv). LSP_E2E_REQUIRE_EDITORS=1 (the default here) makes a missing
# editor a failure instead of a skip. Each client profile in LSP_CLIENT_CAPS_LIST is run in turn
# (they differ in declared position encodings: utf-16 for vscode/nvim 0.7, utf-8 for nvim 0.11).
# LSP_E2E_EDITORS="nvim" limits the editor clients to Neovim (default: "nvim emacs").
set -eu
here=$(cd "$(dirname "$0")" && pwd)
repo=$(cd "$here/../.." && pwd)
binary=${1:?usage: tests/e2e/run.sh /absolute/path/to/markwell [pytest args...]}
shift
case "$binary" in
  /*) ;;
  *) echo "run.sh: the binary path must be absolute (Eglot starts the server from the project root)" >&2; exit 2 ;;
esac
[ -x "$binary" ] || { echo "run.sh: $binary is not an executable" >&2; exit 2; }

venv=${MARKWELL_E2E_VENV:-$repo/target/e2e-venv}
if [ ! -x "$venv/bin/python" ]; then
  python3 -m venv "$venv"
fi
"$venv/bin/pip" install --quiet --disable-pip-version-check -r "$here/requirements.lock.txt"

export LSP_SERVER_CMD="$binary serve"
export LSP_E2E_REQUIRE_EDITORS="${LSP_E2E_REQUIRE_EDITORS:-1}"
cd "$here"
status=0
for caps in ${LSP_CLIENT_CAPS_LIST:-visual-studio-code neovim@v0.7.0 neovim@v0.11.0}; do
  echo "== pytest-lsp with client profile $caps"
  LSP_CLIENT_CAPS="$caps" timeout -k 10 600 "$venv/bin/python" -m pytest test_pytest_lsp.py -q -p no:cacheprovider "$@" || status=1
done
echo "== editors (neovim, emacs/eglot)"
timeout -k 10 600 "$venv/bin/python" -m pytest test_editors.py -q -p no:cacheprovider "$@" || status=1
echo "== shipped editor set-ups (Neovim 0.11 and 0.7, Eglot, lsp-mode; Helix, Sublime, Kate files)"
timeout -k 10 600 "$venv/bin/python" -m pytest test_shipped_configs.py -q -p no:cacheprovider "$@" || status=1
exit $status
