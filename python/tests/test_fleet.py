"""The fleet comparison: the report's verdict matrix from Python equals the
command's; devices computed apart (pickled across processes) and gathered
give the single-machine matrix; the Dask example does so on a local cluster
of two workers over generated records."""

import json
import pickle
import subprocess
import sys

import pytest

import tauwise

DEMO = ["demo-data/ocxo-a.toml", "demo-data/ocxo-b.toml", "demo-data/rb-1.toml"]

# Invented devices for the fleet test: white and flicker FM with a
# random-walk term, and an aging each (the generated records are the
# seeded simulations of tauwise itself).
DEVICES = [
    ("unit-1", "h0=4e-24,h-1=1e-25,h-2=1e-31", "2e-11/day", 11),
    ("unit-2", "h0=2e-23,h-1=5e-25,h-2=1e-30", "3e-10/day", 12),
    ("unit-3", "h0=1e-24,h-1=2e-26", "1e-12/day", 13),
    ("unit-4", "h0=8e-23,h-1=1e-24,h-2=5e-30", "1e-9/day", 14),
]


@pytest.fixture(scope="module")
def fleet_dir(tmp_path_factory):
    d = tmp_path_factory.mktemp("fleet")
    for name, model, drift, seed in DEVICES:
        tauwise.simulate(
            model, tau0="1s", points=20000, seed=seed, drift=drift, units="ns",
            out=d / f"{name}-phase.txt",
        )
        (d / f"{name}.toml").write_text(
            f"""[device]
name = "{name}"
description = "invented unit for the fleet test"

[[record]]
name = "phase"
path = "{name}-phase.txt"
data = "phase"
tau0 = "1s"
units = "ns"

[holdover]
budget = "1us"
spans = ["2h", "6h"]
paths = 200
seed = 3
"""
        )
    return sorted(str(p) for p in d.glob("*.toml"))


def test_report_matrix_equals_the_command(at_repo, cli, tmp_path):
    want = cli("report", *DEMO, "--format", "json")
    out = tmp_path / "fleet.html"
    got = tauwise.report(DEMO, out=out)
    assert got.to_dict() == want
    assert out.read_text().lstrip().lower().startswith("<!doctype html")
    assert got.gate in ("pass", "exceeds", "not-judged", "undecided")


def test_parts_pickle_and_gather_to_the_single_machine_matrix(at_repo):
    parts = [tauwise.device(d) for d in DEMO]
    again = [pickle.loads(pickle.dumps(p)) for p in parts]
    assert [p.json() for p in again] == [p.json() for p in parts]
    assert [p.name for p in again] == ["ocxo-a", "ocxo-b", "rb-1"]
    whole = tauwise.report(DEMO)
    assert tauwise.fleet(again).to_dict() == whole.to_dict()
    # The order of the gathered parts is the matrix's input order.
    assert tauwise.fleet(again[::-1]).to_dict()["ranking"] == whole.to_dict()["ranking"]


def test_two_devices_of_one_name_are_refused(at_repo):
    p = tauwise.device(DEMO[0])
    with pytest.raises(ValueError, match='both name the device "ocxo-a"'):
        tauwise.fleet([p, p])


def test_dask_example_equals_the_single_machine_fleet(fleet_dir, repo, cli):
    """examples/fleet_dask.py on a LocalCluster of two worker processes:
    the gathered verdict matrix equals `tauwise report … --format json`."""
    distributed = pytest.importorskip("dask.distributed")
    sys.path.insert(0, str(repo / "examples"))
    try:
        import fleet_dask
    finally:
        sys.path.pop(0)
    single = tauwise.report(fleet_dir)
    with distributed.LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None
    ) as cluster, distributed.Client(cluster) as client:
        spread = fleet_dask.fleet_on_dask(client, fleet_dir)
        guarded = fleet_dask.fleet_on_dask(client, fleet_dir, decision_rule="guarded")
    assert spread.to_dict() == single.to_dict()
    # The decision rule reaches every worker (docs/decision-rules.md).
    assert guarded.to_dict() == cli(
        "report", *fleet_dir, "--format", "json", "--decision-rule", "guarded"
    )
    assert spread.to_dict() == cli("report", *fleet_dir, "--format", "json")
    doc = spread.to_dict()
    assert len(doc["devices"]) == 4 and [c["item"] for c in doc["columns"]] == ["2.00 h span", "6.00 h span"]


def test_dask_example_runs_as_a_program(fleet_dir, repo, tmp_path):
    """The example's command line: the matrix printed, the document written."""
    pytest.importorskip("dask.distributed")
    out = tmp_path / "m.json"
    run = subprocess.run(
        [sys.executable, str(repo / "examples" / "fleet_dask.py"), str(fleet_dir[0].rsplit("/", 1)[0]),
         "--workers", "2", "--json", str(out)],
        capture_output=True, text=True, check=False,
    )
    assert run.returncode in (0, 3, 4, 5), run.stderr
    assert "Engineering estimate" in run.stdout
    assert json.loads(out.read_text())["devices"][0]["name"] == "unit-1"
