//! The report's tables as plain data (caption, header, rows of cells), so
//! the HTML page and the Markdown page show the same figures with the same
//! wording: the summary, each stepper's claims, and each check's table.

use super::cert::{CheckCert, ClaimVerdict, PackageCert, StepperCert};
use crate::cli::render::figure;
use crate::metrics::RungClass;

/// How a cell is shown.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Tone {
    /// Plain.
    Plain,
    /// A good outcome (pass, holds).
    Good,
    /// A bad outcome (violated, regressed, error).
    Bad,
    /// Set apart (a rung outside the fit).
    Muted,
}

/// One cell.
#[derive(Clone, Debug, PartialEq)]
pub struct Cell {
    /// Its text.
    pub text: String,
    /// Its tone.
    pub tone: Tone,
}

impl Cell {
    fn plain(text: impl Into<String>) -> Cell {
        Cell {
            text: text.into(),
            tone: Tone::Plain,
        }
    }

    /// A verdict word, toned by what it means.
    fn verdict(word: &str) -> Cell {
        let tone = match word {
            "pass" | "holds" | "improved" | "new" => Tone::Good,
            "regressed" | "claim-violated" | "violated" | "error" => Tone::Bad,
            _ => Tone::Plain,
        };
        Cell {
            text: word.to_string(),
            tone,
        }
    }
}

/// A table.
#[derive(Clone, Debug, PartialEq)]
pub struct Table {
    /// Column headings.
    pub head: Vec<String>,
    /// Rows, each as long as `head`.
    pub rows: Vec<Vec<Cell>>,
}

/// The summary: one row per stepper of every package.
pub fn summary(packages: &[PackageCert]) -> Table {
    let mut rows = Vec::new();
    for p in packages {
        if p.status != "checked" {
            rows.push(vec![
                Cell::plain(&p.name),
                Cell::plain("-"),
                Cell::plain("-"),
                Cell::plain(p.message.clone().unwrap_or_default()),
                Cell::verdict("error"),
                Cell::plain("-"),
            ]);
        }
        for s in &p.steppers {
            let claims: Vec<String> = s.claims.iter().map(|c| c.stated.clone()).collect();
            let passing = s
                .checks
                .iter()
                .filter(|c| matches!(c.verdict.as_str(), "pass" | "improved" | "new"))
                .count();
            rows.push(vec![
                Cell::plain(&p.name),
                Cell::plain(&s.name),
                Cell::plain(&s.kind),
                Cell::plain(if claims.is_empty() {
                    "none declared".to_string()
                } else {
                    claims.join(", ")
                }),
                Cell::verdict(&s.verdict),
                Cell::plain(format!("{passing} of {}", s.checks.len())),
            ]);
        }
    }
    Table {
        head: [
            "package",
            "stepper",
            "kind",
            "claims",
            "claims verdict",
            "checks passing",
        ]
        .map(String::from)
        .to_vec(),
        rows,
    }
}

fn evidence_text(c: &ClaimVerdict) -> String {
    let what = match c.claim.as_str() {
        "order" => "order",
        "energy drift" => "drift exponent",
        "reversible" => "reversibility digits",
        "floor" => "best digits",
        _ => "measured",
    };
    let measured: Vec<f64> = c.evidence.iter().filter_map(|e| e.measured).collect();
    let range = match (
        measured.iter().copied().reduce(f64::min),
        measured.iter().copied().reduce(f64::max),
    ) {
        (Some(lo), Some(hi)) if (hi - lo).abs() < 0.005 => format!("{what} {lo:.2}"),
        (Some(lo), Some(hi)) => format!("{what} {lo:.2} to {hi:.2}"),
        _ => "not measured".to_string(),
    };
    let failed: Vec<String> = c
        .evidence
        .iter()
        .filter(|e| !e.holds)
        .map(|e| {
            format!(
                "{} ({}; needs {})",
                e.check,
                figure(e.measured),
                e.criterion
            )
        })
        .collect();
    if failed.is_empty() {
        range
    } else {
        format!("{range}; fails on {}", failed.join(", "))
    }
}

/// A stepper's claims: claim, statement, checks, evidence, verdict.
pub fn claims(stepper: &StepperCert) -> Table {
    let rows = stepper
        .claims
        .iter()
        .map(|c| {
            let held = c.evidence.iter().filter(|e| e.holds).count();
            vec![
                Cell::plain(&c.claim),
                Cell::plain(&c.stated),
                Cell::plain(format!("{held} of {}", c.evidence.len())),
                Cell::plain(evidence_text(c)),
                Cell::verdict(&c.verdict),
            ]
        })
        .collect();
    Table {
        head: ["claim", "stated", "checks holding", "evidence", "verdict"]
            .map(String::from)
            .to_vec(),
        rows,
    }
}

