//! The report's sections, each written from its own result struct.

use super::html::{n, t, Cell, Html, CSS};
use super::*;
use crate::units::{format_si, format_sig};

/// Inline chart size (pixels; the SVG scales with the page).
const CHART: (u32, u32) = (920, 540);

fn tau(v: f64) -> String {
    format_si(v, "s", 4)
}
fn secs(v: f64) -> String {
    format_si(v, "s", 4)
}
/// Seconds, or a dash for a value that is not finite (its verdict is then
/// not judged and says why).
fn finite_secs(v: f64) -> String {
    if v.is_finite() {
        secs(v)
    } else {
        "—".into()
    }
}
fn hz(v: f64) -> String {
    format_si(v, "Hz", 4)
}
fn opt(v: Option<f64>, f: impl Fn(f64) -> String) -> String {
    v.map(f).unwrap_or_else(|| "—".into())
}

/// Open section `k` of [`SECTION_IDS`], its id prefixed with `pre` (empty
/// for the single report; `d1-`, `d2-`, … for each device of a fleet report).
fn open(h: &mut Html, k: usize, pre: &str) {
    let (id, title) = SECTION_IDS[k];
    h.open_section(&format!("{pre}{id}"), title);
}

fn absent(h: &mut Html, a: &Absent) {
    match a {
        Absent::NotRequested(why) => {
            h.p_class("absent", &format!("Not part of this report: {why}"))
        }
        Absent::NotComputed(why) => h.p_class("absent", &format!("Not computed: {why}")),
    };
}

fn notes(h: &mut Html, list: &[String]) {
    for x in list {
        h.p_class("note", x);
    }
}

fn verdicts(h: &mut Html, r: &Report, pre: &str) {
    open(h, 0, pre);
    if r.verdicts.is_empty() {
        h.p_class(
            "absent",
            "No verdict was asked for: the input names no jitter limit, wander mask or holdover budget.",
        );
    } else {
        use crate::verdict::{Coverage, Verdict};
        let count = |v: Verdict| {
            r.verdicts
                .iter()
                .filter(|l| l.judgement.verdict == v)
                .count()
        };
        let (pass, fail, none) = (
            count(Verdict::Meets),
            count(Verdict::Exceeds),
            count(Verdict::NotJudged),
        );
        let undecided = count(Verdict::Undecided);
        let partial = r
            .verdicts
            .iter()
            .filter(|l| {
                l.judgement.verdict != Verdict::NotJudged
                    && l.judgement.coverage == Coverage::Partial
            })
            .count();
        h.p(&format!(
            "{} check(s): {pass} meet, {fail} exceed{}{}{}.",
            r.verdicts.len(),
            if undecided > 0 {
                format!(", {undecided} undecided (an undecided check fails the gate)")
            } else {
                String::new()
            },
            if none > 0 {
                format!(", {none} not judged (a check that cannot be judged fails the gate)")
            } else {
                String::new()
            },
            if partial > 0 {
                format!(
                    "; {partial} judged on part of the range their criterion sets (see each line)"
                )
            } else {
                String::new()
            }
        ));
        let rows: Vec<Vec<Cell>> = r
            .verdicts
            .iter()
            .map(|v| {
                vec![
                    t(v.kind.word()),
                    t(&v.item),
                    t(&v.criterion),
                    t(&v.result),
                    Cell::Verdict(v.judgement.clone()),
                ]
            })
            .collect();
        h.table(
            "verdicts",
            &["check", "item", "criterion", "result", "verdict"],
            &rows,
        );
        // The decision rule behind every verdict above (crate::decision).
        h.p(&format!(
            "Decision rule: {} ({}). P is the probability that the true value is within the \
             limit, the smallest over a check's points; MTIE, L(f) and jitter checks have no \
             uncertainty available and are decided at the estimate.",
            r.decision.words(),
            crate::decision::REFERENCE
        ));
    }
    h.p_class("caution", crate::DECISION_CAUTION);
    h.close_section();
}

