"""jitter from a record, inspect, prepare, separate and timeline from Python
are the command line's: on the bundled demo data (and seeded simulations),
`result.to_dict()` equals `tauwise COMMAND … --format json`, and `prepare`
writes the same bytes. The numbers themselves are checked against their
published sources by the Rust suite (NIST SP 1065 for the deviations, Gray &
Allan 1974 for the three-cornered hat, analytic period jitter); here the
check is that Python asks the library the same question the command does,
plus a few analytic checks of the values that come back."""

import subprocess

import numpy as np
import pytest

import tauwise

PHASE_A = "demo-data/ocxo-a-phase.txt"
PHASE_B = "demo-data/ocxo-b-phase.txt"
TIE_B = "demo-data/ocxo-b-tie.txt"
PAIRS = [
    "ocxo-a,ocxo-b=demo-data/pair-ocxo-a-ocxo-b.txt",
    "ocxo-a,rb-1=demo-data/pair-ocxo-a-rb-1.txt",
    "ocxo-b,rb-1=demo-data/pair-ocxo-b-rb-1.txt",
]


def without_input(doc):
    return {k: v for k, v in doc.items() if k != "input"}


# ---------------------------------------------------------------------------
# jitter --record


def test_jitter_of_a_record_equals_the_command(at_repo, cli):
    want = cli(
        "jitter", "--record", TIE_B, "--units", "ns", "--tau0", "100ms", "--carrier", "10MHz",
        "--band", "0.01:1", "--band", "0.1:4", "--limit", "1ns", "--format", "json",
    )
    got = tauwise.jitter(
        carrier="10MHz", bands=["0.01:1", "0.1:4"], record=TIE_B, units="ns", tau0="100ms",
        limits="1ns",
    )
    assert got.to_dict() == want
    assert want["window"] == "hann" and got.gate == "pass"
    assert [b["verdict"] for b in want["bands"]] == ["meets", "meets"]
    # A record read once, and the same values as an array, ask the same
    # question (an array's document names "<array>" as its input).
    rec = tauwise.read(TIE_B, units="ns", tau0="100ms")
    assert tauwise.jitter(
        carrier="10MHz", bands=["0.01:1", "0.1:4"], record=rec, limits="1ns"
    ).to_dict() == want
    arr = tauwise.jitter(
        carrier="10MHz", bands=["0.01:1", "0.1:4"], record=np.array(rec.x), tau0=0.1,
        limits="1ns",
    ).to_dict()
    assert without_input(arr) == without_input(want)
    assert arr["input"]["path"] == "<array>"


def test_period_jitter_of_an_edge_record_equals_the_command(tmp_path, cli, repo):
    """A record of every edge (τ0 = 1/ν0): the N-period jitter measured from
    the edges as the command measures it. Analytic check beside it: for
    white PM of rms σ_x, the period and 4-period jitter have rms √2·σ_x and
    the cycle-to-cycle jitter √6·σ_x (seeded Monte Carlo, 20000 edges:
    within 3 %)."""
    sigma_x = 1e-12
    # White PM with S_x one-sided = 2·τ0·σ_x² (h2 from σ_x: S_y = h2 f², S_x = S_y / (2πf)²).
    tau0 = 1e-6
    h2 = (2 * np.pi) ** 2 * 2 * tau0 * sigma_x**2
    path = tmp_path / "edges.txt"
    tauwise.simulate(f"h2={h2:.6e}", tau0="1us", points=20000, seed=3, out=path, units="ps")
    want = cli(
        "jitter", "--record", str(path), "--carrier", "1MHz", "--band", "2k:400k",
        "--periods", "4", "--format", "json",
    )
    got = tauwise.jitter(carrier="1MHz", bands="2k:400k", record=str(path), periods=4)
    assert got.to_dict() == want
    measured = want["record_period"]
    rms_x = float(np.nanstd(tauwise.read(path).x))
    # White PM (analytic): x[n+1] − x[n] and x[n+4] − x[n] have rms √2·σ_x,
    # the cycle-to-cycle second difference √6·σ_x.
    assert measured["period_rms_s"] == pytest.approx(np.sqrt(2) * rms_x, rel=0.03)
    assert measured["n_period_rms_s"] == pytest.approx(np.sqrt(2) * rms_x, rel=0.03)
    assert measured["c2c_rms_s"] == pytest.approx(np.sqrt(6) * rms_x, rel=0.03)


