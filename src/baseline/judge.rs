//! Judging a check: its record now against the recorded baseline (within
//! the slack) and against the stepper's claims, giving a [`Verdict`] and the
//! rows of figures that explain it.

use std::fmt;

use super::record::{CheckRecord, DriftRecord};
use crate::claims::{Claims, EnergyClaim, Slack, ORDER_CLAIM_BAND, REVERSIBLE_DIGITS};
use crate::measure::Basis;
use crate::metrics::DriftClass;

/// Differences this small are representation noise of the rounded decimals,
/// not changes (the stored figures have 3 decimals).
const NOISE: f64 = 1e-9;

/// The outcome of one check.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Verdict {
    /// Within the slack of the baseline, and every claim holds.
    Pass,
    /// Better than the baseline by more than the slack somewhere, nothing
    /// worse: passes; re-recording would lock in the gain.
    Improved,
    /// No baseline yet; every claim holds.
    New,
    /// Worse than the baseline by more than the slack.
    Regressed,
    /// A claim of the stepper does not hold.
    ClaimViolated,
    /// The check could not be measured (panic, divergence, timeout).
    Error(String),
}

impl Verdict {
    /// Lower-case name: `pass`, `improved`, `new`, `regressed`,
    /// `claim-violated`, `error`.
    ///
    /// ```
    /// assert_eq!(drift::baseline::Verdict::ClaimViolated.name(), "claim-violated");
    /// ```
    pub fn name(&self) -> &'static str {
        match self {
            Verdict::Pass => "pass",
            Verdict::Improved => "improved",
            Verdict::New => "new",
            Verdict::Regressed => "regressed",
            Verdict::ClaimViolated => "claim-violated",
            Verdict::Error(_) => "error",
        }
    }

    /// Whether the verdict fails the check (regressed, claim-violated, error).
    ///
    /// ```
    /// use drift::baseline::Verdict;
    /// assert!(Verdict::Regressed.fails() && !Verdict::Improved.fails());
    /// ```
    pub fn fails(&self) -> bool {
        matches!(
            self,
            Verdict::Regressed | Verdict::ClaimViolated | Verdict::Error(_)
        )
    }
}

impl fmt::Display for Verdict {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// How one figure fares.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RowStatus {
    /// Within its limit.
    Ok,
    /// Better than the baseline by more than the slack.
    Better,
    /// Worse than the baseline by more than the slack.
    Worse,
    /// A claim does not hold.
    Violated,
}

impl RowStatus {
    /// Lower-case name: `ok`, `better`, `worse`, `violated`.
    ///
    /// ```
    /// assert_eq!(drift::baseline::RowStatus::Worse.name(), "worse");
    /// ```
    pub fn name(self) -> &'static str {
        match self {
            RowStatus::Ok => "ok",
            RowStatus::Better => "better",
            RowStatus::Worse => "worse",
            RowStatus::Violated => "violated",
        }
    }
}

/// One figure compared: its recorded and current value, the limit it was
/// held to, and how it fared. Drift rows carry the fitted exponents as
/// values; their status follows the drift class.
#[derive(Clone, Debug, PartialEq)]
pub struct MetricRow {
    /// What the figure is (e.g. `order`, `digits @ 64/unit`, `claim: order`).
    pub metric: String,
    /// The recorded value.
    pub baseline: Option<f64>,
    /// The value now.
    pub now: Option<f64>,
    /// The limit, in words (e.g. `>= 3.90`).
    pub allowed: String,
    /// How it fared.
    pub status: RowStatus,
}

/// The verdict of a check and the rows worth showing: every row that is
/// better, worse or violated, plus the order and best-digits rows (and a
/// changed ladder) always.
#[derive(Clone, Debug, PartialEq)]
pub struct Judgement {
    /// The verdict.
    pub verdict: Verdict,
    /// The rows.
    pub rows: Vec<MetricRow>,
}

const METRIC_WIDTH: usize = 26;
const VALUE_WIDTH: usize = 8;
const LIMIT_WIDTH: usize = 20;

/// `s` cut to `width` characters, a cut marked with `~`.
pub(crate) fn clip(s: &str, width: usize) -> String {
    if s.chars().count() <= width {
        s.to_string()
    } else {
        let mut out: String = s.chars().take(width.saturating_sub(1)).collect();
        out.push('~');
        out
    }
}