fn quality(h: &mut Html, q: &DataQuality) {
    let mut pairs = vec![
        (
            "span".to_string(),
            format!(
                "{} ({}), {} points at τ0 = {}",
                secs(q.span),
                format_si(q.span / 3600.0, "h", 4),
                q.points,
                secs(q.tau0)
            ),
        ),
        (
            "gaps".to_string(),
            if q.gaps == 0 {
                "none".to_string()
            } else {
                format!(
                    "{} missing samples in {} run{}, the longest {}",
                    q.gaps,
                    q.gap_runs,
                    if q.gap_runs == 1 { "" } else { "s" },
                    secs(q.longest_gap)
                )
            },
        ),
        (
            "frequency offset".to_string(),
            opt(q.offset, |v| format!("{} (mean of y)", format_sig(v, 4))),
        ),
        (
            "linear drift".to_string(),
            match (q.drift_per_day, q.drift_sigma_per_day) {
                (Some(d), Some(sg)) => format!(
                    "{} ± {} per day (1σ, parametric bootstrap on the record's noise model)",
                    format_sig(d, 4),
                    format_sig(sg, 2)
                ),
                (Some(d), None) => format!("{} per day", format_sig(d, 4)),
                _ => "—".into(),
            },
        ),
    ];
    pairs.push((
        "outliers".to_string(),
        match &q.outliers {
            Some(o) => format!(
                "{} of {} frequency values beyond {} scaled MADs ({}) from the median",
                o.events.len(),
                o.tested,
                format_sig(o.limit, 3),
                format_sig(o.mad, 4)
            ),
            None => "—".into(),
        },
    ));
    h.dl(&pairs);
}

fn stability(h: &mut Html, p: &Part<Vec<StabilitySection>>, pre: &str) -> Result<()> {
    open(h, 1, pre);
    match p {
        Part::Absent(a) => absent(h, a),
        Part::Done(list) => {
            for s in list {
                h.el("h3", "", &format!("Record: {}", s.source));
                if let Some(q) = &s.quality {
                    h.el("h4", "", "Data quality");
                    quality(h, q);
                }
                if !s.preparation.is_empty() {
                    h.el("h4", "", "Prepared for the analysis");
                    h.ul(&s.preparation);
                }
                let Some(plot) = &s.plot else {
                    notes(h, &s.notes);
                    continue;
                };
                h.p(&format!(
                    "Intervals at {:.1} % confidence.",
                    s.confidence * 100.0
                ));
                let Some((chart, time_chart)) = s.charts() else {
                    continue;
                };
                let cap = if plot.confidence.is_some() {
                    "σ–τ: deviations against averaging time; bars are confidence intervals"
                } else {
                    "σ–τ: deviations against averaging time"
                };
                h.figure(&crate::plot::to_svg_string(&chart, CHART)?, cap);
                if let Some(tc) = time_chart {
                    h.figure(
                        &crate::plot::to_svg_string(&tc, CHART)?,
                        "Time deviations against averaging time",
                    );
                }
                let rows: Vec<Vec<Cell>> = s
                    .rows
                    .iter()
                    .map(|r| {
                        let time = r.estimator.is_time_deviation();
                        let f = |v: f64| if time { secs(v) } else { format_sig(v, 4) };
                        vec![
                            t(r.estimator.name()),
                            n(tau(r.tau)),
                            n(r.m.to_string()),
                            n(match r.approximation {
                                Some(_) => format!(
                                    "{} {}",
                                    f(r.dev),
                                    crate::deviation::Approximation::MARK
                                ),
                                None => f(r.dev),
                            }),
                            n(match (r.lo, r.hi) {
                                (Some(lo), Some(hi)) => format!("{} … {}", f(lo), f(hi)),
                                _ => "—".into(),
                            }),
                            n(opt(r.edf, |e| format!("{e:.1}"))),
                            t(r.noise.clone().unwrap_or_else(|| "—".into())),
                            n(r.terms.to_string()),
                        ]
                    })
                    .collect();
                let mut head = vec![
                    "estimator",
                    "τ",
                    "m",
                    "deviation",
                    "interval",
                    "EDF",
                    "noise",
                    "terms",
                ];
                let rows = if s.limits.is_empty() {
                    rows
                } else {
                    head.push("limit at τ (measured/limit)");
                    rows.into_iter()
                        .zip(&s.rows)
                        .map(|(mut cells, r)| {
                            cells.push(t(limit_cell(&s.limits, r)));
                            cells
                        })
                        .collect()
                };
                h.el("h4", "", "Values");
                h.table("stability", &head, &rows);
                // One note per approximation the table marks.
                let marked = s.rows.iter().map(|r| r.approximation);
                for a in crate::deviation::Approximation::distinct(marked) {
                    h.p_class("note", &a.note());
                }
                limit_checks(h, &s.limit_checks);
                notes(h, &s.notes);
            }
        }
    }
    h.close_section();
    Ok(())
}

