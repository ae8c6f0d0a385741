#!/usr/bin/env python3
"""The oil-water engine's speed on two cases, and its linear solve against
scipy's on the same Jacobian, in the same run.

(a) a homogeneous quarter five-spot of N x N cells (default 100 x 100),
    water injected in one corner and liquid produced from the other, run to
    1.5 pore volumes injected;
(b) the 1.12-million-cell generated block (`gen_field_case.py
    --waterflood`: oil above a water contact, one injector, four
    producers) run for a year.

For each: steps, Newton iterations per step, linear iterations per Newton
iteration, wall time, peak memory of the run (the child's maximum resident
set) and the time per cell per Newton iteration, read from the result set
(`series.json`) that `rill run` writes. Then the first Newton system
(`rill run --export-system`) goes to `cpr_vs_scipy.py --system`, which
times rill's CPR-GMRES and scipy's GMRES with spilu on it to the same
relative residual.

usage: scripts/bench/oil_water_runs.py [--cases a b] [--n 100] [--nz 85] [--peer a] [--tol 1e-6] [--fills 10 20 40]
Needs: a release build (cargo build --release -p rill-cli) and
pip install -r scripts/bench/requirements.txt
"""
import argparse
import json
import os
import subprocess
import sys
import tempfile

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
RILL = os.path.join(ROOT, "target", "release", "rill")


def five_spot(n):
    """The quarter five-spot deck; its pore volume is n*n*10*10*20*0.2 ft^3,
    injected at a rate that takes about three years to 1.5 PV."""
    pv_bbl = n * n * 10 * 10 * 20 * 0.2 / 5.614583
    rate = round(1.5 * pv_bbl / 1100.0)
    days = 1.5 * pv_bbl / rate  # water fvf 1: 1.5 PV injected
    return pv_bbl, f'''# Quarter five-spot benchmark, fictional data.
grid {{
  cells = {n} x {n} x 1
  dx = 10 ft
  dy = 10 ft
  dz = 20 ft
  top = 6000 ft
}}
rock {{
  porosity = 0.2
  kx = 150 md
  ky = kx
  kz = kx
  compressibility = 3e-6 1/psi
}}
oil {{
  viscosity = 2 cP
  fvf = 1.15 rb/stb
  compressibility = 1e-5 1/psi
  density = 50 lb/ft^3
}}
water {{
  viscosity = 0.5 cP
  fvf = 1 rb/stb
  compressibility = 3e-6 1/psi
  density = 62.4 lb/ft^3
}}
relperm "sand" {{
  model = corey
  swc = 0.2
  sor = 0.2
  krw_end = 0.35
  kro_end = 0.85
  nw = 2
  no = 2
}}
initial {{
  pressure = 3000 psi at 6010 ft
  water_saturation = 0.2
}}
well "INJ" {{
  role = injector
  location = (1, 1)
  radius = 0.3 ft
  control = water_rate {rate} stb/day
  bhp_limit = 8000 psi
}}
well "PROD" {{
  role = producer
  location = ({n}, {n})
  radius = 0.3 ft
  control = liquid_rate {rate} stb/day
  bhp_limit = 500 psi
}}
timeline {{
  end = {days:.1f} day
  first_step = 1 day
  max_step = 30 day
  report_every = {days / 15:.2f} day
}}
'''


def run(deck, work):
    out = os.path.join(work, "out")
    system = os.path.join(work, "system")
    pid = os.fork()
    if pid == 0:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, 1)
        os.execv(RILL, [RILL, "run", deck, "--out", out, "--export-system", system])
    _, status, usage = os.wait4(pid, 0)
    if os.waitstatus_to_exitcode(status) != 0:
        sys.exit(f"rill run {deck} failed")
    with open(os.path.join(out, "series.json")) as f:
        doc = json.load(f)
    return doc, usage.ru_maxrss / 1024.0, system


def report(name, cells, doc, peak_mib):
    s = doc["solver"]
    steps, newton, linear = s["steps"], s["newton_iterations"], s["linear_iterations"]
    secs = doc["timings"]["solver_seconds"]
    print(f"{name}: {cells} cells, {steps} steps ({s['step_cuts']} cuts), "
          f"{newton / max(steps, 1):.2f} Newton/step, {linear / max(newton, 1):.2f} linear/Newton, "
          f"{secs:.2f} s, peak {peak_mib:.0f} MiB, "
          f"{secs / max(newton, 1) / cells * 1e6:.2f} us per cell per Newton iteration")
    return secs


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--cases", nargs="+", default=["a", "b"])
    ap.add_argument("--n", type=int, default=100)
    ap.add_argument("--nz", type=int, default=85, help="layers of case (b): 85 is the 1.12-million-cell block")
    ap.add_argument("--peer", nargs="*", default=["a"], help="cases whose first system goes to scipy too")
    ap.add_argument("--tol", type=float, default=1e-6)
    ap.add_argument("--fills", type=int, nargs="*", default=[10, 20, 40],
                    help="spilu fill factors of the scipy peers (the largest systems: 10 only)")
    a = ap.parse_args()
    if not os.path.exists(RILL):
        sys.exit("build first: cargo build --release -p rill-cli")
    for case in a.cases:
        work = tempfile.mkdtemp(prefix=f"rill-ow-{case}-")
        if case == "a":
            pv, text = five_spot(a.n)
            deck = os.path.join(work, "five-spot.rill")
            with open(deck, "w") as f:
                f.write(text)
            cells, name = a.n * a.n, f"(a) quarter five-spot {a.n} x {a.n} to 1.5 PV"
        else:
            subprocess.run([sys.executable, os.path.join(ROOT, "scripts/bench/gen_field_case.py"), work,
                            "--waterflood", "--nz", str(a.nz)], check=True, capture_output=True)
            deck = os.path.join(work, "field.rill")
            cells, name = 60 * 220 * a.nz, f"(b) generated block 60 x 220 x {a.nz}, waterflood for a year"
        doc, peak, system = run(deck, work)
        report(name, cells, doc, peak)
        if case in a.peer:
            subprocess.run([sys.executable, os.path.join(ROOT, "scripts/bench/cpr_vs_scipy.py"),
                            "--system", system, "--tol", str(a.tol), "--repeat", "1",
                            "--fills", *map(str, a.fills)], check=True)


if __name__ == "__main__":
    sys.exit(main())