impl Judgement {
    /// The rows as a fixed-width table of at most 78 columns: figure,
    /// recorded value, measured value, limit, status; values to 2 decimals,
    /// `-` where there is none.
    ///
    /// ```
    /// use drift::baseline::{Judgement, MetricRow, RowStatus, Verdict};
    /// let j = Judgement { verdict: Verdict::Regressed, rows: vec![MetricRow {
    ///     metric: "order".into(), baseline: Some(4.0), now: Some(3.7),
    ///     allowed: ">= 3.90".into(), status: RowStatus::Worse }] };
    /// let t = j.table();
    /// assert!(t.lines().nth(1).unwrap().contains("4.00      3.70  >= 3.90"));
    /// assert!(t.lines().all(|l| l.chars().count() <= 80));
    /// ```
    pub fn table(&self) -> String {
        let value = |v: Option<f64>| v.map_or("-".to_string(), |v| format!("{v:.2}"));
        let mut out = format!(
            "{:<mw$}  {:>vw$}  {:>vw$}  {:<lw$}  status\n",
            "figure",
            "recorded",
            "measured",
            "limit",
            mw = METRIC_WIDTH,
            vw = VALUE_WIDTH,
            lw = LIMIT_WIDTH
        );
        for r in &self.rows {
            out.push_str(&format!(
                "{:<mw$}  {:>vw$}  {:>vw$}  {:<lw$}  {}\n",
                clip(&r.metric, METRIC_WIDTH),
                value(r.baseline),
                value(r.now),
                clip(&r.allowed, LIMIT_WIDTH),
                r.status.name(),
                mw = METRIC_WIDTH,
                vw = VALUE_WIDTH,
                lw = LIMIT_WIDTH
            ));
        }
        out
    }
}

/// Rows being collected, each with whether it is shown even when ok.
#[derive(Default)]
struct Rows(Vec<(MetricRow, bool)>);

impl Rows {
    fn push(&mut self, row: MetricRow, always: bool) {
        self.0.push((row, always));
    }

    /// A figure where more is better, against its baseline value with
    /// `slack` either way. A figure that disappeared is worse; one that
    /// appeared is better (re-recording will guard it).
    fn more_is_better(
        &mut self,
        metric: String,
        base: Option<f64>,
        now: Option<f64>,
        slack: f64,
        always: bool,
    ) {
        let status = match (base, now) {
            (Some(b), Some(n)) if n < b - slack - NOISE => RowStatus::Worse,
            (Some(b), Some(n)) if n > b + slack + NOISE => RowStatus::Better,
            (Some(_), None) => RowStatus::Worse,
            (None, Some(_)) => RowStatus::Better,
            _ => RowStatus::Ok,
        };
        let allowed = base.map_or("-".to_string(), |b| format!(">= {:.2}", b - slack));
        self.push(
            MetricRow {
                metric,
                baseline: base,
                now,
                allowed,
                status,
            },
            always,
        );
    }

    /// A drift whose class must not get worse than the baseline's.
    fn drift(&mut self, metric: String, base: Option<DriftRecord>, now: Option<DriftRecord>) {
        let status = match (base, now) {
            (Some(b), Some(n)) if n.class > b.class => RowStatus::Worse,
            (Some(b), Some(n)) if n.class < b.class => RowStatus::Better,
            (Some(_), None) => RowStatus::Worse,
            (None, Some(_)) => RowStatus::Better,
            _ => RowStatus::Ok,
        };
        let allowed = base.map_or("-".to_string(), |b| format!("<= {}", b.class.name()));
        let row = MetricRow {
            metric,
            baseline: base.map(|d| d.exponent),
            now: now.map(|d| d.exponent),
            allowed,
            status,
        };
        self.push(row, false);
    }

    /// A claim row: violated unless `holds`.
    fn claim(&mut self, metric: String, now: Option<f64>, allowed: String, holds: bool) {
        let status = if holds {
            RowStatus::Ok
        } else {
            RowStatus::Violated
        };
        let row = MetricRow {
            metric,
            baseline: None,
            now,
            allowed,
            status,
        };
        self.push(row, false);
    }

    fn any(&self, status: RowStatus) -> bool {
        self.0.iter().any(|(r, _)| r.status == status)
    }
}

/// The drift class an energy claim allows at worst.
fn claimed_class(c: EnergyClaim) -> DriftClass {
    match c {
        EnergyClaim::Bounded => DriftClass::Bounded,
        EnergyClaim::RandomWalk => DriftClass::RandomWalk,
        EnergyClaim::Linear => DriftClass::Linear,
    }
}