/// The limits of a σ row's estimator at its τ: `NAME ≤ value (ratio×)`,
/// `—` where none sets a value there.
fn limit_cell(limits: &[crate::limits::Limit], r: &StabilityRow) -> String {
    let time = r.estimator.is_time_deviation();
    let cells: Vec<String> = limits
        .iter()
        .filter(|l| l.metric == crate::limits::LimitMetric::Estimator(r.estimator))
        .filter_map(|l| {
            let v = l.shape().eval(r.tau)?;
            let shown = if time { secs(v) } else { format_sig(v, 3) };
            let ratio = r.dev / v;
            Some(format!(
                "{}: {shown} ({ratio:.2}{})",
                l.name,
                if ratio > 1.0 { ", above" } else { "" }
            ))
        })
        .collect();
    if cells.is_empty() {
        "—".into()
    } else {
        cells.join("; ")
    }
}

/// One line per limit check of a section: the label, the verdict and the
/// range checked.
fn limit_checks(h: &mut Html, checks: &[crate::limits::LimitCheck]) {
    if checks.is_empty() {
        return;
    }
    let lines: Vec<String> = checks
        .iter()
        .map(|c| {
            format!(
                "{}: {} — {}{}",
                c.label(),
                c.judgement.cell(),
                c.checked_words(),
                c.judgement
                    .reason
                    .as_ref()
                    .map(|r| format!("; {r}"))
                    .unwrap_or_default()
            )
        })
        .collect();
    h.ul(&lines);
}

fn noise_model(h: &mut Html, p: &Part<Vec<NoiseModelSection>>, pre: &str) {
    open(h, 2, pre);
    match p {
        Part::Absent(a) => absent(h, a),
        Part::Done(list) => {
            for s in list {
                h.el("h3", "", &format!("Record: {}", s.source));
                if s.model_string.is_empty() {
                    notes(h, &s.notes);
                    continue;
                }
                h.p("Power-law model S_y(f) = Σ h_α f^α (IEEE Std 1139); the string below is accepted by --model:");
                h.raw("<p><code>").text(&s.model_string).raw("</code></p>");
                let rows: Vec<Vec<Cell>> = s
                    .terms
                    .iter()
                    .map(|m| {
                        vec![
                            n(m.alpha.to_string()),
                            t(&m.label),
                            n(format!("{:.3e}", m.h)),
                            t(m.dominant
                                .map(|(a, b)| format!("{} … {}", tau(a), tau(b)))
                                .unwrap_or_else(|| "—".into())),
                        ]
                    })
                    .collect();
                h.table("model", &["α", "noise", "h_α", "dominates over τ"], &rows);
                if !s.identified.is_empty() {
                    h.el("h4", "", "Noise type at each τ");
                    let rows: Vec<Vec<Cell>> = s
                        .identified
                        .iter()
                        .map(|r| {
                            vec![
                                n(tau(r.tau)),
                                n(r.alpha.to_string()),
                                t(&r.label),
                                t(&r.method),
                            ]
                        })
                        .collect();
                    h.table("noise-id", &["τ", "α", "noise", "method"], &rows);
                }
                notes(h, &s.notes);
            }
        }
    }
    h.close_section();
}

