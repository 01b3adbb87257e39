"""The Python results are the command line's documents: on the bundled demo
data, `result.to_dict()` equals `tauwise COMMAND … --format json` key for key
and value for value (docs/json.md is the contract of both). The numbers
themselves are checked against published values by the Rust suite; here the
check is that Python asks the library the same question the command does."""

import numpy as np

import tauwise

PHASE_A = "demo-data/ocxo-a-phase.txt"
PHASE_B = "demo-data/ocxo-b-phase.txt"
TIE_B = "demo-data/ocxo-b-tie.txt"
LF_A = "demo-data/ocxo-a-lf.csv"


def test_stability_equals_the_command(at_repo, cli):
    want = cli(
        "stability", PHASE_A, "--units", "ns", "--tau0", "1s", "--dev", "oadev,mdev,totdev",
        "--taus", "decade", "--remove-drift", "linear", "--best", "--format", "json",
    )
    got = tauwise.stability(
        PHASE_A, units="ns", tau0="1s", dev=["oadev", "mdev", "totdev"], taus="decade",
        remove_drift="linear", best=True,
    )
    assert got.to_dict() == want
    # The arrays are the document's numbers.
    oadev = got.curves["oadev"]
    pts = want["curves"][0]["points"]
    assert np.array_equal(oadev.tau, [p["tau"] for p in pts])
    assert np.array_equal(oadev.dev, [p["dev"] for p in pts])
    assert np.array_equal(oadev.lo, [p["lo"] for p in pts])
    assert np.array_equal(oadev.hi, [p["hi"] for p in pts])
    assert np.array_equal(oadev.edf, [p["edf"] for p in pts])
    assert np.array_equal(oadev.terms, [p["terms"] for p in pts])
    assert list(oadev.noise) == [p["noise"] for p in pts]
    assert got.best.source is not None and got.gate == "pass"


def test_stability_of_a_record_equals_the_file(at_repo):
    """A record read once gives the same document as the path (the reader is
    the same; the record keeps the file's name and preamble)."""
    rec = tauwise.read(PHASE_A, units="ns", tau0="1s")
    assert rec.kind == "phase" and len(rec) == 172800 and rec.gaps == 0 and rec.tau0 == 1.0
    assert rec.info["unit"] == "ns"
    a = tauwise.stability(rec, taus="decade")
    b = tauwise.stability(PHASE_A, units="ns", tau0="1s", taus="decade")
    assert a.to_dict() == b.to_dict()


def test_stability_with_a_phase_noise_table_equals_the_command(at_repo, cli):
    want = cli(
        "stability", PHASE_A, "--units", "ns", "--tau0", "1s", "--remove-drift", "linear",
        "--taus", "decade", "--lf", LF_A, "--carrier", "10MHz", "--format", "json",
    )
    got = tauwise.stability(
        PHASE_A, units="ns", tau0="1s", remove_drift="linear", taus="decade", lf=LF_A,
        carrier="10MHz",
    )
    assert got.to_dict() == want


def test_noise_equals_the_command(at_repo, cli):
    want = cli("noise", PHASE_A, "--units", "ns", "--tau0", "1s", "--format", "json")
    got = tauwise.noise(PHASE_A, units="ns", tau0="1s")
    assert got.to_dict() == want
    cols = got.columns("points")
    assert np.array_equal(cols["tau"], [p["tau"] for p in want["points"]])


def test_wander_equals_the_command(at_repo, cli):
    want = cli(
        "wander", TIE_B, "--units", "ns", "--tau0", "100ms", "--mask", "g8262-opt1",
        "--te", "--format", "json",
    )
    got = tauwise.wander(TIE_B, units="ns", tau0="100ms", masks="g8262-opt1", te=True)
    assert got.to_dict() == want
    assert got.gate == "exceeds"  # the README's example: MTIE exceeds the mask


def test_holdover_equals_the_command(at_repo, cli):
    want = cli(
        "holdover", PHASE_B, "--units", "ns", "--tau0", "1s", "--span", "8h", "--budget",
        "1.5us", "--paths", "200", "--steps", "256", "--format", "json",
    )
    got = tauwise.holdover(
        PHASE_B, units="ns", tau0="1s", span="8h", budget="1.5us", paths=200, steps=256
    )
    assert got.to_dict() == want
    assert got.gate == "pass"


def test_jitter_equals_the_command(at_repo, cli):
    want = cli(
        "jitter", LF_A, "--carrier", "10MHz", "--band", "12k:5M", "--band", "10:1k",
        "--limit", "1ps", "--filter", "pll:bw=2MHz:peak=0.5dB", "--period", "--format", "json",
    )
    got = tauwise.jitter(
        LF_A, "10MHz", ["12k:5M", "10:1k"], limits="1ps", filters="pll:bw=2MHz:peak=0.5dB",
        period=True,
    )
    assert got.to_dict() == want
    assert got.gate == "pass"


def test_spectrum_equals_the_command(at_repo, cli):
    want = cli(
        "spectrum", PHASE_A, "--units", "ns", "--tau0", "1s", "--carrier", "10MHz",
        "--format", "json",
    )
    got = tauwise.spectrum(PHASE_A, units="ns", tau0="1s", carrier="10MHz")
    assert got.to_dict() == want


def test_convert_equals_the_command(at_repo, cli):
    model = "h2=6e-30,h0=1e-25,h-1=3e-25,fh=10M"
    want = cli("convert", "--model", model, "--to", "sigma", "--dev", "adev,mdev", "--format", "json")
    got = tauwise.convert(to="sigma", model=model, dev="adev,mdev")
    assert got.to_dict() == want
    want = cli("convert", "--lf", LF_A, "--carrier", "10MHz", "--to", "model", "--format", "json")
    got = tauwise.convert(to="model", lf=LF_A, carrier="10MHz")
    assert got.to_dict() == want


def test_simulate_equals_the_command(tmp_path, cli, repo):
    """The same model, τ0, points and seed give the same record; the file
    written with `out` reads back to it (phase in ns, as written)."""
    import subprocess

    rec = tauwise.simulate("h0=1e-22,h-2=1e-30", tau0="1s", points=5000, seed=7)
    out = tmp_path / "cli.txt"
    subprocess.run(
        [str(repo / "target/release/tauwise"), "simulate", "--model", "h0=1e-22,h-2=1e-30",
         "--tau0", "1s", "--points", "5000", "--seed", "7", "--units", "ns", "-o", str(out)],
        check=True,
    )
    back = tauwise.read(out)
    np.testing.assert_allclose(back.x, rec.x, rtol=1e-9, atol=1e-21)
    mine = tmp_path / "py.txt"
    written = tauwise.simulate("h0=1e-22,h-2=1e-30", tau0=1.0, points=5000, seed=7, out=mine, units="ns")
    assert written.path == str(mine)
    np.testing.assert_array_equal(tauwise.read(mine).x, back.x)