/// Rows comparing `now` with its baseline record.
fn compare(now: &CheckRecord, base: &CheckRecord, slack: &Slack, rows: &mut Rows) {
    let order = |r: &CheckRecord| r.fit.map(|f| f.order);
    let best = |r: &CheckRecord| r.best.map(|b| b.digits);
    rows.more_is_better("order".into(), order(base), order(now), slack.order, true);
    rows.more_is_better(
        "best digits".into(),
        best(base),
        best(now),
        slack.digits,
        true,
    );
    if now.ladder != base.ladder {
        let row = MetricRow {
            metric: "ladder changed (rungs)".into(),
            baseline: Some(base.ladder.len() as f64),
            now: Some(now.ladder.len() as f64),
            allowed: "same ladder".into(),
            status: RowStatus::Ok,
        };
        rows.push(row, true);
        return;
    }
    for (k, class) in base.classes.iter().enumerate() {
        if *class == crate::metrics::RungClass::Fitted {
            rows.more_is_better(
                format!("digits @ {}", base.ladder.label(k)),
                base.digits.get(k).copied().flatten(),
                now.digits.get(k).copied().flatten(),
                slack.digits,
                false,
            );
        }
    }
    let plateau = |p: Option<usize>| p.map(|k| k as f64);
    let status = match (base.plateau_from, now.plateau_from) {
        (None, Some(_)) => RowStatus::Worse,
        (Some(b), Some(n)) if n < b => RowStatus::Worse,
        (Some(b), Some(n)) if n > b => RowStatus::Better,
        (Some(_), None) => RowStatus::Better,
        _ => RowStatus::Ok,
    };
    let allowed = base
        .plateau_from
        .map_or("none".to_string(), |k| format!("from rung >= {k}"));
    let row = MetricRow {
        metric: "plateau (first rung)".into(),
        baseline: plateau(base.plateau_from),
        now: plateau(now.plateau_from),
        allowed,
        status,
    };
    rows.push(row, false);
    for (name, b) in &base.invariants {
        let n = now.invariants.get(name);
        rows.more_is_better(
            format!("{name} best digits"),
            b.best_digits,
            n.and_then(|n| n.best_digits),
            slack.invariant_digits,
            false,
        );
        rows.drift(
            format!("{name} drift fwd"),
            b.drift_forward,
            n.and_then(|n| n.drift_forward),
        );
    }
    let figures = [
        (
            "period digits",
            base.period_digits,
            now.period_digits,
            slack.period_digits,
        ),
        (
            "virial digits",
            base.virial_digits,
            now.virial_digits,
            slack.period_digits,
        ),
        (
            "reversibility digits",
            base.reversibility_digits,
            now.reversibility_digits,
            slack.reversibility_digits,
        ),
    ];
    for (metric, b, n, s) in figures {
        rows.more_is_better(metric.into(), b, n, s, false);
    }
}

/// Rows checking `now` against the stepper's claims.
fn check_claims(now: &CheckRecord, claims: &Claims, rows: &mut Rows) {
    if let Some(c) = claims.order {
        let least = c - ORDER_CLAIM_BAND;
        let measured = now.fit.map(|f| f.order);
        let holds = measured.is_some_and(|o| o >= least) && now.plateau_from.is_none();
        let metric = match now.plateau_from {
            Some(k) => format!("claim: order (plateau @{k})"),
            None => "claim: order".to_string(),
        };
        rows.claim(
            metric,
            measured,
            format!(">= {least:.2}, no plateau"),
            holds,
        );
    }
    if let (Some(c), Some(energy)) = (claims.energy, now.invariants.get("energy")) {
        let worst = claimed_class(c);
        let drift = energy.drift_forward;
        let holds = drift.is_some_and(|d| d.class <= worst);
        let allowed = match drift {
            Some(d) => format!("<= {} (is {})", worst.name(), d.class.name()),
            None => format!("<= {} (unmeasured)", worst.name()),
        };
        rows.claim(
            "claim: energy drift".into(),
            drift.map(|d| d.exponent),
            allowed,
            holds,
        );
    }
    if claims.reversible == Some(true) {
        let d = now.reversibility_digits;
        let holds = d.is_some_and(|d| d >= REVERSIBLE_DIGITS);
        rows.claim(
            "claim: reversible".into(),
            d,
            format!(">= {REVERSIBLE_DIGITS:.2}"),
            holds,
        );
    }
    if let (Some(floor), Basis::Exact) = (claims.floor, now.basis) {
        let d = now.best.map(|b| b.digits);
        let holds = d.is_some_and(|d| d >= floor);
        rows.claim("claim: floor".into(), d, format!(">= {floor:.2}"), holds);
    }
}

