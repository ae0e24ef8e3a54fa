//! What the harness writes besides test results: the versioned JSON document
//! of measurements (for `cargo drift` and CI tools) and, in record mode, the
//! merged baseline file.
//!
//! JSON layout, format 1:
//! ```text
//! { "format": 1, "tool": "0.1.0", "baseline": "path judged against",
//!   "unplanned": [ { "name", "reason" } ] (recorded checks drift.toml no longer plans),
//!   "environment": { "format", "tool", "target", "rustc", "profile", "features" },
//!   "checks": [ { "name": "rk4/harmonic", "stepper": "rk4", "problem": "harmonic",
//!                 "verdict": "pass" | "improved" | "new" | "regressed" | "claim-violated" | "error",
//!                 "error": null | "message",
//!                 "rows": [ { "metric", "baseline", "now", "allowed", "status" } ],
//!                 "claimed": { "order"?, "energy"?, "reversible"?, "floor"? } (drift.toml),
//!                 "claims": [ rows as above, one per claim of the stepper, holding or not ],
//!                 "figures": null | { same keys as a [check."..."] table of the baseline },
//!                 "detail": null | { "horizon", "periodic", "invariants": [names],
//!                     "rungs": [ { "steps_per_unit" | "tolerance", "steps", "evals", "rejected",
//!                                  "digits", "invariant_digits": [..] } ],
//!                     "long_run": null | { "steps_per_unit", "periods",
//!                                          "series": [ { "name", "t": [..], "error": [..] } ] } } } ] }
//! ```

use std::collections::BTreeMap;
use std::path::Path;

use serde_json::{json, Value};

use crate::baseline::{Baseline, BaselineError, Header, LadderRecord, MetricRow, Verdict};
use crate::measure::Ladder;
use crate::spec::{Plan, Unplanned};

use super::check::CheckOutcome;

/// Version of the JSON layout.
pub const JSON_FORMAT: u32 = 1;

/// The JSON document of `outcomes`.
pub fn document(outcomes: &[CheckOutcome]) -> Value {
    let checks: Vec<Value> = outcomes
        .iter()
        .map(|o| {
            let rows = |rows: &[MetricRow]| -> Vec<Value> {
                rows.iter()
                    .map(|r| {
                        json!({ "metric": r.metric, "baseline": r.baseline, "now": r.now,
                                "allowed": r.allowed, "status": r.status.name() })
                    })
                    .collect()
            };
            let error = match &o.judgement.verdict {
                Verdict::Error(e) => Some(e.clone()),
                _ => None,
            };
            json!({ "name": o.name, "stepper": o.stepper, "problem": o.problem,
                    "verdict": o.judgement.verdict.name(), "error": error,
                    "rows": rows(&o.judgement.rows), "claimed": o.claimed,
                    "claims": rows(&o.claims),
                    "figures": o.record, "detail": o.detail })
        })
        .collect();
    json!({ "format": JSON_FORMAT, "tool": env!("CARGO_PKG_VERSION"), "environment": Header::current(), "checks": checks })
}

/// Writes the baseline at `path`: the old records, with every check that
/// measured (verdict other than error) replaced by its new figures. Checks
/// not run (left out by a filter) keep their records unchanged; checks that
/// errored are refused and keep theirs. Returns a one-line summary.
///
/// Recorded checks the file no longer plans (`unplanned`) keep their
/// records too, and the summary names them with why; so do long runs that
/// the budget shortened ([`run_notes`]).
pub fn record(
    path: &Path,
    old: Option<&Baseline>,
    outcomes: &[CheckOutcome],
    unplanned: &[Unplanned],
) -> Result<String, BaselineError> {
    let mut checks: BTreeMap<_, _> = old.map(|b| b.checks.clone()).unwrap_or_default();
    let (mut written, mut refused) = (0, Vec::new());
    for o in outcomes {
        match (&o.judgement.verdict, &o.record) {
            (Verdict::Error(_), _) | (_, None) => refused.push(o.name.as_str()),
            (_, Some(r)) => {
                checks.insert(o.name.clone(), r.clone());
                written += 1;
            }
        }
    }
    let kept = checks.len() - written;
    Baseline::new(checks).write_atomic(path)?;
    let mut line = format!(
        "drift: recorded {written} checks to {} ({kept} kept unchanged)",
        path.display()
    );
    if !refused.is_empty() {
        line.push_str(&format!(
            "; not recorded because they failed to measure: {}",
            refused.join(", ")
        ));
    }
    let mut lines = vec![line];
    lines.extend(run_notes(path, outcomes, unplanned));
    Ok(lines.join("\n"))
}

