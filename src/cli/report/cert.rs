//! The certificate behind `cargo drift report`: per package and stepper,
//! each claim with its verdict and evidence, and per check the table of
//! figures (digits per rung, order with its fit range, floor, invariants,
//! drift, evaluations, adaptive error against tolerance). Built from the
//! harnesses' JSON documents; serialised as the report's JSON (layout in
//! `docs/report.schema.json`).

use serde::{Deserialize, Serialize};

use crate::baseline::{CheckRecord, Header};
use crate::claims::{Claims, EnergyClaim};
use crate::cli::model::{CheckResult, PackageOutcome, PackageRun};
use crate::harness::detail::LongRunDetail;
use crate::measure::Basis;
use crate::metrics::RungClass;

/// Version of the report's JSON layout.
pub const REPORT_FORMAT: u32 = 1;

/// What a pass means; printed in every form of the report.
pub const CAUTION: &str = "A pass is numerical verification of a stepper on reference problems \
with known answers, not validation of a physical model. For safety-relevant work, defer to the \
applicable verification-and-validation standards and to licensed engineering judgment.";

/// The measured code's revision.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Source {
    /// The commit checked out (`None` outside a git repository).
    pub commit: Option<String>,
    /// Whether the working tree had uncommitted changes.
    pub dirty: bool,
}

/// The whole report.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Certificate {
    /// Layout version ([`REPORT_FORMAT`]).
    pub format: u32,
    /// cargo-drift version that wrote the report.
    pub tool: String,
    /// When the measurements were taken (UTC, RFC 3339).
    pub generated: String,
    /// The revision measured.
    pub source: Source,
    /// What a pass means ([`CAUTION`]).
    pub caution: String,
    /// Every package checked.
    pub packages: Vec<PackageCert>,
}

/// One package.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PackageCert {
    /// Package name.
    pub name: String,
    /// `checked`, or how its harness failed.
    pub status: String,
    /// Why it was not checked, when it was not.
    pub message: Option<String>,
    /// Where it was measured (from the harness).
    pub environment: Option<Header>,
    /// Its steppers, by name.
    pub steppers: Vec<StepperCert>,
    /// File name of the work-precision plot, when drawn.
    pub work_precision_plot: Option<String>,
}

/// One stepper.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct StepperCert {
    /// Its registered name.
    pub name: String,
    /// `stepper`, `split-stepper` or `integrator`.
    pub kind: String,
    /// The claims of drift.toml.
    pub claimed: Claims,
    /// Each claim with its verdict over the checks.
    pub claims: Vec<ClaimVerdict>,
    /// `holds` (every claim), `violated` (some claim), `no claims`, or
    /// `error` (some check could not be measured).
    pub verdict: String,
    /// Its checks, by name.
    pub checks: Vec<CheckCert>,
    /// File name of the convergence plot, when drawn.
    pub convergence_plot: Option<String>,
    /// File name of the invariant-error plot, when drawn.
    pub invariant_plot: Option<String>,
}

/// One check's evidence for a claim.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Evidence {
    /// The check.
    pub check: String,
    /// The measured figure.
    pub measured: Option<f64>,
    /// The criterion in words.
    pub criterion: String,
    /// Whether it holds there.
    pub holds: bool,
}

/// A claim over every check of the stepper.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ClaimVerdict {
    /// `order`, `energy drift`, `reversible` or `floor`.
    pub claim: String,
    /// What drift.toml states.
    pub stated: String,
    /// `holds` or `violated`.
    pub verdict: String,
    /// Per check.
    pub evidence: Vec<Evidence>,
}

/// One rung of a check.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RungCert {
    /// `64/unit` or `tol 1e-6`.
    pub label: String,
    /// Fixed steps per time unit.
    pub steps_per_unit: Option<u64>,
    /// Requested tolerance.
    pub tolerance: Option<f64>,
    /// Accepted steps over the horizon.
    pub steps: Option<u64>,
    /// Right-hand-side evaluations over the horizon.
    pub evals: Option<u64>,
    /// Rejected steps.
    pub rejected: Option<u64>,
    /// Solution digits.
    pub digits: Option<f64>,
    /// How the order fit read the rung: `pre`, `fit`, `near-floor`, `floor`,
    /// `plateau`, `none`.
    pub class: RungClass,
    /// Achieved error against requested tolerance (adaptive rungs with an
    /// exact solution): `10^-digits / tolerance`.
    pub error_over_tolerance: Option<f64>,
}

/// The order fit of a check.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct OrderCert {
    /// Fitted order.
    pub order: f64,
    /// Residual of the fit (digits, root mean square).
    pub residual: f64,
    /// First fitted rung (label).
    pub from: String,
    /// Last fitted rung (label).
    pub to: String,
}

