#!/usr/bin/env python3
"""Generate the 60 x 220 x 85 benchmark case (1.12 million cells) with
porosity and permeability in `file` arrays, five wells and log-normal
permeability. Fictional data, for measurement only.

With --waterflood the same block holds oil above a water contact near its
base, with water injected for a year (an oil-water deck).

usage: gen_field_case.py OUTDIR [--nx 60 --ny 220 --nz 85] [--transient | --waterflood]
"""
import argparse
import os

import numpy as np


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("outdir")
    ap.add_argument("--nx", type=int, default=60)
    ap.add_argument("--ny", type=int, default=220)
    ap.add_argument("--nz", type=int, default=85)
    ap.add_argument("--seed", type=int, default=20261202)
    ap.add_argument("--transient", action="store_true", help="a short transient run instead of a steady solve")
    ap.add_argument("--waterflood", action="store_true", help="oil and water, a year of injection")
    a = ap.parse_args()
    os.makedirs(a.outdir, exist_ok=True)
    nx, ny, nz = a.nx, a.ny, a.nz
    n = nx * ny * nz
    rng = np.random.default_rng(a.seed)
    # Log-normal permeability with layer trends: ln k ~ N(ln 100 md + layer shift, 1.5).
    layer_shift = np.repeat(np.sin(np.arange(nz) * 0.7) * 1.2, nx * ny)
    lnk = np.log(100.0) + layer_shift + 1.5 * rng.standard_normal(n)
    kx = np.minimum(np.exp(lnk), 15000.0)  # keep below the 20-darcy warning
    poro = np.clip(0.12 + 0.03 * (lnk - np.log(100.0)) / 1.5 + 0.01 * rng.standard_normal(n), 0.05, 0.35)
    # Plain whitespace-separated numbers, ten per line, no comments, so that
    # numpy.fromfile(sep=" ") reads exactly the same files.
    for name, arr, fmt in (("kx.txt", kx, "%.6g"), ("porosity.txt", poro, "%.5f")):
        np.savetxt(os.path.join(a.outdir, name), arr.reshape(-1, 10) if n % 10 == 0 else arr[:, None], fmt=fmt)
    wells = [(nx // 4, ny // 4, "producer", "bhp 1500 psi"), (3 * nx // 4, ny // 4, "producer", "bhp 1600 psi"),
             (nx // 2, ny // 2, "injector", "bhp 4200 psi"), (nx // 4, 3 * ny // 4, "producer", "bhp 1550 psi"),
             (3 * nx // 4, 3 * ny // 4, "producer", "rate 2000 stb/day")]
    if a.waterflood:
        wells = [(nx // 4, ny // 4, "producer", "bhp 2800 psi"), (3 * nx // 4, ny // 4, "producer", "bhp 2900 psi"),
                 (nx // 2, ny // 2, "injector", "water_rate 20000 stb/day"),
                 (nx // 4, 3 * ny // 4, "producer", "bhp 2850 psi"),
                 (3 * nx // 4, 3 * ny // 4, "producer", "liquid_rate 3000 stb/day")]
    wtext = []
    for idx, (i, j, role, control) in enumerate(wells, 1):
        limit = ""
        if control.startswith(("rate", "liquid_rate")):
            limit = "\n  bhp_limit = 1000 psi"
        elif control.startswith("water_rate"):
            limit = "\n  bhp_limit = 5500 psi"
        wtext.append(f'well "BX-{idx}" {{\n  role = {role}\n  location = ({i + 1}, {j + 1})\n'
                     f'  radius = 0.3 ft\n  control = {control}{limit}\n}}\n')
    timeline = ("timeline {\n  kind = transient\n  end = 30 day\n  first_step = 1 day\n  max_step = 10 day\n}\n"
                if a.transient else "timeline {\n  kind = steady\n}\n")
    liquids = """fluid "brine" {
  viscosity = 0.6 cP
  fvf = 1.01 rb/stb
  compressibility = 3e-6 1/psi
  density = 63 lb/ft^3
}
"""
    initial = "initial {\n  pressure = 3600 psi at 8000 ft\n}\n"
    if a.waterflood:
        timeline = ("timeline {\n  end = 1 yr\n  first_step = 1 day\n  max_step = 30 day\n"
                    "  report_every = 90 day\n}\n")
        liquids = """oil {
  viscosity = 1.6 cP
  fvf = 1.2 rb/stb
  compressibility = 1e-5 1/psi
  density = 50 lb/ft^3
}

water {
  viscosity = 0.6 cP
  fvf = 1.01 rb/stb
  compressibility = 3e-6 1/psi
  density = 63 lb/ft^3
}

relperm "sand" {
  model = corey
  swc = 0.18
  sor = 0.22
  krw_end = 0.35
  kro_end = 0.85
  nw = 2.5
  no = 2
  pc_entry = 4 psi
}
"""
        base = 8000 + 4 * nz
        initial = f"initial {{\n  pressure = 3600 psi at 8000 ft\n  water_contact = {base - 0.12 * 4 * nz:.1f} ft\n}}\n"
    deck = f'''# Generated benchmark case: {nx} x {ny} x {nz} cells, log-normal permeability. Fictional data.
case "Brackwater benchmark block" {{
  title = "generated {n} cells"
}}

grid {{
  cells = {nx} x {ny} x {nz}
  dx = 60 ft
  dy = 60 ft
  dz = 4 ft
  top = 8000 ft
}}

rock {{
  porosity = file "porosity.txt"
  kx = file "kx.txt" md
  ky = kx
  kz = 0.1 * kx
  compressibility = 4e-6 1/psi
}}

''' + liquids + "\n" + initial + "\n" + "\n".join(wtext) + "\n" + timeline
    with open(os.path.join(a.outdir, "field.rill"), "w") as f:
        f.write(deck)
    print(os.path.join(a.outdir, "field.rill"))


if __name__ == "__main__":
    main()
