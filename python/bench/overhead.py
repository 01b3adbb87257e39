"""What the Python call adds to the library's time at 10^6 points.

Runs ``tauwise.stability`` on a 10^6-point phase record (a seeded
simulation of white and flicker FM) and, beside it, the same library calls
with no Python in between (``python/examples/library_call.rs``: the record
made from the values, σ(τ) with intervals and noise types, the JSON
document). Both report wall and CPU time (CPU of the whole process, all
threads: ``CLOCK_PROCESS_CPUTIME_ID`` on both sides, ns resolution); the
median of the repeats is printed with the Python call's overhead in per
cent, and the fastest run of each (the least disturbed by other work on a
shared machine). The Python layer's own work
(the copy of the input into the record, reading the returned document) is
also timed alone.

    python python/bench/overhead.py [--points 1000000] [--repeats 35]

The machine's load average is printed before and after: on a shared
machine wall time scatters with the load, so the CPU figures (and the
fastest runs) are the ones to read.

Needs the package installed (``pip install ./python``) and cargo. A
benchmark, not a test: nothing here fails on a slow machine.
"""

from __future__ import annotations

import argparse
import os
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


def library_program() -> Path:
    """The example program, built once (release)."""
    subprocess.run(
        ["cargo", "build", "--quiet", "--release", "-p", "tauwise-python", "--example",
         "library_call"],
        cwd=REPO, check=True,
    )
    return REPO / "target" / "release" / "examples" / "library_call"


def library_times(program, npy, dev, taus, repeats):
    cmd = [str(program), str(npy), dev, taus, str(repeats + 1)]
    run = subprocess.run(cmd, cwd=REPO, capture_output=True, text=True, check=True)
    rows = [tuple(float(v) for v in line.split()) for line in run.stdout.split("\n") if line.strip()]
    return [r[:2] for r in rows[1:]]  # the first run is a warm-up, as on the Python side


def python_layer_alone(x, dev, taus, repeats):
    """The Python side's work around the library, timed alone: the one
    copy of the input into the record (which the library program makes
    too), and reading the returned document into the result (its dict and
    the curves' arrays)."""
    text, gate = tauwise._tauwise.stability(
        tauwise.Record.from_array(x, 1.0)._inner, dev, taus, repr(tauwise.DEFAULT_CONFIDENCE)
    )
    out = []
    for _ in range(repeats):
        c0 = time.process_time()
        tauwise.Record.from_array(x, 1.0)
        tauwise.StabilityResult(text, gate)
        out.append(time.process_time() - c0)
    return statistics.median(out)


def wrapper_cost(dev, taus, repeats=2001):
    """The Python wrapper's own work per call — keywords, checks, the
    Record object, reading the document back into the result — measured on
    a 1000-point record, where the library's part is small and the load of
    a shared machine scatters it least: the whole call minus the extension
    call on the same values (the copy and the Rust call). Median wall, s."""
    x = np.cumsum(np.random.default_rng(1).standard_normal(1000)) * 1e-9
    inner = tauwise._tauwise
    conf = repr(tauwise.DEFAULT_CONFIDENCE)

    def wall(f):
        f()
        out = []
        for _ in range(repeats):
            w0 = time.perf_counter()
            f()
            out.append(time.perf_counter() - w0)
        return statistics.median(out)

    whole = wall(lambda: tauwise.stability(x, tau0=1.0, dev=dev, taus=taus))
    ext = wall(lambda: inner.stability(inner.Record.from_array(x, "1.0", "phase"), dev, taus, conf))
    return whole - ext


def median(pairs, i):
    return statistics.median(p[i] for p in pairs)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--points", type=int, default=1_000_000)
    ap.add_argument("--repeats", type=int, default=35)
    args = ap.parse_args()
    rec = tauwise.simulate("h0=1e-22,h-1=1e-26", tau0=1.0, points=args.points, seed=1)
    x = np.array(rec.x)
    with tempfile.TemporaryDirectory() as tmp:
        npy = Path(tmp) / "x.npy"
        np.save(npy, x)
        load = lambda: " ".join(f"{v:.2f}" for v in os.getloadavg())  # noqa: E731
        print(f"load average before: {load()} ({os.cpu_count()} cores)")
        print(
            f"{args.points} points, median of {-(-args.repeats // 5) * 5} calls (rounds of 5, "
            "library and Python interleaved); wall / CPU in ms"
        )
        print(f"{'case':<60} {'library':>17} {'Python':>17} {'overhead (wall, CPU)':>22}")
        program = library_program()
        layouts = {
            "float64": x,
            "float32": x.astype(np.float32),
            "strided": np.repeat(x, 2)[::2],
        }
        # The calls are made in rounds, each a few library calls then a few
        # Python calls per layout, so that both sides see the same load as
        # it changes on a shared machine.
        chunk = 5
        rounds = max(1, -(-args.repeats // chunk))
        lib_all = {}
        for dev, taus, label in CASES:
            lib: list = []
            py_all: dict = {name: [] for name in layouts}
            for _ in range(rounds):
                lib += library_times(program, npy, dev, taus, chunk)
                for name, arr in layouts.items():
                    py_all[name] += python_times(arr, dev, taus, chunk, lambda a: a)
            lib_all[(dev, taus)] = lib
            for name in layouts:
                py = py_all[name]
                lw, lc = median(lib, 0), median(lib, 1)
                pw, pc = median(py, 0), median(py, 1)
                lmin, pmin = min(p[0] for p in lib), min(p[0] for p in py)
                print(
                    f"{label + ' [' + name + ']':<60} {1e3 * lw:7.2f} / {1e3 * lc:7.2f} "
                    f"{1e3 * pw:7.2f} / {1e3 * pc:7.2f}"
                    f" {100 * (pw / lw - 1):+9.1f} % {100 * (pc / lc - 1) if lc > 0 else float('nan'):+8.1f} %"
                    f"   fastest wall: {1e3 * lmin:.2f} / {1e3 * pmin:.2f} ms ({100 * (pmin / lmin - 1):+.1f} %)"
                )
            alone = python_layer_alone(x, dev, taus, args.repeats)
            print(
                f"{'  copy into the record + document read back, alone':<60} {1e3 * alone:7.2f} ms CPU"
                f" = {100 * alone / median(lib, 1):.1f} % of the library call's median CPU"
                " (the library call makes the same copy)"
            )
        print()
        print("the Python wrapper's own work per call (1000-point record, median of 2001):")
        for dev, taus, label in CASES:
            w = wrapper_cost(dev, taus)
            lib_cpu = median(lib_all[(dev, taus)], 1)
            print(
                f"  {label:<58} {1e6 * w:6.1f} µs = {100 * w / lib_cpu:.2f} % of the library "
                f"call's median CPU at {args.points} points"
            )
        print(f"load average after: {load()}")


if __name__ == "__main__":
    main()