/// One invariant of a check.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct InvariantCert {
    /// Its name.
    pub name: String,
    /// Best digits over the ladder.
    pub best_digits: Option<f64>,
    /// Order of its error over the ladder.
    pub order: Option<f64>,
    /// Drift class forward in time.
    pub drift_forward: Option<String>,
    /// Drift exponent forward in time.
    pub drift_forward_exponent: Option<f64>,
    /// Drift class backward in time.
    pub drift_backward: Option<String>,
    /// Drift exponent backward in time.
    pub drift_backward_exponent: Option<f64>,
}

/// One check.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CheckCert {
    /// `stepper/problem[:tag]`.
    pub name: String,
    /// The problem.
    pub problem: String,
    /// Verdict against the baseline and claims.
    pub verdict: String,
    /// Why it could not be measured.
    pub error: Option<String>,
    /// Errors against the exact solution, or by self-convergence.
    pub basis: Option<Basis>,
    /// Length of each rung's run in time units.
    pub horizon: Option<f64>,
    /// Whether the time unit is the exact period.
    pub periodic: bool,
    /// The ladder.
    pub rungs: Vec<RungCert>,
    /// The order fit.
    pub order: Option<OrderCert>,
    /// Best solution digits.
    pub best_digits: Option<f64>,
    /// Rung of the best digits.
    pub best_at: Option<String>,
    /// First rung on the roundoff floor.
    pub floor_from: Option<String>,
    /// First rung of a plateau (a consistency error).
    pub plateau_from: Option<String>,
    /// Evaluations per step on the finest rung.
    pub evals_per_step: Option<f64>,
    /// Invariants.
    pub invariants: Vec<InvariantCert>,
    /// Digits of the period.
    pub period_digits: Option<f64>,
    /// Digits of the virial residual.
    pub virial_digits: Option<f64>,
    /// Digits of forward-then-backward reversibility.
    pub reversibility_digits: Option<f64>,
    /// The long run's invariant error against time.
    pub long_run: Option<LongRunDetail>,
}

impl CheckCert {
    /// Whether the rungs ran at tolerances (an adaptive integrator).
    pub fn adaptive(&self) -> bool {
        self.rungs.iter().any(|r| r.tolerance.is_some())
    }

    /// The check's name without its stepper: `pendulum:wide-swing`.
    pub fn problem_label(&self) -> String {
        self.name
            .split_once('/')
            .map_or(self.name.clone(), |(_, rest)| rest.to_string())
    }
}

/// The claim a claim row speaks for: `claim: order (plateau @3)` is `order`.
fn claim_key(metric: &str) -> Option<&str> {
    let rest = metric.strip_prefix("claim: ")?;
    Some(rest.split(" (").next().unwrap_or(rest))
}

fn energy_name(e: EnergyClaim) -> &'static str {
    match e {
        EnergyClaim::Bounded => "bounded",
        EnergyClaim::RandomWalk => "random-walk",
        EnergyClaim::Linear => "linear",
    }
}

/// What drift.toml states for `claim`.
fn stated(claimed: &Claims, claim: &str) -> String {
    match claim {
        "order" => claimed.order.map_or("-".into(), |o| format!("order {o}")),
        "energy drift" => claimed
            .energy
            .map_or("-".into(), |e| format!("energy {}", energy_name(e))),
        "reversible" => "reversible".into(),
        "floor" => claimed
            .floor
            .map_or("-".into(), |f| format!("at least {f} digits")),
        other => other.into(),
    }
}

/// The order claims are listed in: as drift.toml documents them.
const CLAIM_ORDER: [&str; 4] = ["order", "energy drift", "reversible", "floor"];

/// Gathers the claim rows of every check into one verdict per claim, in
/// [`CLAIM_ORDER`].
fn claim_verdicts(claimed: &Claims, checks: &[&CheckResult]) -> Vec<ClaimVerdict> {
    let mut out: Vec<ClaimVerdict> = Vec::new();
    for c in checks {
        for row in &c.claims {
            let Some(key) = claim_key(&row.metric) else {
                continue;
            };
            let evidence = Evidence {
                check: c.name.clone(),
                measured: row.now,
                criterion: row.allowed.clone(),
                holds: row.status != "violated",
            };
            match out.iter_mut().find(|v| v.claim == key) {
                Some(v) => v.evidence.push(evidence),
                None => out.push(ClaimVerdict {
                    claim: key.to_string(),
                    stated: stated(claimed, key),
                    verdict: String::new(),
                    evidence: vec![evidence],
                }),
            }
        }
    }
    out.sort_by_key(|v| {
        CLAIM_ORDER
            .iter()
            .position(|c| *c == v.claim)
            .unwrap_or(CLAIM_ORDER.len())
    });
    for v in &mut out {
        v.verdict = if v.evidence.iter().all(|e| e.holds) {
            "holds".into()
        } else {
            "violated".into()
        };
    }
    out
}