/// A check's ladder: one row per rung with its solution digits (a rung
/// outside the order fit muted, with how the fit read it), steps and
/// evaluations,
/// and for adaptive rungs the rejections and the achieved error against the
/// requested tolerance.
pub fn ladder(check: &CheckCert) -> Table {
    let adaptive = check.adaptive();
    let mut head: Vec<String> = ["rung", "solution digits", "steps", "evaluations"]
        .map(String::from)
        .to_vec();
    if adaptive {
        head.push("rejected".into());
        head.push("error / tolerance".into());
    }
    let count = |x: Option<u64>| x.map_or("-".into(), |v| v.to_string());
    let rows = check
        .rungs
        .iter()
        .map(|r| {
            let (digits, tone) = match r.class {
                RungClass::Fitted => (figure(r.digits), Tone::Plain),
                other => (
                    format!("{} ({})", figure(r.digits), class_word(other)),
                    Tone::Muted,
                ),
            };
            let mut cells = vec![r.label.clone(), digits, count(r.steps), count(r.evals)];
            if adaptive {
                cells.push(count(r.rejected));
                cells.push(
                    r.error_over_tolerance
                        .map_or("-".into(), |x| format!("{x:.2e}")),
                );
            }
            cells.into_iter().map(|text| Cell { text, tone }).collect()
        })
        .collect();
    Table { head, rows }
}

fn class_word(c: RungClass) -> &'static str {
    match c {
        RungClass::PreAsymptotic => "pre-asymptotic",
        RungClass::Fitted => "fitted",
        RungClass::NearFloor => "near floor",
        RungClass::Floor => "floor",
        RungClass::Plateau => "plateau",
        RungClass::Dip => "isolated dip",
        RungClass::Missing => "no figure",
    }
}

/// A check's key figures, one row each: figure and value.
pub fn figures(check: &CheckCert) -> Table {
    let mut rows: Vec<Vec<Cell>> = Vec::new();
    let mut add = |k: &str, v: String| rows.push(vec![Cell::plain(k), Cell::plain(v)]);
    add(
        "basis",
        match check.basis {
            Some(crate::measure::Basis::Exact) => "exact solution".into(),
            Some(crate::measure::Basis::SelfConvergence) => {
                "self-convergence (no exact solution)".into()
            }
            None => "-".into(),
        },
    );
    if let Some(h) = check.horizon {
        let unit = match (check.periodic, h == 1.0) {
            (true, true) => "period",
            (true, false) => "periods",
            (false, true) => "time unit",
            (false, false) => "time units",
        };
        add("horizon", format!("{h} {unit}"));
    }
    add(
        "order",
        match &check.order {
            Some(o) => format!(
                "{:.2} (fitted over {} .. {}, residual {:.3} digits)",
                o.order, o.from, o.to, o.residual
            ),
            None => "no order: too few rungs in the asymptotic range".into(),
        },
    );
    add(
        "best digits",
        match (&check.best_digits, &check.best_at) {
            (Some(d), Some(at)) => format!("{d:.2} at {at}"),
            _ => "-".into(),
        },
    );
    add(
        "roundoff floor",
        check
            .floor_from
            .as_ref()
            .map_or("not reached".into(), |f| format!("from {f}")),
    );
    if let Some(p) = &check.plateau_from {
        add("plateau (consistency error)", format!("from {p}"));
    }
    add("evaluations per step", figure(check.evals_per_step));
    for inv in &check.invariants {
        let drift = |class: &Option<String>, exp: Option<f64>| match class {
            Some(c) => format!("{c} (exponent {})", figure(exp)),
            None => "-".into(),
        };
        add(
            &format!("invariant {}", inv.name),
            format!(
                "best digits {}, order {}, drift forward {}, backward {}",
                figure(inv.best_digits),
                figure(inv.order),
                drift(&inv.drift_forward, inv.drift_forward_exponent),
                drift(&inv.drift_backward, inv.drift_backward_exponent)
            ),
        );
    }
    for (name, v) in [
        ("period digits", check.period_digits),
        ("virial digits", check.virial_digits),
        ("reversibility digits", check.reversibility_digits),
    ] {
        if v.is_some() {
            add(name, figure(v));
        }
    }
    if let Some(e) = &check.error {
        add("error", e.clone());
    }
    Table {
        head: vec!["figure".into(), "value".into()],
        rows,
    }
}

/// A stepper's verdict as a phrase for a heading.
pub fn verdict_phrase(verdict: &str) -> &'static str {
    match verdict {
        "holds" => "every claim holds",
        "violated" => "a claim is violated",
        "no claims" => "no claims declared",
        _ => "a check could not be measured",
    }
}