fn phase_noise(h: &mut Html, p: &Part<PhaseNoiseSection>, pre: &str) -> Result<()> {
    open(h, 3, pre);
    match p {
        Part::Absent(a) => absent(h, a),
        Part::Done(s) => {
            h.p(&format!("Table: {}. Carrier {}.", s.source, hz(s.carrier)));
            h.figure(
                &crate::plot::to_svg_string(&s.chart(), CHART)?,
                if s.limits.is_empty() {
                    "L(f) against offset frequency; integration bands shaded"
                } else {
                    "L(f) against offset frequency; integration bands shaded; limits dashed"
                },
            );
            if !s.limit_rows.is_empty() {
                h.el("h3", "", "L(f) against the limits");
                let rows: Vec<Vec<Cell>> = s
                    .limit_rows
                    .iter()
                    .map(|r| {
                        let excess = r.measured - r.value;
                        vec![
                            t(&r.limit),
                            n(hz(r.offset)),
                            n(format!("{:.2}", r.measured)),
                            n(format!("{:.2}", r.value)),
                            n(format!("{excess:+.2}")),
                            t(if excess > 0.0 { "above" } else { "at or below" }),
                        ]
                    })
                    .collect();
                h.table(
                    "lf-limits",
                    &[
                        "limit",
                        "offset",
                        "L(f) dBc/Hz",
                        "limit dBc/Hz",
                        "L − limit dB",
                        "",
                    ],
                    &rows,
                );
                limit_checks(h, &s.limit_checks);
            }
            if s.bands.is_empty() {
                h.p_class("absent", "No jitter band was asked for.");
            } else {
                let rows: Vec<Vec<Cell>> = s
                    .bands
                    .iter()
                    .map(|b| {
                        vec![
                            t(&b.name),
                            n(format!("{} … {}", hz(b.from), hz(b.to))),
                            t(if b.filters.is_empty() {
                                "none".into()
                            } else {
                                b.filters.clone()
                            }),
                            n(format!("{:.4e}", b.rms_rad)),
                            n(format_sig(b.rms_deg(), 4)),
                            n(secs(b.rms_s)),
                            n(opt(b.rms_ui, |u| format!("{u:.4e}"))),
                            n(b.limit.clone().unwrap_or_else(|| "—".into())),
                            match &b.judgement {
                                Some(j) => Cell::Verdict(j.clone()),
                                None => t("no limit"),
                            },
                        ]
                    })
                    .collect();
                h.el("h3", "", "Integrated jitter per band");
                h.table(
                    "jitter",
                    &[
                        "band",
                        "offsets",
                        "filters",
                        "rms phase (rad)",
                        "rms phase (°)",
                        "rms time",
                        "rms (UI)",
                        "limit",
                        "verdict",
                    ],
                    &rows,
                );
            }
            notes(h, &s.notes);
        }
    }
    h.close_section();
    Ok(())
}

fn combined(h: &mut Html, p: &Part<Vec<CombinedSection>>, pre: &str) -> Result<()> {
    open(h, 4, pre);
    match p {
        Part::Absent(a) => absent(h, a),
        Part::Done(list) => {
            for s in list {
                let c = &s.comparison;
                h.el(
                    "h3",
                    "",
                    &format!("Record: {} — table: {}", s.source, s.table),
                );
                h.figure(
                    &crate::plot::to_svg_string(&s.plot.chart(), CHART)?,
                    "Measured deviations (solid) with those from the phase-noise table (dashed)",
                );
                match (&c.apart, c.agree()) {
                    (Some(a), _) => {
                        h.p_class(
                            "absent",
                            &format!(
                                "No common range: {} — a factor {} apart.",
                                a.reason,
                                format_sig(a.factor, 3)
                            ),
                        );
                    }
                    (None, None) => {
                        h.p_class(
                            "absent",
                            "The two views share τ, but no measured point there has a confidence interval to compare with.",
                        );
                    }
                    (None, Some(all)) => {
                        let agree = c.points.iter().filter(|p| p.agree).count();
                        h.p(&format!(
                            "{} ({}) from {} to {}: {agree} of {} τ agree{}.",
                            if all {
                                "The two views agree"
                            } else {
                                "The two views disagree"
                            },
                            c.estimator,
                            c.common.map(|r| tau(r[0])).unwrap_or_default(),
                            c.common.map(|r| tau(r[1])).unwrap_or_default(),
                            c.points.len(),
                            if c.without_interval > 0 {
                                format!(
                                    "; {} τ without an interval not compared",
                                    c.without_interval
                                )
                            } else {
                                String::new()
                            }
                        ));
                        let rows: Vec<Vec<Cell>> = c
                            .points
                            .iter()
                            .map(|r| {
                                vec![
                                    n(tau(r.tau)),
                                    n(format_sig(r.measured, 4)),
                                    n(format!("{} … {}", format_sig(r.lo, 4), format_sig(r.hi, 4))),
                                    n(format_sig(r.converted, 4)),
                                    n(format!("{:.3}", r.ratio)),
                                    n(format!("±{:.1} %", (r.tolerance.exp() - 1.0) * 100.0)),
                                    t(if r.agree { "yes" } else { "no" }),
                                ]
                            })
                            .collect();
                        h.table(
                            "consistency",
                            &[
                                "τ",
                                "measured",
                                "interval",
                                "from the table",
                                "ratio",
                                "tolerance",
                                "agree",
                            ],
                            &rows,
                        );
                    }
                }
                notes(h, &s.notes);
            }
        }
    }
    h.close_section();
    Ok(())
}

