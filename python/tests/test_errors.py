"""Bad input raises with the library's message: ValueError for options and
data, OSError for files that cannot be opened or written, FileContentError
(both) for a file read but refused, naming file and line."""

import numpy as np
import pytest

import tauwise

PHASE_A = "demo-data/ocxo-a-phase.txt"


def test_a_budget_without_unit_is_refused(at_repo):
    """A number that decides a verdict needs its unit (docs/verdicts.md)."""
    with pytest.raises(ValueError, match=r"budget='1.5'.*no unit"):
        tauwise.holdover(PHASE_A, units="ns", tau0="1s", span="8h", budget="1.5")
    with pytest.raises(ValueError, match=r"span=.*no unit"):
        tauwise.holdover(PHASE_A, units="ns", tau0="1s", span=8, budget="1.5us")


def test_refused_option_values_name_the_keyword():
    x = np.arange(100.0)
    with pytest.raises(ValueError, match=r"^dev='oadevv'"):
        tauwise.stability(x, tau0=1.0, dev="oadevv")
    with pytest.raises(ValueError, match=r"^taus='sometimes'"):
        tauwise.stability(x, tau0=1.0, taus="sometimes")
    with pytest.raises(ValueError, match=r"^confidence='1.5'"):
        tauwise.stability(x, tau0=1.0, confidence=1.5)
    with pytest.raises(ValueError, match=r"^tau0='-1'"):
        tauwise.stability(x, tau0=-1)
    with pytest.raises(ValueError, match=r"^masks='g999'"):
        tauwise.wander(x * 1e-9, tau0=1.0, masks="g999")
    with pytest.raises(ValueError, match=r"kind='clock'"):
        tauwise.stability(x, tau0=1.0, kind="clock")


def test_bad_arrays_are_refused():
    with pytest.raises(ValueError, match="1-D"):
        tauwise.stability(np.zeros((10, 2)), tau0=1.0)
    with pytest.raises(ValueError, match="tau0"):
        tauwise.stability(np.zeros(10))
    x = np.arange(100.0)
    x[7] = np.inf
    with pytest.raises(ValueError, match=r"reading 7 .*inf.*NaN marks a gap"):
        tauwise.stability(x, tau0=1.0)
    # The same refusal for every layout the one conversion takes (strided
    # float64, float32: each converted element by element).
    strided = np.repeat(x, 2)[::2]
    with pytest.raises(ValueError, match=r"reading 7 .*inf"):
        tauwise.stability(strided, tau0=1.0)
    with pytest.raises(ValueError, match=r"reading 7 .*inf"):
        tauwise.stability(x.astype(np.float32), tau0=1.0)
    big = np.zeros(100_000)
    big[-1] = -np.inf  # in the last block of the block-by-block check
    with pytest.raises(ValueError, match=r"reading 99999 .*-inf"):
        tauwise.stability(big, tau0=1.0)
    with pytest.raises(ValueError, match="reading options go with a file"):
        tauwise.stability(np.arange(100.0), tau0=1.0, units="ns")
    with pytest.raises(TypeError, match="unexpected keyword"):
        tauwise.stability(PHASE_A, tau0=1.0, unit="ns")


def test_files_that_cannot_be_read(tmp_path):
    missing = tmp_path / "nowhere.txt"
    with pytest.raises(OSError, match="nowhere.txt"):
        tauwise.read(missing)
    bad = tmp_path / "bad.txt"
    bad.write_text("# phase in s\n1e-9\n2e-9\nnot-a-number\n4e-9\n")
    with pytest.raises(tauwise.FileContentError, match=r"bad\.txt:4:") as e:
        tauwise.read(bad, tau0="1s")
    assert isinstance(e.value, OSError) and isinstance(e.value, ValueError)


def test_the_computation_refuses_too_little_data():
    with pytest.raises(ValueError):
        tauwise.stability(np.array([1.0, 2.0]), tau0=1.0, dev="oadev", taus="10s")


def test_output_may_not_overwrite_an_input(tmp_path, at_repo):
    """The report's output is checked before any computing."""
    with pytest.raises(ValueError, match="ocxo-a"):
        tauwise.report("demo-data/ocxo-a.toml", out="demo-data/ocxo-a-phase.txt")


def test_whole_numbers_are_checked():
    with pytest.raises(ValueError, match=r"seed='-1': expected a whole number"):
        tauwise.simulate("h0=1e-22", points=100, seed=-1)
    with pytest.raises(ValueError, match=r"^points="):
        tauwise.simulate("h0=1e-22", points=-5)
    with pytest.raises(ValueError, match=r"value_column='-2'"):
        tauwise.read("demo-data/ocxo-a-phase.txt", value_column=-2)
    with pytest.raises(ValueError, match=r"at least 2 Monte Carlo paths"):
        tauwise.holdover(np.arange(1000.0) * 1e-12, tau0=1.0, span="1h", budget="1us", paths=0)
