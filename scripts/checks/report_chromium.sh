#!/usr/bin/env bash
# Renders a rill report (demo data from rill-output's example) with headless
# Chromium and checks that the screenshot is a real page, not a blank one.
# Needs the Debian package `chromium`. Usage: report_chromium.sh [SHOT.png]
# (the screenshot is kept at SHOT.png when given). The cargo test
# `tests::chromium::report_renders_in_headless_chromium` makes the same check
# with a pixel analysis, and is skipped with a message without Chromium.
set -euo pipefail
cd "$(dirname "$0")/../.."
browser=$(command -v chromium || command -v chromium-browser || true)
if [ -z "$browser" ]; then
  echo "report_chromium: chromium not installed (apt-get install -y chromium)" >&2
  exit 1
fi
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cargo run -q -p rill-output --example demo_report -- "$work/demo.out"
shot="${1:-$work/report.png}"
timeout 120 "$browser" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
  --disable-background-networking --disable-component-update --disable-sync --hide-scrollbars \
  --user-data-dir="$work/profile" --screenshot="$shot" --window-size=1200,2400 \
  "file://$work/demo.out/report.html" >/dev/null 2>&1
size=$(stat -c %s "$shot")
dims=$(python3 -c 'import struct,sys; d=open(sys.argv[1],"rb").read(24); print("%dx%d" % struct.unpack(">II", d[16:24]))' "$shot")
if [ "$dims" != "1200x2400" ] || [ "$size" -lt 100000 ]; then
  echo "report_chromium: screenshot looks wrong ($dims, $size bytes)" >&2
  exit 1
fi
echo "report_chromium: ok ($dims, $size bytes${1:+, kept at $1})"