fn rungs(record: &CheckRecord, result: &CheckResult) -> Vec<RungCert> {
    let detail = result.detail.as_ref();
    (0..record.ladder.len())
        .map(|k| {
            let d = detail.and_then(|d| d.rungs.get(k));
            let digits = record.digits.get(k).copied().flatten();
            let tolerance = d.and_then(|d| d.tolerance);
            let exact = record.basis == Basis::Exact;
            let error_over_tolerance = match (tolerance, digits, exact) {
                (Some(tol), Some(dg), true) if tol > 0.0 => Some(10f64.powf(-dg) / tol),
                _ => None,
            };
            RungCert {
                label: record.ladder.label(k),
                steps_per_unit: d.and_then(|d| d.steps_per_unit),
                tolerance,
                steps: d.map(|d| d.steps),
                evals: d.map(|d| d.evals),
                rejected: d.map(|d| d.rejected),
                digits,
                class: record.classes.get(k).copied().unwrap_or(RungClass::Missing),
                error_over_tolerance,
            }
        })
        .collect()
}

fn check_cert(result: &CheckResult) -> CheckCert {
    let record: Option<CheckRecord> = result
        .figures
        .clone()
        .and_then(|v| serde_json::from_value(v).ok());
    let detail = result.detail.as_ref();
    let mut cert = CheckCert {
        name: result.name.clone(),
        problem: result.problem.clone(),
        verdict: result.verdict.clone(),
        error: result.error.clone(),
        basis: None,
        horizon: detail.map(|d| d.horizon),
        periodic: detail.is_some_and(|d| d.periodic),
        rungs: Vec::new(),
        order: None,
        best_digits: None,
        best_at: None,
        floor_from: None,
        plateau_from: None,
        evals_per_step: None,
        invariants: Vec::new(),
        period_digits: None,
        virial_digits: None,
        reversibility_digits: None,
        long_run: detail.and_then(|d| d.long_run.clone()),
    };
    let Some(r) = record else {
        return cert;
    };
    let label = |k: usize| r.ladder.label(k);
    cert.basis = Some(r.basis);
    cert.rungs = rungs(&r, result);
    cert.order = r.fit.map(|f| OrderCert {
        order: f.order,
        residual: f.residual,
        from: label(f.first),
        to: label(f.last),
    });
    cert.best_digits = r.best.map(|b| b.digits);
    cert.best_at = r.best.map(|b| label(b.rung));
    cert.floor_from = r.floor_from.map(label);
    cert.plateau_from = r.plateau_from.map(label);
    cert.evals_per_step = Some(r.evals_per_step);
    cert.invariants = r
        .invariants
        .iter()
        .map(|(name, inv)| InvariantCert {
            name: name.clone(),
            best_digits: inv.best_digits,
            order: inv.order,
            drift_forward: inv.drift_forward.map(|d| d.class.name().to_string()),
            drift_forward_exponent: inv.drift_forward.map(|d| d.exponent),
            drift_backward: inv.drift_backward.map(|d| d.class.name().to_string()),
            drift_backward_exponent: inv.drift_backward.map(|d| d.exponent),
        })
        .collect();
    cert.period_digits = r.period_digits;
    cert.virial_digits = r.virial_digits;
    cert.reversibility_digits = r.reversibility_digits;
    cert
}

/// The kind of the stepper behind `checks`, from the first measured one.
fn kind(checks: &[&CheckResult]) -> String {
    checks
        .iter()
        .find_map(|c| c.figures.as_ref()?.get("kind")?.as_str().map(String::from))
        .unwrap_or_else(|| "-".into())
}

fn stepper_cert(name: &str, checks: &[&CheckResult]) -> StepperCert {
    let claimed = checks
        .first()
        .map(|c| c.claimed.clone())
        .unwrap_or_default();
    let claims = claim_verdicts(&claimed, checks);
    let verdict = if checks.iter().any(|c| c.verdict == "error") {
        "error"
    } else if claims.is_empty() {
        "no claims"
    } else if claims.iter().all(|c| c.verdict == "holds") {
        "holds"
    } else {
        "violated"
    };
    StepperCert {
        name: name.to_string(),
        kind: kind(checks),
        claimed,
        claims,
        verdict: verdict.into(),
        checks: checks.iter().map(|c| check_cert(c)).collect(),
        convergence_plot: None,
        invariant_plot: None,
    }
}

/// The certificate of one package's run (plots not yet drawn).
pub fn package_cert(run: &PackageRun) -> PackageCert {
    let mut cert = PackageCert {
        name: run.package.clone(),
        status: run.outcome.status().to_string(),
        message: run.outcome.message(),
        environment: None,
        steppers: Vec::new(),
        work_precision_plot: None,
    };
    if let PackageOutcome::Checked(report) = &run.outcome {
        cert.environment = Some(report.environment.clone());
        let mut names: Vec<&str> = report.checks.iter().map(|c| c.stepper.as_str()).collect();
        names.sort_unstable();
        names.dedup();
        cert.steppers = names
            .into_iter()
            .map(|n| {
                let checks: Vec<&CheckResult> =
                    report.checks.iter().filter(|c| c.stepper == n).collect();
                stepper_cert(n, &checks)
            })
            .collect();
    }
    cert
}
