"""plot= draws the chart the command's --plot draws, with the same library
functions: the same SVG, byte for byte, on the demo data (the charts'
content is checked by the Rust suite; here the check is that Python asks
for the same chart)."""

import subprocess

import pytest

import tauwise

PHASE_A = "demo-data/ocxo-a-phase.txt"
PHASE_B = "demo-data/ocxo-b-phase.txt"
TIE_B = "demo-data/ocxo-b-tie.txt"
LF_A = "demo-data/ocxo-a-lf.csv"
PAIRS = [
    "ocxo-a,ocxo-b=demo-data/pair-ocxo-a-ocxo-b.txt",
    "ocxo-a,rb-1=demo-data/pair-ocxo-a-rb-1.txt",
    "ocxo-b,rb-1=demo-data/pair-ocxo-b-rb-1.txt",
]


def run(repo, *args):
    out = subprocess.run([str(repo / "target/release/tauwise"), *args], cwd=repo,
                         capture_output=True, text=True, check=False)
    assert out.returncode == 0, out.stderr


def same(a, b):
    assert a.exists() and b.exists()
    assert a.read_bytes() == b.read_bytes()
    assert a.read_bytes().lstrip().startswith(b"<")


def test_stability_chart(tmp_path, repo, at_repo):
    run(repo, "stability", PHASE_A, "--units", "ns", "--tau0", "1s", "--dev", "oadev,tdev",
        "--taus", "decade", "--plot", str(tmp_path / "cli.svg"))
    tauwise.stability(PHASE_A, units="ns", tau0="1s", dev="oadev,tdev", taus="decade",
                      plot=tmp_path / "py.svg")
    same(tmp_path / "cli.svg", tmp_path / "py.svg")
    # Time deviations beside σ_y curves: their own chart, FILE-time.svg.
    same(tmp_path / "cli-time.svg", tmp_path / "py-time.svg")


def test_wander_and_holdover_charts(tmp_path, repo, at_repo):
    run(repo, "wander", TIE_B, "--units", "ns", "--tau0", "100ms", "--mask", "g8262-opt1",
        "--plot", str(tmp_path / "w-cli.svg"))
    tauwise.wander(TIE_B, units="ns", tau0="100ms", masks="g8262-opt1", plot=tmp_path / "w-py.svg")
    same(tmp_path / "w-cli.svg", tmp_path / "w-py.svg")
    run(repo, "holdover", PHASE_B, "--units", "ns", "--tau0", "1s", "--span", "8h", "--budget",
        "1.5us", "--paths", "200", "--steps", "256", "--plot", str(tmp_path / "h-cli.svg"))
    tauwise.holdover(PHASE_B, units="ns", tau0="1s", span="8h", budget="1.5us", paths=200,
                     steps=256, plot=tmp_path / "h-py.svg")
    same(tmp_path / "h-cli.svg", tmp_path / "h-py.svg")


def test_jitter_separate_and_timeline_charts(tmp_path, repo, at_repo):
    run(repo, "jitter", LF_A, "--carrier", "10MHz", "--band", "12k:5M", "--band", "10:1k",
        "--limit", "1ps", "--plot", str(tmp_path / "j-cli.svg"))
    tauwise.jitter(LF_A, "10MHz", ["12k:5M", "10:1k"], limits="1ps", plot=tmp_path / "j-py.svg")
    same(tmp_path / "j-cli.svg", tmp_path / "j-py.svg")
    args = []
    for p in PAIRS:
        args += ["--pair", p]
    run(repo, "separate", *args, "--units", "ns", "--tau0", "1s", "--sessions", "separate",
        "--taus", "decade", "--plot", str(tmp_path / "s-cli.svg"))
    tauwise.separate(PAIRS, units="ns", tau0="1s", sessions="separate", taus="decade",
                     plot=tmp_path / "s-py.svg")
    same(tmp_path / "s-cli.svg", tmp_path / "s-py.svg")
    run(repo, "timeline", PHASE_B, "--units", "ns", "--tau0", "1s", "--window", "6h", "--step",
        "2h", "--taus", "decade", "--plot", str(tmp_path / "t-cli.svg"))
    tauwise.timeline(PHASE_B, units="ns", tau0="1s", window="6h", step="2h", taus="decade",
                     plot=tmp_path / "t-py.svg")
    same(tmp_path / "t-cli.svg", tmp_path / "t-py.svg")


def test_a_chart_may_not_overwrite_an_input(at_repo):
    """Checked before any computing, as the command line checks --plot."""
    with pytest.raises(ValueError, match="ocxo-a-phase"):
        tauwise.stability(PHASE_A, units="ns", tau0="1s", plot=PHASE_A)