/// Notes after any run, recording or not: each recorded check that the
/// file no longer plans, with why (its record stays in the baseline), and
/// each long run that the step budget shortened, with the horizon run and
/// the one asked for.
///
/// ```
/// use std::path::Path;
/// use drift::harness::output::run_notes;
/// use drift::spec::Unplanned;
/// let gone = [Unplanned { name: "rk4/kepler".into(), reason: "left out by `skip`".into() }];
/// let notes = run_notes(Path::new("drift-baseline.toml"), &[], &gone);
/// assert_eq!(notes.len(), 1);
/// assert!(notes[0].contains("rk4/kepler (left out by `skip`)"), "{}", notes[0]);
/// assert!(run_notes(Path::new("b.toml"), &[], &[]).is_empty());
/// ```
pub fn run_notes(
    baseline: &Path,
    outcomes: &[CheckOutcome],
    unplanned: &[Unplanned],
) -> Vec<String> {
    let mut lines = Vec::new();
    if !unplanned.is_empty() {
        let named: Vec<String> = unplanned
            .iter()
            .map(|u| format!("{} ({})", u.name, u.reason))
            .collect();
        lines.push(format!(
            "drift: {} recorded checks in {} are no longer planned and keep their records: {}; delete their tables if they are gone for good",
            unplanned.len(),
            baseline.display(),
            named.join(", ")
        ));
    }
    for o in outcomes {
        let runs = o.record.as_ref().map(|r| r.runs);
        if let Some((run, asked, n)) = runs.and_then(|r| {
            let (run, asked) = r.shortened()?;
            Some((run, asked, r.long_run?.steps_per_unit))
        }) {
            lines.push(format!(
                "drift: {}: the long run was shortened to {run} of {asked} time units (at {n} steps per unit the step budget does not hold the whole horizon); raise `budget` to run it whole",
                o.name
            ));
        }
    }
    lines
}

/// A reminder after a run when checks have no record yet or improved, naming
/// them and the command that records them, followed by the [`run_notes`];
/// `None` when there is nothing to say.
pub fn notes(
    baseline: &Path,
    outcomes: &[CheckOutcome],
    unplanned: &[Unplanned],
) -> Option<String> {
    let named = |v: &str| -> Vec<&str> {
        outcomes
            .iter()
            .filter(|o| o.judgement.verdict.name() == v)
            .map(|o| o.name.as_str())
            .collect()
    };
    let (new, improved) = (named("new"), named("improved"));
    let mut lines = Vec::new();
    if !new.is_empty() {
        lines.push(format!(
            "drift: {} checks have no record in {} yet: {}",
            new.len(),
            baseline.display(),
            new.join(", ")
        ));
    }
    if !improved.is_empty() {
        lines.push(format!(
            "drift: {} checks improved on their record: {}",
            improved.len(),
            improved.join(", ")
        ));
    }
    if !lines.is_empty() {
        lines.push("drift: record them with `DRIFT_RECORD=1 cargo test --test drift` and review the change".into());
    }
    lines.extend(run_notes(baseline, outcomes, unplanned));
    (!lines.is_empty()).then(|| lines.join("\n"))
}

/// The JSON document of the planned checks (`DRIFT_PLAN`), format 1:
/// `{ "format": 1, "baseline": path, "checks": [ { "name", "stepper", "kind", "problem",
/// "ladder", "recorded" } ] }`, where `ladder` describes what will run (the
/// recorded ladder repeats when the plan's is automatic) and `recorded` says
/// whether the baseline has the check.
pub fn plan_document(plans: &[Plan], baseline: Option<&Baseline>, baseline_path: &Path) -> Value {
    let checks: Vec<Value> = plans
        .iter()
        .map(|p| {
            let recorded = baseline.and_then(|b| b.checks.get(&p.name));
            let ladder = match (&p.config.ladder, recorded.map(|r| &r.ladder)) {
                (
                    Ladder::Auto { .. } | Ladder::AutoTolerances { .. },
                    Some(LadderRecord::Steps(s)),
                ) => describe_steps("recorded", s),
                (Ladder::AutoTolerances { .. }, Some(LadderRecord::Tolerances(t))) => {
                    describe_tolerances("recorded", t)
                }
                (Ladder::AutoTolerances { .. }, None) => {
                    "automatic tolerances from 1e-2".to_string()
                }
                (Ladder::Auto { start, .. }, _) => {
                    format!("automatic from {start} steps per period")
                }
                (Ladder::Steps(s), _) => describe_steps("fixed", s),
                (Ladder::Tolerances(t), _) => describe_tolerances("fixed", t),
            };
            json!({ "name": p.name, "stepper": p.stepper, "kind": p.kind.name(),
                    "problem": p.problem.name(), "ladder": ladder, "recorded": recorded.is_some() })
        })
        .collect();
    json!({ "format": JSON_FORMAT, "baseline": baseline_path, "checks": checks })
}

fn describe_tolerances(what: &str, t: &[f64]) -> String {
    match (t.first(), t.last()) {
        (Some(a), Some(b)) => format!("{what}: {} tolerances {a:e} .. {b:e}", t.len()),
        _ => format!("{what}: no tolerances"),
    }
}

fn describe_steps(what: &str, steps: &[u64]) -> String {
    match (steps.first(), steps.last()) {
        (Some(a), Some(b)) => format!("{what}: {} rungs, {a} .. {b} steps per period", steps.len()),
        _ => format!("{what}: empty"),
    }
}
