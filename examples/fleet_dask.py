"""Compare a fleet of clocks on a Dask cluster: one device per task, the
verdict matrix gathered at the end.

Every DUT file (docs/dut-file.md; a ``.toml`` file with a ``[device]``
table) in a directory is analysed by
``tauwise.device`` on whichever worker Dask picks — the device's whole
report (stability, noise model, jitter, wander masks, holdover Monte
Carlo) built by the same library path as ``tauwise report`` — and comes back
as its small part of the verdict matrix (picklable). ``tauwise.fleet``
then ranks the devices and writes the answer, giving the same matrix as
``tauwise report DIR/*.toml --format json`` on one machine.

Use it when the fleet outgrows one machine (hundreds or thousands of
clocks, each a long record): the work per device is independent, so it
spreads over as many workers as the cluster has. For a handful of devices
``tauwise report`` on one machine is simpler and already parallel.

The workers need the ``tauwise`` package installed and must see the DUT
files and the records they name at the same paths (a shared file system).

    python examples/fleet_dask.py DIR                    # a local cluster of 2 workers
    python examples/fleet_dask.py DIR --workers 8
    python examples/fleet_dask.py DIR --scheduler tcp://host:8786
    python examples/fleet_dask.py DIR --json matrix.json
    python examples/fleet_dask.py DIR --decision-rule guarded --conformance 0.95

The verdicts are engineering estimates: the governing standard, the
equipment maker's data and local acceptance procedures decide.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import Iterable, List, Optional

import tauwise


def is_dut_file(path: Path) -> bool:
    """A DUT file has a ``[device]`` table; other TOML files (limit files,
    filter sets) in the same directory are not devices."""
    try:
        return any(line.strip() == "[device]" for line in path.read_text().splitlines())
    except (OSError, UnicodeDecodeError):
        return False


def dut_files(directory: Path) -> List[str]:
    """The DUT files of a directory, in name order (the matrix's input order)."""
    files = sorted(str(p) for p in Path(directory).glob("*.toml") if is_dut_file(p))
    if not files:
        raise SystemExit(f"{directory}: no DUT files (*.toml with a [device] table) here")
    return files


def fleet_on_dask(
    client,
    duts: Iterable[str],
    confidence: float = tauwise.DEFAULT_CONFIDENCE,
    decision_rule: Optional[str] = None,
    conformance: Optional[float] = None,
):
    """The verdict matrix of ``duts`` with each device computed as one Dask
    task; the result equals ``tauwise.report(duts, …)`` with the same
    options (the single-machine comparison). ``decision_rule`` and
    ``conformance``, when given, take the place of the DUT files' own."""
    duts = list(duts)
    futures = client.map(
        tauwise.device,
        duts,
        confidence=confidence,
        decision_rule=decision_rule,
        conformance=conformance,
        pure=False,
    )
    parts = client.gather(futures)
    return tauwise.fleet(parts)


def print_matrix(result) -> None:
    doc = result.to_dict()
    for line in doc["answer"]:
        print(line)
    print()
    names = [c["item"] + " — " + c["criterion"] for c in doc["columns"]]
    for row in sorted(doc["devices"], key=lambda r: r["rank"]):
        margin = row["worst_margin_db"]
        m = "—" if margin is None else f"{margin:+.2f} dB"
        print(f"{row['rank']:>3}. {row['name']:<16} worst margin {m:>10}  gate {row['gate']}")
        for name, cell in zip(names, row["checks"]):
            verdict = cell["verdict"] or "not asked"
            print(f"       {verdict:<10} {name}")
    print()
    print(doc["caution"])


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("directory", type=Path, help="a directory of DUT files (*.toml)")
    ap.add_argument("--scheduler", help="address of a running Dask scheduler")
    ap.add_argument("--workers", type=int, default=2, help="workers of the local cluster")
    ap.add_argument("--json", type=Path, help="also write the matrix document here")
    ap.add_argument(
        "--decision-rule",
        choices=("simple", "guarded"),
        help="how verdicts are reached (docs/decision-rules.md); default: each DUT file's, else simple",
    )
    ap.add_argument(
        "--conformance",
        type=float,
        help="conformance level of the guarded rule, in (0.5, 1); default: each DUT file's, else 0.95",
    )
    args = ap.parse_args(argv)

    from dask.distributed import Client, LocalCluster

    duts = dut_files(args.directory)
    if args.scheduler:
        client = Client(args.scheduler)
        cluster = None
    else:
        cluster = LocalCluster(n_workers=args.workers, threads_per_worker=1)
        client = Client(cluster)
    try:
        result = fleet_on_dask(
            client, duts, decision_rule=args.decision_rule, conformance=args.conformance
        )
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
    print_matrix(result)
    if args.json:
        args.json.write_text(result.to_json())
    return {"pass": 0, "exceeds": 3, "not-judged": 4, "undecided": 5}.get(result.gate, 0)


if __name__ == "__main__":
    sys.exit(main())