/// Every claim row of `now` against `claims`, holding or not (a report
/// lists them all; a judgement shows only the violated ones).
///
/// ```
/// use drift::baseline::{claim_rows, CheckRecord, LadderRecord, RowStatus};
/// use drift::claims::Claims;
/// use drift::measure::{Basis, MethodKind};
/// use drift::metrics::{OrderFit, RungClass};
/// let r = CheckRecord {
///     kind: MethodKind::Fixed, basis: Basis::Exact,
///     ladder: LadderRecord::Steps(vec![16, 32]), digits: vec![Some(2.0), Some(3.2)],
///     classes: vec![RungClass::Fitted; 2],
///     fit: Some(OrderFit { order: 3.99, residual: 0.0, first: 0, last: 1 }),
///     best: None, plateau_from: None, floor_from: None, evals_per_step: 4.0,
///     invariants: Default::default(), period_digits: None, virial_digits: None,
///     reversibility_digits: None, diverged_at: None, runs: Default::default(),
/// };
/// let rows = claim_rows(&r, &Claims { order: Some(4.0), ..Claims::default() });
/// assert_eq!(rows.len(), 1);
/// assert_eq!(rows[0].status, RowStatus::Ok);
/// ```
pub fn claim_rows(now: &CheckRecord, claims: &Claims) -> Vec<MetricRow> {
    let mut rows = Rows::default();
    check_claims(now, claims, &mut rows);
    rows.0.into_iter().map(|(r, _)| r).collect()
}

/// Judges the record of a check now against its baseline record (if any),
/// the stepper's claims and the slack (DEVELOPERS.md, "Baseline file
/// format", gives the rules).
///
/// Verdict precedence: a divergence is an error; else any violated claim
/// is claim-violated; else any worse row is regressed; else with no
/// baseline new; else any better row is improved; else pass.
///
/// ```
/// use drift::baseline::{judge, CheckRecord, LadderRecord, Verdict};
/// use drift::claims::{Claims, Slack};
/// use drift::measure::{Basis, MethodKind};
/// use drift::metrics::{Best, OrderFit, RungClass};
/// let r = CheckRecord {
///     kind: MethodKind::Fixed, basis: Basis::Exact,
///     ladder: LadderRecord::Steps(vec![16, 32, 64]),
///     digits: vec![Some(2.0), Some(3.2), Some(4.4)], classes: vec![RungClass::Fitted; 3],
///     fit: Some(OrderFit { order: 4.0, residual: 0.0, first: 0, last: 2 }),
///     best: Some(Best { digits: 4.4, rung: 2 }), plateau_from: None, floor_from: None,
///     evals_per_step: 4.0, invariants: Default::default(), period_digits: None,
///     virial_digits: None, reversibility_digits: None, diverged_at: None,
///     runs: Default::default(),
/// };
/// let claims = Claims { order: Some(4.0), ..Claims::default() };
/// assert_eq!(judge(&r, Some(&r), &claims, &Slack::default()).verdict, Verdict::Pass);
/// assert_eq!(judge(&r, None, &claims, &Slack::default()).verdict, Verdict::New);
/// ```
pub fn judge(
    now: &CheckRecord,
    baseline: Option<&CheckRecord>,
    claims: &Claims,
    slack: &Slack,
) -> Judgement {
    let mut rows = Rows::default();
    match baseline {
        Some(base) => compare(now, base, slack, &mut rows),
        None => {
            let info = |metric: &str, now: Option<f64>| MetricRow {
                metric: metric.into(),
                baseline: None,
                now,
                allowed: "-".into(),
                status: RowStatus::Ok,
            };
            rows.push(info("order", now.fit.map(|f| f.order)), true);
            rows.push(info("best digits", now.best.map(|b| b.digits)), true);
        }
    }
    check_claims(now, claims, &mut rows);
    let verdict = if let Some(t) = now.diverged_at {
        Verdict::Error(format!("the method diverged at t = {t}"))
    } else if rows.any(RowStatus::Violated) {
        Verdict::ClaimViolated
    } else if rows.any(RowStatus::Worse) {
        Verdict::Regressed
    } else if baseline.is_none() {
        Verdict::New
    } else if rows.any(RowStatus::Better) {
        Verdict::Improved
    } else {
        Verdict::Pass
    };
    let rows = rows
        .0
        .into_iter()
        .filter(|(r, always)| *always || r.status != RowStatus::Ok)
        .map(|(r, _)| r)
        .collect();
    Judgement { verdict, rows }
}
