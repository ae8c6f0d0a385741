"""Compares two rill result sets: every series of series.csv and every
cell value of every map, each relative to the largest magnitude of its own
series (or map array), so a series that passes through zero is compared at
its own scale. Prints the largest difference per file kind and exits 1 when
one exceeds the tolerance.

    python3 compare_runs.py A.out B.out [--tol 1e-8]

The maps are rill's VTK XML files (binary, zlib-compressed data arrays,
UInt64 headers), read here with the standard library only.
"""
import argparse
import base64
import csv
import pathlib
import re
import struct
import sys
import zlib


def series(out):
    with open(out / "series.csv", newline="") as f:
        rows = list(csv.reader(f))
    head, body = rows[0], rows[1:]
    return {name: [float(r[k]) for r in body] for k, name in enumerate(head)}


def vtk_arrays(path):
    """Name -> list of floats of every binary Float64 DataArray."""
    text = path.read_text()
    out = {}
    pattern = r'<DataArray type="Float64" Name="([^"]+)"[^>]*format="binary">([^<]*)</DataArray>'
    for name, payload in re.findall(pattern, text):
        payload = payload.strip()
        # The header (UInt64: blocks, block size, last size, compressed
        # sizes) is base64-encoded on its own, then the blocks.
        first = base64.b64decode(payload[:32])
        nblocks = struct.unpack("<Q", first[:8])[0]
        head_len = 8 * (3 + nblocks)
        head_b64 = 4 * ((head_len + 2) // 3)
        head = base64.b64decode(payload[:head_b64])
        sizes = struct.unpack("<%dQ" % nblocks, head[24:head_len])
        data = base64.b64decode(payload[head_b64:])
        raw, pos = b"", 0
        for s in sizes:
            raw += zlib.decompress(data[pos:pos + s])
            pos += s
        out[name] = list(struct.unpack("<%dd" % (len(raw) // 8), raw))
    return out


def rel_diff(a, b):
    finite = [(x, y) for x, y in zip(a, b) if x == x and y == y]
    scale = max([abs(v) for p in finite for v in p] + [1e-300])
    return max([abs(x - y) for x, y in finite] + [0.0]) / scale


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("a", type=pathlib.Path)
    ap.add_argument("b", type=pathlib.Path)
    ap.add_argument("--tol", type=float, default=1e-8)
    args = ap.parse_args()
    bad = []
    sa, sb = series(args.a), series(args.b)
    if sa.keys() != sb.keys() or len(sa["time [day]"]) != len(sb["time [day]"]):
        print("series: different columns or report times")
        return 1
    worst_series = (0.0, "")
    for name in sa:
        if name.startswith("balance_error"):
            continue  # round-off by definition; each run checks its own
        d = rel_diff(sa[name], sb[name])
        worst_series = max(worst_series, (d, name))
        if d > args.tol:
            bad.append(f"series {name}: {d:.2e}")
    maps_a = sorted((args.a / "maps").glob("*.vtr")) + sorted((args.a / "maps").glob("*.vts"))
    worst_map = (0.0, "")
    for fa in maps_a:
        fb = args.b / "maps" / fa.name
        if not fb.exists():
            bad.append(f"map {fa.name} missing")
            continue
        aa, ab = vtk_arrays(fa), vtk_arrays(fb)
        for name, values in aa.items():
            if name not in ab:
                bad.append(f"map {fa.name}: no {name}")
                continue
            d = rel_diff(values, ab[name])
            worst_map = max(worst_map, (d, f"{fa.name} {name}"))
            if d > args.tol:
                bad.append(f"map {fa.name} {name}: {d:.2e}")
    print(
        f"compare {args.a.name} {args.b.name}: {len(sa)} series, largest difference "
        f"{worst_series[0]:.2e} ({worst_series[1]}); {len(maps_a)} maps, largest "
        f"{worst_map[0]:.2e} ({worst_map[1]})"
    )
    for b in bad:
        print("  over tolerance:", b)
    return 1 if bad or not maps_a else 0


if __name__ == "__main__":
    sys.exit(main())
