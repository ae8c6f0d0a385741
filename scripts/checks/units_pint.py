#!/usr/bin/env python3
"""Cross-check the rill-units registry against pint.

Runs `cargo run -q -p rill-units --example dump_registry`, which prints the
registry as JSON, and compares the SI factor and the dimension of every unit
that pint knows with pint's own definition, to 1e-6 relative. Prints one line
per unit and a final line `units_pint: N passed, M failed`; exits non-zero on
any failure (or when the registry cannot be read).

Surface volume (S) has no pint counterpart: a stock-tank barrel is compared
as an oil barrel and a standard cubic metre as a cubic metre, so S counts as
[length]^3 in the dimension check.
"""

import json
import math
import os
import subprocess
import sys

import pint

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
REL_TOL = 1e-6

# Our name -> pint expression, where they differ. Names absent here are
# given to pint unchanged (m, cm, kg, bar, ...).
PINT_NAME = {
    "in": "inch",
    # pint's `acre` is the US survey acre (4046.873 m^2); ours is the
    # international acre, defined as 43560 international square feet.
    "acre": "43560 * foot ** 2",
    "md": "millidarcy",
    "mD": "millidarcy",
    "mPa": "millipascal",
    "psia": "psi",
    "lbf": "pound_force",
    "hr": "hour",
    "yr": "julian_year",
    "m3": "meter ** 3",
    "cm3": "centimeter ** 3",
    "ft3": "foot ** 3",
    "bbl": "oil_barrel",
    "rb": "oil_barrel",
    "rm3": "meter ** 3",
    # Surface volume (S) compared as volume at surface conditions.
    "stb": "oil_barrel",
    "Mstb": "1000 * oil_barrel",
    "MMstb": "1000000 * oil_barrel",
    "sm3": "meter ** 3",
    "cP": "centipoise",
    "lb": "pound",
    "%": "percent",
}

def load_registry():
    out = subprocess.run(
        ["cargo", "run", "-q", "-p", "rill-units", "--example", "dump_registry"],
        cwd=ROOT,
        check=True,
        stdout=subprocess.PIPE,
    ).stdout
    return json.loads(out)


def pint_dim(quantity):
    """Exponents (L, M, T) of a pint quantity; None if it has other dimensions."""
    dims = dict(quantity.dimensionality)
    l_exp = dims.pop("[length]", 0)
    m_exp = dims.pop("[mass]", 0)
    t_exp = dims.pop("[time]", 0)
    if dims:
        return None
    return (l_exp, m_exp, t_exp)


def main():
    ureg = pint.UnitRegistry()
    try:
        units = load_registry()
    except (subprocess.CalledProcessError, json.JSONDecodeError) as e:
        print(f"units_pint: cannot read the registry: {e}")
        return 2
    passed = failed = skipped = 0
    for u in units:
        name = u["name"]
        if u["gauge"]:
            # Gauge units are skipped: pint has no psig or barg, and what sets
            # them apart (one standard atmosphere added on conversion) is an
            # offset, not a factor. Their factors are those of psi and bar,
            # which are checked.
            print(f"skip  {name:8} gauge unit: an offset, not a factor; pint has none")
            skipped += 1
            continue
        expr = PINT_NAME.get(name, name)
        try:
            base = ureg.Quantity(ureg.parse_expression(expr)).to_base_units()
        except Exception as e:  # noqa: BLE001 - pint raises several kinds
            print(f"FAIL  {name:8} pint does not know `{expr}`: {e}")
            failed += 1
            continue
        theirs = float(base.magnitude)
        ours = float(u["factor"])
        d = u["dim"]
        our_dim = (d["l"] + 3 * d["s"], d["m"], d["t"])
        their_dim = pint_dim(base)
        rel = abs(ours - theirs) / abs(theirs) if theirs != 0 else math.inf
        ok = rel <= REL_TOL and our_dim == their_dim
        status = "ok   " if ok else "FAIL "
        print(
            f"{status} {name:8} ours {ours:.12g}  pint ({expr}) {theirs:.12g}  "
            f"rel {rel:.1e}  dim L{our_dim[0]} M{our_dim[1]} T{our_dim[2]}"
            + ("" if our_dim == their_dim else f" != pint {their_dim}")
        )
        if ok:
            passed += 1
        else:
            failed += 1
    print(f"units_pint: {passed} passed, {failed} failed")
    return 0 if failed == 0 and passed > 0 else 1


if __name__ == "__main__":
    sys.exit(main())
