#!/bin/sh
# Time `rill check` text output on pathological decks, through a pipe.
# Usage: scripts/bench/long_diagnostics.sh [path/to/rill]
# Measured on the 2-core VM (debug profile, which is optimised here):
#   input                         before    after
#   1 MB identifier                6.4 s    0.8 s
#   10^6 unclosed `{`             19.8 s    0.24 s
#   100 000-entry array line       2.6 s    0.26 s
#   50 MB identifier              38 s      1.6 s (the nearest-name search
#                                          no longer computes edit distances
#                                          that cannot pass; it took 27 s)
set -eu
rill=${1:-target/debug/rill}
dir=$(mktemp -d)
trap 'rm -rf "$dir"' EXIT
python3 - "$dir" <<'PY'
import sys, os
d = sys.argv[1]
open(os.path.join(d, "ident.rill"), "w").write("grid {\n  cells = 3 x 3 x 1\n  " + "a" * 1_000_000 + " = 1 ft\n}\n")
open(os.path.join(d, "braces.rill"), "w").write("{" * 1_000_000 + "\n")
open(os.path.join(d, "array.rill"), "w").write(
    "grid {\n  cells = 3 x 3 x 1\n  dx = 100 ft\n  dy = 100 ft\n  dz = 30 ft\n  top = 5000 ft\n}\n"
    "rock {\n  porosity = [" + " ".join(["0.2"] * 100_000) + "]\n  kx = 10 mD\n ky = 10 mD\n kz = 1 mD\n}\n")
PY
for f in ident braces array; do
    start=$(date +%s.%N)
    "$rill" check "$dir/$f.rill" 2>&1 | cat >/dev/null || true
    end=$(date +%s.%N)
    echo "$f: $(echo "$end - $start" | bc) s"
done
