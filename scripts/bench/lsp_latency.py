#!/usr/bin/env python3
"""Latency of `rill lsp` on the 1.12-million-cell case (60 x 220 x 85, porosity
and permeability in `file` arrays): time from each one-character `didChange`
in the main file to the `publishDiagnostics` of that version, and of hovers.
Not run in CI.

usage: lsp_latency.py [--case DIR/field.rill] [--rill target/release/rill] [--edits 100] [--hovers 100]
                     [--target comment|well|rock] [--pause S] [--settle S] [--raw]

--target says where the characters are typed: at the end of the first
comment line (nothing to recompute), after `0.3` in the first well's radius
(the well index changes), or over the `1` of `kz = 0.1 * kx`, replaced by
the digits 2 to 9 and 1 in turn (every edit makes a new million-cell kz and
re-scans its faces: the worst case).

Without --case, the case is generated into a temporary folder with
scripts/bench/gen_field_case.py (numpy).
"""
import argparse
import json
import os
import queue
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]


class Server:
    """A tiny JSON-RPC client over the server's stdio."""

    def __init__(self, cmd):
        self.p = subprocess.Popen(cmd, stdin=subprocess.PIPE, stdout=subprocess.PIPE)
        self.q = queue.Queue()
        self.next_id = 1
        threading.Thread(target=self._read, daemon=True).start()

    def _read(self):
        out = self.p.stdout
        while True:
            head = b""
            while not head.endswith(b"\r\n\r\n"):
                c = out.read(1)
                if not c:
                    return
                head += c
            n = int(next(l for l in head.split(b"\r\n") if l.lower().startswith(b"content-length")).split(b":")[1])
            msg = json.loads(out.read(n))
            self.q.put((time.perf_counter(), msg))

    def send(self, obj):
        body = json.dumps(obj).encode()
        self.p.stdin.write(b"Content-Length: %d\r\n\r\n" % len(body) + body)
        self.p.stdin.flush()

    def notify(self, method, params):
        self.send({"jsonrpc": "2.0", "method": method, "params": params})

    def request(self, method, params=None):
        i = self.next_id
        self.next_id += 1
        msg = {"jsonrpc": "2.0", "id": i, "method": method}
        if params is not None:
            msg["params"] = params
        self.send(msg)
        return i

    def wait(self, pred, timeout=600):
        end = time.time() + timeout
        while True:
            t, msg = self.q.get(timeout=max(0.01, end - time.time()))
            if "method" in msg and "id" in msg:  # a request from the server
                self.send({"jsonrpc": "2.0", "id": msg["id"], "result": None})
                continue
            if pred(msg):
                return t, msg


def summary(name, xs):
    xs = sorted(x * 1000 for x in xs)
    print(f"{name}: n={len(xs)} median {statistics.median(xs):.1f} ms, "
          f"p90 {xs[int(0.9 * (len(xs) - 1))]:.1f} ms, worst {xs[-1]:.1f} ms")


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--case")
    ap.add_argument("--rill", default=str(REPO / "target" / "release" / "rill"))
    ap.add_argument("--edits", type=int, default=100)
    ap.add_argument("--raw", action="store_true", help="print every edit's latency in order")
    ap.add_argument("--settle", type=float, default=0.0, help="seconds to wait after opening before the first edit")
    ap.add_argument("--pause", type=float, default=0.0, help="seconds between edits, as a typist pauses (0: back to back)")
    ap.add_argument("--hovers", type=int, default=100)
    ap.add_argument("--target", choices=["comment", "well", "rock"], default="comment",
                    help="where the characters are typed (see the module doc)")
    a = ap.parse_args()
    tmp = None
    if a.case:
        deck = Path(a.case).resolve()
    else:
        tmp = tempfile.TemporaryDirectory()
        subprocess.run([sys.executable, str(REPO / "scripts" / "bench" / "gen_field_case.py"), tmp.name], check=True)
        deck = Path(tmp.name) / "field.rill"
    text = deck.read_text()
    uri = deck.as_uri()
    s = Server([a.rill, "lsp"])
    s.request("initialize", {"processId": os.getpid(), "rootUri": deck.parent.as_uri(), "capabilities": {}})
    s.wait(lambda m: m.get("id") == 1)
    s.notify("initialized", {})
    t0 = time.perf_counter()
    s.notify("textDocument/didOpen", {"textDocument": {"uri": uri, "languageId": "rill", "version": 1, "text": text}})
    t1, first = s.wait(lambda m: m.get("method") == "textDocument/publishDiagnostics" and m["params"].get("version") == 1)
    print(f"open (arrays read and parsed): {(t1 - t0) * 1000:.0f} ms, "
          f"{len(first['params']['diagnostics'])} diagnostics")

    time.sleep(a.settle)
    # One digit typed at a time at the target.
    lines = text.split("\n")
    if a.target == "comment":
        line, col = 0, len(lines[0])
    else:
        needle = "radius = 0.3" if a.target == "well" else "kz = 0."
        line = next(i for i, l in enumerate(lines) if needle in l)
        col = lines[line].index(needle) + len(needle)
    edits = []
    for v in range(2, 2 + a.edits):
        time.sleep(a.pause)
        t = time.perf_counter()
        if a.target == "rock":
            # Replace the digit: 0.2, 0.3, ... 0.9, 0.1, 0.2, ...
            end, typed = col + 1, str(v % 9 + 1)
        else:
            end, typed = col, "x" if a.target == "comment" else "1"
        s.notify("textDocument/didChange", {
            "textDocument": {"uri": uri, "version": v},
            "contentChanges": [{"range": {"start": {"line": line, "character": col}, "end": {"line": line, "character": end}}, "text": typed}],
        })
        if a.target != "rock":
            col += 1
        t2, _ = s.wait(lambda m, v=v: m.get("method") == "textDocument/publishDiagnostics" and m["params"].get("version") == v)
        edits.append(t2 - t)
    if a.raw:
        print("per edit (ms):", " ".join(f"{x * 1000:.0f}" for x in edits))
    summary(f"didChange -> publishDiagnostics ({a.target})", edits)

    # Hovers on the kx array value, a well location and a number.
    targets = []
    for i, l in enumerate(lines):
        if "kx = file" in l:
            targets.append((i, l.index("file") + 1))
        if "location = (" in l:
            targets.append((i, l.index("(") + 1))
        if "dx = 60 ft" in l:
            targets.append((i, l.index("60")))
    hovers = []
    for n in range(a.hovers):
        line_h, col_h = targets[n % len(targets)]
        t = time.perf_counter()
        i = s.request("textDocument/hover", {"textDocument": {"uri": uri}, "position": {"line": line_h, "character": col_h}})
        t2, _ = s.wait(lambda m, i=i: m.get("id") == i)
        hovers.append(t2 - t)
    summary("hover", hovers)

    i = s.request("shutdown")
    s.wait(lambda m: m.get("id") == i)
    s.notify("exit", None)
    print("exit code", s.p.wait(10))
    if tmp:
        tmp.cleanup()


if __name__ == "__main__":
    main()