fn wander(h: &mut Html, p: &Part<WanderSection>, pre: &str) -> Result<()> {
    open(h, 5, pre);
    match p {
        Part::Absent(a) => absent(h, a),
        Part::Done(s) => {
            h.p(&format!("Capture: {}.", s.source));
            if let Some(tie) = s.tie {
                h.dl(&[
                    ("max |TIE|".into(), secs(tie.max_abs)),
                    ("TIE peak to peak".into(), secs(tie.pk_pk)),
                    ("TIE rms".into(), secs(tie.rms)),
                ]);
            }
            for wp in &s.plots {
                let cap = format!(
                    "{} against observation interval, with masks",
                    wp.metric.label()
                );
                h.figure(&crate::plot::to_svg_string(&wp.chart(), CHART)?, &cap);
            }
            if !s.masks.is_empty() {
                let rows: Vec<Vec<Cell>> = s
                    .masks
                    .iter()
                    .map(|m| {
                        vec![
                            t(&m.name),
                            t(&m.metric),
                            n(opt(m.worst_ratio, |r| format!("{r:.3}"))),
                            n(opt(m.worst_ratio, |r| {
                                crate::units::format_margin_db(0.0 - 20.0 * r.log10())
                            })),
                            n(opt(m.worst_tau, tau)),
                            n(m.violations.to_string()),
                            n(match m.checked {
                                Some((a, b)) => format!("{} … {}", tau(a), tau(b)),
                                None => "—".into(),
                            }),
                            n(format!(
                                "{} … {}",
                                tau(m.mask_range.0),
                                m.mask_range.1.map(tau).unwrap_or_else(|| "no end".into())
                            )),
                            Cell::Verdict(m.judgement.clone()),
                        ]
                    })
                    .collect();
                h.table(
                    "masks",
                    &[
                        "mask",
                        "metric",
                        "worst measured/limit",
                        "margin",
                        "at τ",
                        "violating τ",
                        "τ checked",
                        "mask's τ range",
                        "verdict",
                    ],
                    &rows,
                );
                for m in &s.masks {
                    if let Some(why) = &m.judgement.reason {
                        h.p_class("note", &format!("{} ({}): {why}", m.name, m.metric));
                    }
                }
                let mut srcs: Vec<String> = s
                    .masks
                    .iter()
                    .map(|m| format!("{}: {}", m.name, m.source_note))
                    .collect();
                srcs.dedup();
                h.ul(&srcs);
            }
            if let Some(te) = &s.te {
                te_part(h, te);
            }
            notes(h, &s.notes);
        }
    }
    h.close_section();
    Ok(())
}

