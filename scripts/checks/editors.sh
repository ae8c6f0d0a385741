#!/usr/bin/env bash
# Checks the editor integrations under editors/: the VS Code extension
# (npm ci, tsc and esbuild, grammar tests, activation tests, .vsix
# packaging), the Helix config, Neovim (syntax; the LSP set-up against a
# stand-in server and the real `rill lsp`) and Emacs (byte-compile, ERT,
# eglot and lsp-mode sessions against the same two servers). Parts whose
# tool is missing are skipped with the reason printed; so are the real-server
# parts while `rill lsp` does not exist.
#
# Needs: node >= 20 and npm (required); python3 (TOML check); optional:
#   apt-get install -y neovim emacs-nox elpa-eglot elpa-lsp-mode
# Environment:
#   RILL_BIN=path        rill binary to use (default: target/debug/rill, built
#                        with `cargo build -p rill-cli` unless EDITORS_NO_BUILD=1)
#   EDITORS_STRICT=1     a missing nvim, emacs, eglot or lsp-mode is a failure, not a skip
# Ends with `editors: N passed, N failed, N skipped`; exits 1 on any failure.
set -uo pipefail
cd "$(dirname "$0")/../.."
repo=$(pwd)
vscode="$repo/editors/vscode"

passed=0
failed=0
skipped=0
failures=()
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

# step NAME COMMAND...: runs COMMAND and counts it as passed or failed.
step() {
  local name=$1
  shift
  echo "== editors: $name"
  local start=$SECONDS
  if "$@"; then
    passed=$((passed + 1))
    echo "-- ok: $name ($((SECONDS - start)) s)"
  else
    failed=$((failed + 1))
    failures+=("$name")
    echo "-- FAILED: $name ($((SECONDS - start)) s)"
  fi
}

skip() {
  skipped=$((skipped + 1))
  echo "== editors: $1"
  echo "-- skipped: $2"
}

# A missing optional tool: a skip, or a failure under EDITORS_STRICT=1.
missing() {
  if [ "${EDITORS_STRICT:-0}" = 1 ]; then
    failed=$((failed + 1))
    failures+=("$1")
    echo "== editors: $1"
    echo "-- FAILED: $2 (EDITORS_STRICT=1)"
  else
    skip "$1" "$2"
  fi
}

# ---- VS Code -----------------------------------------------------------
vsix_contents() {
  python3 - "$tmp/rill.vsix" <<'PY'
import sys, zipfile
names = set(zipfile.ZipFile(sys.argv[1]).namelist())
need = ["extension/package.json", "extension/out/extension.js",
        "extension/syntaxes/rill.tmLanguage.json", "extension/language-configuration.json",
        "extension/LICENSE.txt"]
missing = [n for n in need if n not in names]
# One bundle: no sources, tests or node_modules inside.
bad = [n for n in names if n.startswith(("extension/src/", "extension/test/", "extension/node_modules/"))]
if missing or bad:
    print("vsix: missing", missing, "unexpected", bad)
    sys.exit(1)
print(f"vsix: {len(names)} files, all expected ones present")
PY
}

if ! command -v node >/dev/null || ! command -v npm >/dev/null; then
  failed=$((failed + 1))
  failures+=("node and npm")
  echo "-- FAILED: node and npm are needed for the VS Code extension"
else
  step "vscode: npm ci" bash -c "cd '$vscode' && npm ci --no-audit --no-fund --loglevel=error"
  step "vscode: type-check (tsc) and bundle (esbuild)" bash -c "cd '$vscode' && npm run --silent compile"
  step "vscode: grammar tests" bash -c "cd '$vscode' && npx --no-install vscode-tmgrammar-test -g syntaxes/rill.tmLanguage.json 'test/grammar/*.rill'"
  step "vscode: grammar on the example decks (node --test)" bash -c "cd '$vscode' && node --test test/grammar-decks/*.test.js"
  step "vscode: activation tests (node --test)" bash -c "cd '$vscode' && node --test test/activation/*.test.js"
  step "vscode: package .vsix (vsce)" bash -c "cd '$vscode' && npx --no-install vsce package --no-dependencies --out '$tmp/rill.vsix' </dev/null && $(declare -f vsix_contents); tmp='$tmp' vsix_contents"
fi

# ---- Helix ------------------------------------------------------------------
helix_toml() {
  python3 - editors/helix/languages.toml <<'PY'
import sys, tomllib
with open(sys.argv[1], "rb") as f:
    cfg = tomllib.load(f)
lang = next(l for l in cfg["language"] if l["name"] == "rill")
assert lang["file-types"] == ["rill"], lang["file-types"]
assert lang["comment-token"] == "#"
server = cfg["language-server"][lang["language-servers"][0]]
assert server["command"] == "rill" and server["args"] == ["lsp"], server
assert set(server["config"]) >= {"inlayHints", "allowedIncludePaths"}, server["config"]
print("helix: languages.toml parses; rill uses", server["command"], *server["args"])
PY
}
step "helix: languages.toml" helix_toml

# ---- rill lsp ---------------------------------------------------------------
rill_bin=${RILL_BIN:-$repo/target/debug/rill}
if [ -z "${RILL_BIN:-}" ] && [ "${EDITORS_NO_BUILD:-0}" != 1 ] && command -v cargo >/dev/null; then
  step "build rill (cargo build -p rill-cli)" cargo build --quiet -p rill-cli
