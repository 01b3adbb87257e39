"""numpy arrays in: the published nine-point check from Python, gaps as NaN
against the textbook formula, any memory layout and float32, and the GIL
released during the computation."""

import threading

import numpy as np
import pytest

import tauwise

# NIST SP 1065 (Riley 2008), validation data: the NBS Monograph 140 nine-point
# set of fractional-frequency values, τ0 = 1 s (docs/checks.md §A).
NINE = np.array([892, 809, 823, 798, 671, 644, 883, 903, 677], dtype=np.float64)


def dev_at(result, name, m):
    c = result.curves[name]
    i = int(np.nonzero(c.m == m)[0][0])
    return c.dev[i]


def test_nist_nine_point_set_from_python():
    """NIST SP 1065 nine-point set (values from memory, docs/checks.md §A)."""
    r = tauwise.stability(
        NINE, tau0=1.0, kind="freq", dev="adev,oadev,mdev,tdev,hdev,ohdev,totdev", taus="all"
    )
    assert dev_at(r, "adev", 1) == pytest.approx(91.22945, rel=1e-6)
    assert dev_at(r, "adev", 2) == pytest.approx(115.8082, rel=1e-6)
    assert dev_at(r, "oadev", 1) == pytest.approx(91.22945, rel=1e-6)
    assert dev_at(r, "oadev", 2) == pytest.approx(85.95287, rel=1e-6)
    assert dev_at(r, "mdev", 1) == pytest.approx(91.22945, rel=1e-6)
    assert dev_at(r, "tdev", 1) == pytest.approx(52.67135, rel=1e-6)
    assert dev_at(r, "hdev", 1) == pytest.approx(70.80607, rel=1e-6)
    assert dev_at(r, "ohdev", 1) == pytest.approx(70.80607, rel=1e-6)
    # TOTDEV is reported bias-corrected unless asked otherwise.
    raw = tauwise.stability(NINE, tau0=1.0, kind="freq", dev="totdev", taus="all", uncorrected=True)
    assert dev_at(raw, "totdev", 1) == pytest.approx(91.22945, rel=1e-6)
    assert dev_at(raw, "totdev", 2) == pytest.approx(93.90379, rel=1e-6)


def textbook_oadev(x, tau0, m):
    """Overlapping Allan deviation from phase, NIST SP 1065 eq. (8), a term
    left out when its span x[i] … x[i+2m] touches a gap (NaN), the
    library's rule for gaps (DEVELOPERS.md, Conventions)."""
    d = x[2 * m:] - 2 * x[m:-m] + x[: -2 * m]
    gaps = np.concatenate([[0], np.cumsum(np.isnan(x))])
    ok = (gaps[2 * m + 1:] - gaps[: len(x) - 2 * m]) == 0
    return np.sqrt(np.sum(d[ok] ** 2) / (2 * (m * tau0) ** 2 * ok.sum())), int(ok.sum())


def test_gaps_as_nan_skip_the_terms_they_touch():
    """Analytic: with NaN gaps, OADEV is the textbook sum over the terms
    whose span holds no gap, and `terms` counts them."""
    rng = np.random.default_rng(11)
    x = np.cumsum(rng.normal(size=4000)) * 1e-9
    x[[100, 101, 2500]] = np.nan
    x[3000:3040] = np.nan
    r = tauwise.stability(x, tau0=0.5, dev="oadev", taus="1s,2s,8s,32s")
    c = r.curves["oadev"]
    assert r["input"]["gaps"] == 43 and r["input"]["path"] == "<array>"
    for m, dev, terms in zip(c.m, c.dev, c.terms):
        want, n = textbook_oadev(x, 0.5, int(m))
        assert terms == n
        assert dev == pytest.approx(want, rel=1e-10)


def test_layout_and_float32_give_the_same_answer():
    """Non-contiguous, reversed-stride and Fortran-order views and float32
    input give the answer of the contiguous float64 copy."""
    rng = np.random.default_rng(3)
    base = np.cumsum(rng.normal(size=20000)) * 1e-9
    strided = base[::2]
    want = tauwise.stability(np.ascontiguousarray(strided), tau0=2.0, dev="oadev,mdev").to_dict()
    assert not strided.flags.c_contiguous
    assert tauwise.stability(strided, tau0=2.0, dev="oadev,mdev").to_dict() == want
    backwards = np.ascontiguousarray(strided[::-1])[::-1]
    assert tauwise.stability(backwards, tau0=2.0, dev="oadev,mdev").to_dict() == want
    column = np.asfortranarray(np.stack([strided, strided], axis=1))[:, 0]
    assert tauwise.stability(column, tau0="2s", dev="oadev,mdev").to_dict() == want

    y = (rng.normal(size=5000) * 1e-3).astype(np.float32)
    single = tauwise.stability(y, tau0=1.0, kind="freq").to_dict()
    double = tauwise.stability(y.astype(np.float64), tau0=1.0, kind="freq").to_dict()
    assert single == double
    ints = np.arange(50, dtype=np.int32) ** 2
    assert (
        tauwise.stability(ints, tau0=1.0).to_dict()
        == tauwise.stability(ints.astype(np.float64), tau0=1.0).to_dict()
    )
    # Lists go through numpy.
    assert (
        tauwise.stability(list(NINE), tau0=1.0, kind="freq").to_dict()
        == tauwise.stability(NINE, tau0=1.0, kind="freq").to_dict()
    )


def test_record_arrays():
    """x and y of a record are each other's integral and difference
    (x_{i+1} − x_i = y_i·τ0, NIST SP 1065 §2)."""
    rec = tauwise.Record.from_array(NINE, 1.0, "freq")
    assert rec.kind == "freq" and len(rec) == 9
    np.testing.assert_array_equal(rec.y, NINE)
    assert len(rec.x) == 10
    np.testing.assert_allclose(np.diff(rec.x), NINE)
    with pytest.raises(ValueError):
        rec.x[0] = 1.0  # read-only views of the record


def test_simulated_record_has_the_model_allan_deviation():
    """IEEE Std 1139: white FM h0 gives σ_y²(τ) = h0/(2τ); a seeded record
    of 20 000 points lands within 5 % at τ = 1 s (seeded Monte Carlo)."""
    rec = tauwise.simulate("h0=2e-22", tau0="1s", points=20000, seed=5)
    r = tauwise.stability(rec, taus="1s")
    assert r.curves["oadev"].dev[0] == pytest.approx(np.sqrt(2e-22 / 2), rel=0.05)
    assert r.curves["oadev"].noise[0] == "WFM"


def test_the_gil_is_released_during_a_computation():
    """Another Python thread runs while the library computes: with the GIL
    held it could not run at all until the call returned."""
    x = tauwise.simulate("h0=1e-22,h-1=1e-26", tau0=1.0, points=400_000, seed=2)
    counter = [0]
    result = {}

    def work():
        result["r"] = tauwise.stability(x, dev="oadev,mdev,tdev,hdev,totdev", taus="octave")

    t = threading.Thread(target=work)
    t.start()
    while t.is_alive():
        counter[0] += 1
    t.join()
    assert "r" in result
    assert counter[0] > 1000, counter[0]
