"""Peak memory of a Python call against the library's own, at 10^6 and 10^7 points.

For ``tauwise.stability(x, tau0=1.0, dev="oadev", taus="octave")`` on a
phase record of N points, measures in a fresh process per case:

- the peak resident memory during the call above the memory at rest before
  it (the peak is reset first by writing 5 to /proc/self/clear_refs, Linux),
  with the input array already in memory;
- the peak of the Python-level allocations during the call (tracemalloc:
  numpy arrays and Python objects; the Rust side's allocations are not
  traced), i.e. whether the Python layer copies the input in numpy;

and, beside it, the same peak for the same library calls with no Python in
between (``python/examples/library_call.rs``: the record made from the
values — the one copy the Python call makes too —, σ(τ) with intervals and
noise types, the JSON document). The input layouts: contiguous float64,
a strided float64 view, float32 (converted element by element into the
record's float64 values, in the same one pass).

    python python/bench/memory.py [--points 1000000 10000000]

Needs the package installed (``pip install ./python``) and cargo. A
benchmark, not a test: nothing here fails.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]

# Both processes run with glibc's mmap threshold fixed at 128 KiB, so that
# every large block is mapped when allocated and returned when freed: the
# memory at rest before a call does not keep the freed blocks of an earlier
# one (glibc raises the threshold after a large free by default, and a
# repeated call would then show a peak of 0).
ENV = dict(os.environ, MALLOC_MMAP_THRESHOLD_="131072")

# Run in a child process: one case, one fresh interpreter.
CHILD = r"""
import json, sys, tracemalloc
import numpy as np
import tauwise

def kib(key):
    for line in open("/proc/self/status"):
        k, v = line.split(":", 1)
        if k == key:
            return float(v.split()[0])
    return float("nan")

def reset_peak():
    with open("/proc/self/clear_refs", "w") as f:
        f.write("5")
    return kib("VmRSS")

npy, layout = sys.argv[1], sys.argv[2]
base = np.load(npy)
x = {"float64": base, "strided": np.repeat(base, 2)[::2], "float32": base.astype(np.float32)}[layout]
if layout != "float64":
    del base
# Two calls first, not counted (as the library's third call is measured):
# the thread pool and its allocator arenas are set up by then.
for _ in range(2):
    tauwise.stability(x, tau0=1.0, dev="oadev", taus="octave")
tracemalloc.start()
rest = reset_peak()
r = tauwise.stability(x, tau0=1.0, dev="oadev", taus="octave")
peak = kib("VmHWM") - rest
_, traced = tracemalloc.get_traced_memory()
tracemalloc.stop()
print(json.dumps({"peak_kib": peak, "traced_peak_kib": traced / 1024, "input_bytes": x.nbytes,
                  "points": len(x), "curve_points": len(r.curves["oadev"].tau)}))
"""


def python_case(npy: Path, layout: str) -> dict:
    out = subprocess.run(
        [sys.executable, "-c", CHILD, str(npy), layout],
        capture_output=True,
        text=True,
        check=True,
        env=ENV,
    )
    return json.loads(out.stdout)


def library_case(npy: Path) -> float:
    cmd = [
        "cargo", "run", "--quiet", "--release", "-p", "tauwise-python", "--example",
        "library_call", "--", str(npy), "oadev", "octave", "3",
    ]
    run = subprocess.run(cmd, cwd=REPO, capture_output=True, text=True, check=True, env=ENV)
    # The last of three calls (the first ones set up the thread pool).
    line = [l for l in run.stdout.split("\n") if l.strip()][-1]
    return float(line.split()[2])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--points", type=int, nargs="+", default=[1_000_000, 10_000_000])
    args = ap.parse_args()
    import numpy as np

    print(f"load average before: {' '.join(f'{v:.2f}' for v in os.getloadavg())}")
    print(
        f"{'points':>10} {'input':>16} {'library call':>14} {'Python call':>13} "
        f"{'Python − library':>17} {'numpy allocations in the call (tracemalloc)':>45}"
    )
    for n in args.points:
        rng = np.random.default_rng(1)
        x = np.cumsum(rng.standard_normal(n)) * 1e-9  # random-walk phase (white FM), s
        with tempfile.TemporaryDirectory() as tmp:
            npy = Path(tmp) / "x.npy"
            np.save(npy, x)
            del x
            lib = library_case(npy)
            for layout in ("float64", "strided", "float32"):
                py = python_case(npy, layout)
                mib = lambda k: k / 1024  # noqa: E731
                label = f"{layout} {py['input_bytes'] / 2**20:.1f} MiB"
                print(
                    f"{n:>10} {label:>16} "
                    f"{mib(lib):>10.1f} MiB {mib(py['peak_kib']):>9.1f} MiB "
                    f"{mib(py['peak_kib'] - lib):>13.1f} MiB {mib(py['traced_peak_kib']):>41.2f} MiB"
                )
    print(f"load average after: {' '.join(f'{v:.2f}' for v in os.getloadavg())}")
    print(
        "peak = resident memory during the call above the memory at rest before it "
        "(input already in memory); the record's float64 values (8 B per point) are "
        "the one copy both make"
    )


if __name__ == "__main__":
    main()