def test_jitter_needs_one_source():
    with pytest.raises(ValueError, match="table, or record="):
        tauwise.jitter(carrier="10MHz", bands="1:10")
    with pytest.raises(ValueError, match="carrier"):
        tauwise.jitter("demo-data/ocxo-a-lf.csv", bands="1:10")
    with pytest.raises(ValueError, match="go with record"):
        tauwise.jitter("demo-data/ocxo-a-lf.csv", "10MHz", "1:10", tau0="1s")


# ---------------------------------------------------------------------------
# inspect


def test_inspect_equals_the_command(at_repo, cli):
    want = cli("inspect", PHASE_A, "--units", "ns", "--tau0", "1s", "--format", "json")
    got = tauwise.inspect(PHASE_A, units="ns", tau0="1s")
    assert got.to_dict() == want
    rec = tauwise.read(PHASE_A, units="ns", tau0="1s")
    assert tauwise.inspect(rec).to_dict() == want
    want = cli("inspect", TIE_B, "--units", "ns", "--tau0", "100ms", "--outliers", "3",
               "--format", "json")
    assert tauwise.inspect(TIE_B, units="ns", tau0="100ms", outliers=3).to_dict() == want


def test_inspect_of_an_instrument_like_export(tmp_path, cli):
    """A file shaped like an instrument export (preamble, quoted CSV with
    decimal commas, units in the header, a BOM): inspect reports the
    reading exactly as the command does, warnings included."""
    f = tmp_path / "export.csv"
    rows = "\n".join(f'"{i}";"{1.5 + 0.001 * i:.3f}"'.replace(".", ",") for i in range(200))
    f.write_text("\ufeffCounter export\nchannel A\n\"time (s)\";\"phase (ns)\"\n" + rows + "\n",
                 encoding="utf-8")
    want = cli("inspect", str(f), "--format", "json")
    assert tauwise.inspect(f).to_dict() == want


def test_inspect_refuses_an_array():
    with pytest.raises(ValueError, match="not read from a file"):
        tauwise.inspect(np.zeros(10), tau0=1.0)


# ---------------------------------------------------------------------------
# prepare


def test_prepare_writes_the_commands_bytes(tmp_path, repo, at_repo):
    cli_out = tmp_path / "cli.txt"
    subprocess.run(
        [str(repo / "target/release/tauwise"), "prepare", TIE_B, "--units", "ns", "--tau0",
         "100ms", "--remove-drift", "linear", "--outliers", "5", "--fill-gaps", "--decimate",
         "10", "-o", str(cli_out)],
        check=True, capture_output=True, cwd=repo,
    )
    py_out = tmp_path / "py.txt"
    rec = tauwise.prepare(
        TIE_B, py_out, units="ns", tau0="100ms", remove_drift="linear", outliers=5,
        fill_gaps=True, decimate=10,
    )
    assert py_out.read_bytes() == cli_out.read_bytes()
    assert rec.path == str(py_out) and rec.tau0 == pytest.approx(1.0)
    assert any(n.startswith("drift removed: linear") for n in rec.notes)
    assert any(n.startswith("decimated by 10") for n in rec.notes)
    back = tauwise.read(py_out)
    np.testing.assert_allclose(back.x, rec.x, rtol=1e-12, atol=1e-21)


def test_prepare_may_not_overwrite_its_input(at_repo):
    """Checked before any computing, as `prepare -o` is."""
    with pytest.raises(ValueError, match="ocxo-b-tie"):
        tauwise.prepare(TIE_B, TIE_B, units="ns", tau0="100ms", fill_gaps=True)


