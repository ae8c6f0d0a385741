#!/usr/bin/env bash
# End-to-end tests of the language server: pytest-lsp drives the real
# `target/debug/rill lsp` over stdio (tests/lsp). Installs nothing: CI runs
# `pip install -r tests/lsp/requirements.txt` first.
set -euo pipefail
cd "$(dirname "$0")/../.."
cargo build -p rill-cli
cd tests/lsp
python3 -m pytest -q -p no:cacheprovider
