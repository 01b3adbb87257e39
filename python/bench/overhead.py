"""What the Python call adds to the library's time at 10^6 points.

Runs ``tauwise.stability`` on a 10^6-point phase record (a seeded
simulation of white and flicker FM) and, beside it, the same library calls
with no Python in between (``python/examples/library_call.rs``: the record
made from the values, σ(τ) with intervals and noise types, the JSON
document). Both report wall and CPU time (CPU of the whole process, all
threads, in 10 ms ticks); the median of the repeats is printed with the
Python call's overhead in per cent, and the fastest run of each (the least
disturbed by other work on a shared machine). The Python layer's own work
(the copy of the input into the record, reading the returned document) is
also timed alone.

    python python/bench/overhead.py [--points 1000000] [--repeats 15]

Needs the package installed (``pip install ./python``) and cargo. A
benchmark, not a test: nothing here fails on a slow machine.
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import tempfile
import time
from pathlib import Path

import numpy as np

import tauwise

REPO = Path(__file__).resolve().parents[2]

CASES = [
    ("oadev", "octave", "OADEV, octave grid"),
    ("oadev,mdev", "octave", "OADEV and MDEV, octave grid"),
    ("adev", "1s", "ADEV at τ = 1 s only (the least work per point)"),
]


def python_times(x, dev, taus, repeats, layout):
    out = []
    tauwise.stability(layout(x), tau0=1.0, dev=dev, taus=taus)  # warm-up, not counted
    for _ in range(repeats):
        w0, c0 = time.perf_counter(), time.process_time()
        r = tauwise.stability(layout(x), tau0=1.0, dev=dev, taus=taus)
        r.curves  # the arrays are made in the call; touch them anyway
        out.append((time.perf_counter() - w0, time.process_time() - c0))
    return out


def library_times(npy, dev, taus, repeats):
    cmd = [
        "cargo", "run", "--quiet", "--release", "-p", "tauwise-python", "--example",
        "library_call", "--", str(npy), dev, taus, str(repeats + 1),
    ]
    run = subprocess.run(cmd, cwd=REPO, capture_output=True, text=True, check=True)
    rows = [tuple(float(v) for v in line.split()) for line in run.stdout.split("\n") if line.strip()]
    return rows[1:]  # the first run is a warm-up, as on the Python side


def python_layer_alone(x, dev, taus, repeats):
    """The work the Python layer adds, timed alone: the one copy of the
    input into the record, and reading the returned document into the
    result (its dict and the curves' arrays)."""
    text, gate = tauwise._tauwise.stability(
        tauwise.Record.from_array(x, 1.0)._inner, dev, taus, repr(tauwise.DEFAULT_CONFIDENCE)
    )
    out = []
    for _ in range(repeats):
        w0 = time.perf_counter()
        tauwise.Record.from_array(x, 1.0)
        tauwise.StabilityResult(text, gate)
        out.append(time.perf_counter() - w0)
    return min(out)


def median(pairs, i):
    return statistics.median(p[i] for p in pairs)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--points", type=int, default=1_000_000)
    ap.add_argument("--repeats", type=int, default=15)
    args = ap.parse_args()
    rec = tauwise.simulate("h0=1e-22,h-1=1e-26", tau0=1.0, points=args.points, seed=1)
    x = np.array(rec.x)
    with tempfile.TemporaryDirectory() as tmp:
        npy = Path(tmp) / "x.npy"
        np.save(npy, x)
        print(f"{args.points} points, median of {args.repeats} runs; wall / CPU in seconds")
        print(f"{'case':<60} {'library':>17} {'Python':>17} {'overhead (wall, CPU)':>22}")
        for dev, taus, label in CASES:
            lib = library_times(npy, dev, taus, args.repeats)
            for name, layout in (
                ("float64", lambda a: a),
                ("float32", lambda a: a.astype(np.float32)),
                ("strided", lambda a: np.repeat(a, 2)[::2]),
            ):
                arrays = layout  # the layout is made outside the timed call below
                prepared = arrays(x)
                py = python_times(prepared, dev, taus, args.repeats, lambda a: a)
                lw, lc = median(lib, 0), median(lib, 1)
                pw, pc = median(py, 0), median(py, 1)
                lmin, pmin = min(p[0] for p in lib), min(p[0] for p in py)
                print(
                    f"{label + ' [' + name + ']':<60} {lw:8.3f} / {lc:6.2f} {pw:8.3f} / {pc:6.2f}"
                    f" {100 * (pw / lw - 1):+9.1f} % {100 * (pc / lc - 1) if lc > 0 else float('nan'):+8.1f} %"
                    f"   fastest: {lmin:.4f} / {pmin:.4f} s ({100 * (pmin / lmin - 1):+.1f} %)"
                )
            alone = python_layer_alone(x, dev, taus, args.repeats)
            print(
                f"{'  the Python layer alone (copy in, document out), fastest':<60} {alone:8.4f} s wall"
                f" = {100 * alone / min(p[0] for p in lib):.1f} % of the fastest library call"
            )


if __name__ == "__main__":
    main()