/// The time-error metrics of the wander section: the values, the filters
/// of the dTE split, dTE_L's MTIE and TDEV, and what they rest on.
fn te_part(h: &mut Html, te: &crate::wander::te::TeMetrics) {
    h.p("Time error (the record's values as read, not relative to its first sample):");
    h.dl(&[
        ("cTE, mean over the record".into(), secs(te.cte)),
        (
            format!("cTE, largest |mean| over {} windows", secs(te.cte_window)),
            opt(te.cte_windowed_max_abs, secs),
        ),
        ("max |TE|".into(), secs(te.max_abs)),
        (
            "dTE_H, peak-to-peak through the high-pass".into(),
            secs(te.dte_h_pkpk),
        ),
        ("dTE_L low-pass".into(), te.lowpass.line()),
        ("dTE_H high-pass".into(), te.highpass.line()),
    ]);
    let mut taus: Vec<f64> = te
        .dte_l_mtie
        .iter()
        .chain(&te.dte_l_tdev)
        .map(|p| p.tau)
        .collect();
    taus.sort_by(f64::total_cmp);
    taus.dedup();
    let find = |c: &[crate::deviation::Estimate], x: f64| {
        opt(c.iter().find(|p| p.tau == x).map(|p| p.value), secs)
    };
    let rows: Vec<Vec<Cell>> = taus
        .iter()
        .map(|&x| {
            vec![
                n(tau(x)),
                n(find(&te.dte_l_mtie, x)),
                n(find(&te.dte_l_tdev, x)),
            ]
        })
        .collect();
    h.table("dte-l", &["τ", "dTE_L MTIE", "dTE_L TDEV"], &rows);
    notes(h, &te.notes);
}

fn holdover(h: &mut Html, p: &Part<HoldoverSection>, pre: &str) -> Result<()> {
    open(h, 6, pre);
    match p {
        Part::Absent(a) => absent(h, a),
        Part::Done(s) => {
            h.p(&format!(
                "Predicted from: {}. Budget ±{}.",
                s.source,
                secs(s.budget)
            ));
            match s.holds_for {
                Some(x) => h.p(&format!(
                    "The p95 of |TE| first exceeds the budget after about {} ({}).",
                    format_si(x / 3600.0, "h", 3),
                    secs(x)
                )),
                None => h.p("The p95 of |TE| stays within the budget over the longest span."),
            };
            h.figure(
                &crate::plot::to_svg_string(&s.plot.chart(), CHART)?,
                "Time error through holdover: deterministic part and p50/p95/p99 of |TE|",
            );
            let rows: Vec<Vec<Cell>> = s
                .spans
                .iter()
                .map(|r| {
                    vec![
                        n(format_si(r.span / 3600.0, "h", 3)),
                        n(finite_secs(r.deterministic)),
                        n(finite_secs(r.p95)),
                        n(finite_secs(r.p99)),
                        n(secs(s.budget)),
                        Cell::Verdict(r.judgement.clone()),
                    ]
                })
                .collect();
            h.table(
                "holdover",
                &[
                    "span",
                    "deterministic TE",
                    "p95 |TE|",
                    "p99 |TE|",
                    "budget",
                    "verdict (p95)",
                ],
                &rows,
            );
            h.el("h3", "", "Model and parameters");
            h.dl(&s.parameters);
            notes(h, &s.notes);
        }
    }
    h.close_section();
    Ok(())
}

fn inputs(h: &mut Html, r: &Report, pre: &str) {
    open(h, 7, pre);
    if let Some(f) = &r.dut_file {
        h.p(&format!("DUT file: {f}"));
    }
    if r.inputs.is_empty() {
        h.p_class("absent", "No input file was read.");
    } else {
        let rows: Vec<Vec<Cell>> = r
            .inputs
            .iter()
            .map(|p| {
                vec![
                    t(&p.role),
                    t(&p.name),
                    Cell::Code(p.path.clone()),
                    Cell::Code(p.sha256.clone()),
                    n(p.bytes.to_string()),
                    n(p.points
                        .map(|x| x.to_string())
                        .unwrap_or_else(|| "—".into())),
                    n(opt(p.tau0, secs)),
                    n(opt(p.span, |s| {
                        format!("{} ({})", secs(s), format_si(s / 3600.0, "h", 3))
                    })),
                    n(p.gaps.map(|x| x.to_string()).unwrap_or_else(|| "—".into())),
                ]
            })
            .collect();
        h.table(
            "inputs",
            &[
                "role", "name", "file", "SHA-256", "bytes", "points", "τ0", "span", "gaps",
            ],
            &rows,
        );
    }
    h.close_section();
}

