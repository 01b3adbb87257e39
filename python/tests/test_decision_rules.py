"""decision_rule and conformance from Python are the command line's
--decision-rule and --conformance (docs/decision-rules.md, after JCGM
106:2012): the same documents and gates on the demo data, the worked
example included."""

import pytest

import tauwise

PHASE_A = "demo-data/ocxo-a-phase.txt"
PHASE_B = "demo-data/ocxo-b-phase.txt"
TIE_B = "demo-data/ocxo-b-tie.txt"
LF_A = "demo-data/ocxo-a-lf.csv"
LIMITS = "demo-data/acceptance-limits.toml"


def test_the_worked_example_ocxo_b_held_over_for_14_5_hours(at_repo, cli):
    """docs/decision-rules.md: over 14.5 h the simple rule says exceeds (p95
    of |TE| is over the 1.5 µs budget), while 1669 of 2000 seeded paths
    stay within it: P = 83.5 %, neither P nor 1 − P reaches 0.95, so the
    guarded rule leaves it undecided (JCGM 106 §8.3; seeded Monte Carlo)."""
    common = ["holdover", PHASE_B, "--units", "ns", "--tau0", "1s", "--span", "14.5h",
              "--budget", "1.5us", "--format", "json"]
    simple = tauwise.holdover(PHASE_B, units="ns", tau0="1s", span="14.5h", budget="1.5us")
    assert simple.to_dict() == cli(*common)
    assert simple.gate == "exceeds"
    guarded = tauwise.holdover(
        PHASE_B, units="ns", tau0="1s", span="14.5h", budget="1.5us", decision_rule="guarded"
    )
    want = cli(*common, "--decision-rule", "guarded")
    assert guarded.to_dict() == want
    assert guarded.gate == "undecided"
    doc = guarded.to_dict()
    assert (doc["verdict"], doc["at_estimate"]) == ("undecided", "exceeds")
    assert (doc["decision_rule"], doc["conformance"]) == ("guarded", 0.95)
    assert (doc["paths_within_budget"], doc["paths"], doc["probability"]) == (1669, 2000, 0.8345)
    # At a level P reaches, the guarded rule decides: 1 − P = 16.5 % < 0.8
    # and P = 83.5 % ≥ 0.8 → meets (analytic, from the path count).
    low = tauwise.holdover(
        PHASE_B, units="ns", tau0="1s", span="14.5h", budget="1.5us", decision_rule="guarded",
        conformance=0.8,
    )
    assert low.to_dict() == cli(*common, "--decision-rule", "guarded", "--conformance", "0.8")
    assert low.gate == "pass"


def test_stability_limits_under_the_guarded_rule(at_repo, cli):
    args = ["stability", PHASE_A, "--units", "ns", "--tau0", "1s", "--dev", "adev",
            "--taus", "decade", "--limit-file", LIMITS, "--format", "json"]
    for rule, level in (("simple", None), ("guarded", None), ("guarded", "0.99")):
        extra = ["--decision-rule", rule] + (["--conformance", level] if level else [])
        got = tauwise.stability(
            PHASE_A, units="ns", tau0="1s", dev="adev", taus="decade", limit_files=LIMITS,
            decision_rule=rule, conformance=level,
        )
        assert got.to_dict() == cli(*args, *extra), (rule, level)


def test_wander_masks_under_the_guarded_rule(at_repo, cli):
    """TDEV masks get the χ² probability at each τ; MTIE masks have no
    distribution and are decided at the estimate (docs/decision-rules.md)."""
    want = cli("wander", TIE_B, "--units", "ns", "--tau0", "100ms", "--mask", "g8262-opt1",
               "--mask", "g8272-prtc-a", "--decision-rule", "guarded", "--conformance", "95%",
               "--format", "json")
    got = tauwise.wander(TIE_B, units="ns", tau0="100ms", masks=["g8262-opt1", "g8272-prtc-a"],
                         decision_rule="guarded", conformance="95%")
    assert got.to_dict() == want


def test_jitter_limits_under_the_guarded_rule(at_repo, cli):
    """A jitter limit has no uncertainty here: decided at the estimate, and
    the document says so — the same under both rules except the words."""
    want = cli("jitter", LF_A, "--carrier", "10MHz", "--band", "12k:5M", "--limit", "1ps",
               "--limit-file", LIMITS, "--decision-rule", "guarded", "--format", "json")
    got = tauwise.jitter(LF_A, "10MHz", "12k:5M", limits="1ps", limit_files=LIMITS,
                         decision_rule="guarded")
    assert got.to_dict() == want
    assert got.gate == "pass"


def test_report_under_the_guarded_rule(at_repo, cli):
    want = cli("report", "demo-data/ocxo-b.toml", "--format", "json", "--decision-rule",
               "guarded")
    got = tauwise.report("demo-data/ocxo-b.toml", decision_rule="guarded")
    assert got.to_dict() == want
    part = tauwise.device("demo-data/ocxo-b.toml", decision_rule="guarded")
    assert tauwise.fleet([part]).to_dict() == want


def test_bad_rules_are_refused_with_the_command_lines_reason():
    x = [0.0] * 100
    with pytest.raises(ValueError, match=r"^decision_rule='strict'.*simple or guarded"):
        tauwise.stability(x, tau0=1.0, decision_rule="strict")
    with pytest.raises(ValueError, match=r"^conformance='0.5'"):
        tauwise.wander(x, tau0=1.0, decision_rule="guarded", conformance=0.5)
    with pytest.raises(ValueError, match=r"^conformance='1.2'"):
        tauwise.report("demo-data/ocxo-b.toml", decision_rule="guarded", conformance=1.2)