def test_prepare_in_memory_removes_a_known_drift():
    """Analytic: a phase record x = ½·D·t² (pure linear frequency drift D)
    has its drift removed exactly (the residual phase is a straight line at
    most, i.e. the frequency after removal is constant)."""
    t = np.arange(10_000.0)
    d = 1e-12 / 86400.0
    rec = tauwise.prepare(0.5 * d * t**2, tau0=1.0, remove_drift="linear")
    assert rec.path == "<prepared>"
    y = rec.y
    assert np.nanmax(np.abs(y - np.nanmean(y))) < 1e-9 * d * t[-1]


# ---------------------------------------------------------------------------
# separate


def test_separate_equals_the_command(at_repo, cli):
    args = []
    for p in PAIRS:
        args += ["--pair", p]
    want = cli("separate", *args, "--units", "ns", "--tau0", "1s", "--sessions", "separate",
               "--taus", "decade", "--format", "json")
    got = tauwise.separate(PAIRS, units="ns", tau0="1s", sessions="separate", taus="decade")
    assert got.to_dict() == want
    # The same pairs as records and as a mapping.
    recs = {}
    for p in PAIRS:
        a, b, path = tauwise._tauwise.pair_spec(p)
        recs[(a, b)] = tauwise.read(path, units="ns", tau0="1s")
    assert tauwise.separate(recs, sessions="separate", taus="decade").to_dict() == want


def test_three_cornered_hat_of_seeded_clocks():
    """Gray & Allan 1974, seeded Monte Carlo: three independent white-PM
    clocks of known rms; the separated OADEV at τ0 of each clock is within
    10 % of its own OADEV (each pair record is the difference of two)."""
    n, tau0 = 20_000, 1.0
    rng = np.random.default_rng(11)
    sig = {"a": 1e-9, "b": 2e-9, "c": 4e-9}
    x = {k: s * rng.standard_normal(n) for k, s in sig.items()}
    pairs = [("a", "b", x["a"] - x["b"]), ("a", "c", x["a"] - x["c"]), ("b", "c", x["b"] - x["c"])]
    doc = tauwise.separate(pairs, tau0=tau0, taus="1s").to_dict()
    for clock in doc["clocks"]:
        own = tauwise.stability(x[clock["name"]], tau0=tau0, taus="1s").curves["oadev"].dev[0]
        assert clock["curves"][0]["points"][0]["dev"] == pytest.approx(own, rel=0.10)


def test_separate_refuses_bad_pairs():
    x = np.zeros(100)
    with pytest.raises(ValueError, match="at least three"):
        tauwise.separate([("a", "b", x)], tau0=1.0)
    with pytest.raises(ValueError, match="must differ"):
        tauwise.separate([("a", "a", x), ("a", "c", x), ("b", "c", x)], tau0=1.0)
    with pytest.raises(ValueError, match=r"^pairs="):
        tauwise.separate(["a=b.txt", "a,c=x", "b,c=y"])


# ---------------------------------------------------------------------------
# timeline


def test_timeline_equals_the_command(at_repo, cli):
    want = cli(
        "timeline", PHASE_B, "--units", "ns", "--tau0", "1s", "--window", "6h", "--step",
        "2h", "--remove-drift", "linear", "--taus", "decade", "--format", "json",
    )
    got = tauwise.timeline(
        PHASE_B, units="ns", tau0="1s", window="6h", step="2h", remove_drift="linear",
        taus="decade",
    )
    assert got.to_dict() == want


def test_timeline_window_must_be_whole_tau0():
    with pytest.raises(ValueError, match="window"):
        tauwise.timeline(np.zeros(1000), tau0=1.0, window="2.5s", step="1s")
    with pytest.raises(ValueError, match=r"window='6'.*unit"):
        tauwise.timeline(np.zeros(1000), tau0=1.0, window="6", step="1s")