fn methods(h: &mut Html, r: &Report, pre: &str) {
    open(h, 8, pre);
    if r.methods.is_empty() {
        h.p_class("absent", "No computation was made.");
    } else {
        let rows: Vec<Vec<Cell>> = r
            .methods
            .iter()
            .map(|m| vec![t(&m.name), t(&m.source)])
            .collect();
        h.table("methods", &["computation", "published source"], &rows);
    }
    h.close_section();
}

fn cautions(h: &mut Html, r: &Report, pre: &str) {
    open(h, 9, pre);
    let mut list = r.cautions.clone();
    if !list.iter().any(|c| c == crate::DECISION_CAUTION) {
        list.insert(0, crate::DECISION_CAUTION.to_string());
    }
    for c in &list {
        h.p_class("caution", c);
    }
    h.close_section();
}

/// The report's contents in page order, `(anchor, heading)`: the sections
/// of [`SECTION_IDS`] with those the DUT file adds ([`Report::added`])
/// after the holdover.
pub(crate) fn contents(r: &Report) -> Vec<(&'static str, &'static str)> {
    let k = SECTION_IDS
        .iter()
        .position(|s| s.0 == "inputs")
        .unwrap_or(SECTION_IDS.len());
    let (before, after) = SECTION_IDS.split_at(k);
    let added = r.added.iter().map(|a| (a.id, a.title));
    before
        .iter()
        .copied()
        .chain(added)
        .chain(after.iter().copied())
        .collect()
}

/// Every section of [`SECTION_IDS`] in order, each section id prefixed with
/// `pre` (the single report and each device of a fleet report).
pub(super) fn body(h: &mut Html, r: &Report, pre: &str) -> Result<()> {
    verdicts(h, r, pre);
    stability(h, &r.stability, pre)?;
    noise_model(h, &r.noise_model, pre);
    phase_noise(h, &r.phase_noise, pre)?;
    combined(h, &r.combined, pre)?;
    wander(h, &r.wander, pre)?;
    holdover(h, &r.holdover, pre)?;
    // Sections added by the DUT file's [separate] and [timeline].
    for a in &r.added {
        h.open_section(&format!("{pre}{}", a.id), a.title);
        h.raw(&a.html);
        h.close_section();
    }
    inputs(h, r, pre);
    methods(h, r, pre);
    cautions(h, r, pre);
    Ok(())
}

/// The whole document.
pub(super) fn document(r: &Report) -> Result<String> {
    let mut h = Html::new();
    open_document(&mut h, &format!("{} — stability report", r.device), &[CSS]);
    h.raw("<header class=\"top\">");
    h.el("h1", "", &format!("{} — stability report", r.device));
    if let Some(d) = &r.description {
        h.p(d);
    }
    h.p(&format!(
        "Made by {} {} on {}{}.",
        crate::TOOL,
        crate::VERSION,
        r.generated,
        r.dut_file
            .as_ref()
            .map(|f| format!(" from {f}"))
            .unwrap_or_default()
    ));
    h.raw("</header>\n<nav class=\"toc\">");
    for (id, title) in contents(r) {
        h.raw(&format!("<a href=\"#{id}\">"))
            .text(title)
            .raw("</a>\n");
    }
    h.raw("</nav>\n<main>\n");
    body(&mut h, r, "")?;
    close_document(&mut h);
    Ok(h.finish())
}

/// The document up to `<body>`: doctype, meta (generator: tool and
/// version), the title and the style sheets, inline.
pub(crate) fn open_document(h: &mut Html, title: &str, css: &[&str]) {
    h.raw("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    h.raw("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    h.raw(&format!(
        "<meta name=\"generator\" content=\"{} {}\">\n",
        crate::TOOL,
        crate::VERSION
    ));
    h.raw("<title>").text(title).raw("</title>\n<style>");
    for c in css {
        h.raw(c);
    }
    h.raw("</style>\n</head>\n<body>\n");
}

/// `</main>`, the footer (tool, version, nothing fetched) and the end.
pub(crate) fn close_document(h: &mut Html) {
    h.raw("</main>\n<footer>");
    h.text(&format!(
        "{} {} · every value above was computed from the inputs listed; nothing was fetched from a network.",
        crate::TOOL,
        crate::VERSION
    ));
    h.raw("</footer>\n</body>\n</html>\n");
}