fi
lsp_reason=""
if [ ! -x "$rill_bin" ]; then
  lsp_reason="$rill_bin does not exist"
elif ! timeout 20 "$rill_bin" lsp --help </dev/null >/dev/null 2>&1; then
  lsp_reason="\`$rill_bin lsp --help\` fails: rill lsp is not available yet"
fi

# ---- Neovim -----------------------------------------------------------------
nvim_run() {
  # nvim_run SCRIPT: a headless session with editors/neovim/test/minimal_init.lua.
  timeout 120 nvim --headless --clean -u editors/neovim/test/minimal_init.lua \
    -c "luafile editors/neovim/test/$1" </dev/null
}
if command -v nvim >/dev/null; then
  echo "== editors: $(nvim --version | head -1)"
  step "neovim: syntax/rill.vim against the grammar fixtures" env RILL_NO_LSP=1 bash -c "$(declare -f nvim_run); nvim_run syntax.lua"
  if [ -d "$vscode/node_modules/vscode-languageserver" ]; then
    step "neovim: LSP set-up against the stand-in server" env RILL_EXPECT_CODE=stand-in.check RILL_NVIM_RUN=1 \
      RILL_LSP_CMD="$(command -v node) $vscode/test/activation/stand-in-server.js lsp" \
      bash -c "$(declare -f nvim_run); nvim_run diagnostics.lua"
  else
    skip "neovim: LSP set-up against the stand-in server" "editors/vscode/node_modules is missing (npm ci failed)"
  fi
  if [ -z "$lsp_reason" ]; then
    step "neovim: diagnostics and hover from rill lsp" env RILL_LSP_CMD="$rill_bin lsp" \
      bash -c "$(declare -f nvim_run); nvim_run diagnostics.lua"
  else
    skip "neovim: diagnostics and hover from rill lsp" "$lsp_reason"
  fi
else
  missing "neovim" "nvim is not installed (apt-get install -y neovim)"
fi

# ---- Emacs ------------------------------------------------------------------
# Debian's elpa-* packages (elpa-eglot, elpa-lsp-mode) live outside the
# load-path of `emacs -Q`; Emacs 29 has eglot built in.
emacs_path=()
for d in /usr/share/emacs/site-lisp/elpa/*/; do
  [ -d "$d" ] && emacs_path+=(-L "$d")
done
emacs_has() {
  emacs --batch -Q "${emacs_path[@]}" --eval "(require '$1)" >/dev/null 2>&1
}
emacs_compile() {
  mkdir -p "$tmp/emacs" && cp editors/emacs/rill-mode.el "$tmp/emacs/" &&
    emacs --batch -Q --eval '(setq byte-compile-error-on-warn t)' -f batch-byte-compile "$tmp/emacs/rill-mode.el" &&
    [ -f "$tmp/emacs/rill-mode.elc" ]
}
emacs_e2e() {
  # emacs_e2e FILE: an end-to-end client check, with $RILL_LSP_CMD set.
  timeout 120 emacs --batch -Q "${emacs_path[@]}" -L editors/emacs -l "editors/emacs/test/$1" </dev/null
}
if command -v emacs >/dev/null; then
  echo "== editors: $(emacs --version | head -1)"
  step "emacs: byte-compile rill-mode.el (warnings are errors)" emacs_compile
  # Against the compiled file when there is one, else the source.
  emacs_lib="$tmp/emacs"
  [ -f "$emacs_lib/rill-mode.elc" ] || emacs_lib=editors/emacs
  step "emacs: ERT tests" emacs --batch -Q "${emacs_path[@]}" -L "$emacs_lib" \
    -l editors/emacs/test/rill-mode-test.el -f ert-run-tests-batch-and-exit
  stand_in="$(command -v node) $vscode/test/activation/stand-in-server.js lsp"
  for client in eglot lsp-mode; do
    if ! emacs_has "$client"; then
      missing "emacs: $client" "$client is not installed (apt-get install -y elpa-$client)"
      continue
    fi
    if [ -d "$vscode/node_modules/vscode-languageserver" ]; then
      step "emacs: $client against the stand-in server" env RILL_STAND_IN=1 RILL_EXPECT_CODE=stand-in.check \
        RILL_LSP_CMD="$stand_in" bash -c "$(declare -p emacs_path); $(declare -f emacs_e2e); emacs_e2e rill-$client-e2e.el"
    else
      skip "emacs: $client against the stand-in server" "editors/vscode/node_modules is missing (npm ci failed)"
    fi
    if [ -z "$lsp_reason" ]; then
      step "emacs: $client diagnostics and hover from rill lsp" env RILL_LSP_CMD="$rill_bin lsp" \
        bash -c "$(declare -p emacs_path); $(declare -f emacs_e2e); emacs_e2e rill-$client-e2e.el"
    else
      skip "emacs: $client diagnostics and hover from rill lsp" "$lsp_reason"
    fi
  done
else
  missing "emacs" "emacs is not installed (apt-get install -y emacs-nox)"
fi

echo
if [ ${#failures[@]} -gt 0 ]; then
  echo "failed parts:"
  printf '  %s\n' "${failures[@]}"
fi
echo "editors: $passed passed, $failed failed, $skipped skipped"
[ "$failed" -eq 0 ]
