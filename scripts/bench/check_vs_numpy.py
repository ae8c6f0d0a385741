#!/usr/bin/env python3
"""Side-by-side speed of `rill check` on the generated 1.12-million-cell case
against numpy.fromfile parsing the same two array files, in the same run.

rill reads, parses and checks everything (deck, both arrays, derived kz, all
sanity and flow checks); numpy only parses the two array files. The ratio
printed is rill's time over numpy's (target: at most 0.5).

usage: scripts/bench/check_vs_numpy.py [--runs 5] [--keep DIR]
Needs a release build: cargo build --release -p rill-cli
"""
import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))


def peak_rss_mb_of(cmd):
    """Run cmd once and return (seconds, peak RSS in MB) of that child alone."""
    t0 = time.perf_counter()
    p = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    _, status, usage = os.wait4(p.pid, 0)
    dt = time.perf_counter() - t0
    if status != 0:
        sys.exit(f"failed: {' '.join(cmd)}")
    return dt, usage.ru_maxrss / 1024.0


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--runs", type=int, default=5)
    ap.add_argument("--keep", help="directory for the generated case (default: a temporary one)")
    a = ap.parse_args()
    rill = os.path.join(ROOT, "target", "release", "rill")
    if not os.path.exists(rill):
        sys.exit("build first: cargo build --release -p rill-cli")
    work = a.keep or tempfile.mkdtemp(prefix="rill-check-bench-")
    deck = os.path.join(work, "field.rill")
    if not os.path.exists(deck):
        subprocess.run([sys.executable, os.path.join(HERE, "gen_field_case.py"), work], check=True, stdout=subprocess.DEVNULL)
    # The deck must check clean: otherwise rill would stop early and the comparison would be unfair.
    out = subprocess.run([rill, "check", deck], capture_output=True, text=True)
    if out.returncode != 0 or "clean" not in out.stderr:
        sys.exit("the benchmark deck does not check clean:\n" + out.stderr)

    # numpy in a child too, so that both include process start and file reads.
    numpy_cmd = [sys.executable, "-c",
                 "import numpy as np, sys\n"
                 "for p in sys.argv[1:]: np.fromfile(p, sep=' ')\n",
                 os.path.join(work, "kx.txt"), os.path.join(work, "porosity.txt")]
    import numpy as np  # noqa: F401  (warm the page cache and check it is installed)
    for p in ("kx.txt", "porosity.txt"):
        np.fromfile(os.path.join(work, p), sep=" ")

    # numpy's own time without interpreter start-up, measured in process.
    in_proc = []
    for _ in range(a.runs):
        t0 = time.perf_counter()
        for p in ("kx.txt", "porosity.txt"):
            np.fromfile(os.path.join(work, p), sep=" ")
        in_proc.append(time.perf_counter() - t0)

    rill_t, numpy_t, rill_mem = [], [], 0.0
    for _ in range(a.runs):
        dt, mem = peak_rss_mb_of([rill, "check", deck])
        rill_t.append(dt)
        rill_mem = max(rill_mem, mem)
        dt, _ = peak_rss_mb_of(numpy_cmd)
        numpy_t.append(dt)
    r, n, ni = statistics.median(rill_t), statistics.median(numpy_t), statistics.median(in_proc)
    cells = 60 * 220 * 85
    print(f"cells: {cells}")
    print(f"rill check (whole process: read, parse, check): median {r * 1000:.1f} ms over {a.runs} runs, peak RSS {rill_mem:.0f} MB")
    print(f"numpy.fromfile of the two arrays (child process incl. start-up): median {n * 1000:.1f} ms")
    print(f"numpy.fromfile of the two arrays (in process, no start-up): median {ni * 1000:.1f} ms")
    print(f"ratio rill / numpy (in process): {r / ni:.2f}   (target <= 0.5)")
    print(f"ratio rill / numpy (both as processes): {r / n:.2f}")


if __name__ == "__main__":
    main()
