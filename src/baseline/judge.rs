//! Judging a check: its record now against the recorded baseline (within
//! the slack) and against the stepper's claims, giving a [`Verdict`] and the
//! rows of figures that explain it.

use std::fmt;

use super::record::{CheckRecord, DriftRecord, InvariantRecord};
use crate::claims::{Claims, EnergyClaim, Slack, ORDER_CLAIM_BAND, REVERSIBLE_DIGITS};
use crate::measure::Basis;
use crate::measure::RunAt;
use crate::metrics::{
    rounding_uncertainty, roundoff_digits, DriftClass, FitStatus, OrderFit, RungClass, FLOOR_BAND,
};

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
    /// A claim cannot be measured on this check (the limit column says
    /// why); it neither holds nor fails here.
    Unmeasured,
}

impl RowStatus {
    /// Lower-case name: `ok`, `better`, `worse`, `violated`, `unmeasured`.
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
            RowStatus::Unmeasured => "unmeasured",
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

/// A figure to 2 decimals, `-` when absent.
pub(crate) fn figure(v: Option<f64>) -> String {
    v.map_or_else(|| "-".to_string(), |v| format!("{v:.2}"))
}

/// The five cells of a figures row: figure, recorded, measured (2
/// decimals, `-` when absent), limit, status.
pub(crate) fn row_cells(
    metric: &str,
    baseline: Option<f64>,
    now: Option<f64>,
    allowed: &str,
    status: &str,
) -> [String; 5] {
    [
        metric.to_string(),
        figure(baseline),
        figure(now),
        allowed.to_string(),
        status.to_string(),
    ]
}

/// Lines of a figures table: figure, recorded, measured, limit, status.
/// Columns are as wide as their widest cell, so no label or limit is cut.
pub(crate) fn row_lines(cells: &[[String; 5]]) -> Vec<String> {
    let head = [
        "figure".to_string(),
        "recorded".into(),
        "measured".into(),
        "limit".into(),
        "status".into(),
    ];
    let width = |c: usize| {
        std::iter::once(&head)
            .chain(cells)
            .map(|r| r[c].chars().count())
            .max()
            .unwrap_or(0)
    };
    let w: Vec<usize> = (0..4).map(width).collect();
    std::iter::once(&head)
        .chain(cells)
        .map(|r| {
            format!(
                "{:<w0$}  {:>w1$}  {:>w2$}  {:<w3$}  {}",
                r[0],
                r[1],
                r[2],
                r[3],
                r[4],
                w0 = w[0],
                w1 = w[1],
                w2 = w[2],
                w3 = w[3]
            )
            .trim_end()
            .to_string()
        })
        .collect()
}

impl Judgement {
    /// The rows as a table: figure, recorded value, measured value, limit,
    /// status; values to 2 decimals, `-` where there is none. Columns are
    /// as wide as their widest cell.
    ///
    /// ```
    /// use drift::baseline::{Judgement, MetricRow, RowStatus, Verdict};
    /// let j = Judgement { verdict: Verdict::Regressed, rows: vec![MetricRow {
    ///     metric: "angular_momentum best digits".into(), baseline: Some(4.0), now: Some(3.7),
    ///     allowed: ">= 3.90".into(), status: RowStatus::Worse }] };
    /// let t = j.table();
    /// assert!(t.lines().nth(1).unwrap().starts_with("angular_momentum best digits      4.00      3.70  >= 3.90"));
    /// ```
    pub fn table(&self) -> String {
        let cells: Vec<[String; 5]> = self
            .rows
            .iter()
            .map(|r| row_cells(&r.metric, r.baseline, r.now, &r.allowed, r.status.name()))
            .collect();
        let mut out = row_lines(&cells).join("\n");
        out.push('\n');
        out
    }
}

/// Rows being collected, each with whether it is shown even when ok.
#[derive(Default)]
struct Rows(Vec<(MetricRow, bool)>);

/// A figure with the uncertainty its own data give it.
#[derive(Clone, Copy, Debug)]
struct Reading {
    value: f64,
    uncertainty: f64,
}

impl Reading {
    fn exact(value: f64) -> Reading {
        Reading {
            value,
            uncertainty: 0.0,
        }
    }
}

impl Rows {
    fn push(&mut self, row: MetricRow, always: bool) {
        self.0.push((row, always));
    }

    /// A figure where more is better, against its baseline value. It moves
    /// when it differs by more than `slack` plus the root-sum-square of
    /// the two readings' uncertainties. A figure that disappeared is worse;
    /// one that appeared is better (re-recording will guard it).
    fn more_is_better(
        &mut self,
        metric: String,
        base: Option<Reading>,
        now: Option<Reading>,
        slack: f64,
        always: bool,
    ) {
        let margin = |b: Reading, n: Option<Reading>| {
            slack + b.uncertainty.hypot(n.map_or(0.0, |n| n.uncertainty))
        };
        let status = match (base, now) {
            (Some(b), Some(n)) if n.value < b.value - margin(b, Some(n)) - NOISE => {
                RowStatus::Worse
            }
            (Some(b), Some(n)) if n.value > b.value + margin(b, Some(n)) + NOISE => {
                RowStatus::Better
            }
            (Some(_), None) => RowStatus::Worse,
            (None, Some(_)) => RowStatus::Better,
            _ => RowStatus::Ok,
        };
        let allowed = base.map_or("-".to_string(), |b| {
            format!(">= {:.2}", b.value - margin(b, now))
        });
        self.push(
            MetricRow {
                metric,
                baseline: base.map(|b| b.value),
                now: now.map(|n| n.value),
                allowed,
                status,
            },
            always,
        );
    }

    /// A drift whose growth must not get worse than the baseline's: worse
    /// when its class is worse and its exponent rose by more than `slack`
    /// (an exponent near a class boundary moves across it under rounding).
    /// Values are the exponents; the limit is an exponent too.
    fn drift(
        &mut self,
        metric: String,
        (base, now): (Option<DriftRecord>, Option<DriftRecord>),
        slack: f64,
        roundoff: f64,
    ) {
        let limit = |b: DriftRecord| (b.exponent + slack).max(b.class.upper_exponent());
        // Kept to roundoff on both sides: the drift is rounding's alone.
        let at_roundoff = |d: Option<DriftRecord>| {
            d.and_then(|d| d.digits)
                .is_some_and(|x| x >= roundoff - FLOOR_BAND)
        };
        if at_roundoff(base) && at_roundoff(now) {
            let row = MetricRow {
                metric,
                baseline: base.map(|d| d.exponent),
                now: now.map(|d| d.exponent),
                allowed: "not judged: kept to roundoff".into(),
                status: RowStatus::Ok,
            };
            self.push(row, false);
            return;
        }
        let status = match (base, now) {
            (Some(b), Some(n)) if n.class > b.class && n.exponent > limit(b) => RowStatus::Worse,
            (Some(b), Some(n)) if n.class < b.class && n.exponent < b.exponent - slack => {
                RowStatus::Better
            }
            (Some(_), None) => RowStatus::Worse,
            (None, Some(_)) => RowStatus::Better,
            _ => RowStatus::Ok,
        };
        let allowed = base.map_or("-".to_string(), |b| {
            format!("<= {:.2} (was {})", limit(b), b.class.name())
        });
        let row = MetricRow {
            metric,
            baseline: base.map(|d| d.exponent),
            now: now.map(|d| d.exponent),
            allowed,
            status,
        };
        self.push(row, false);
    }

    /// A claim row with its status.
    fn claim(&mut self, metric: &str, now: Option<f64>, allowed: String, status: RowStatus) {
        let row = MetricRow {
            metric: metric.to_string(),
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

/// The random-walk roundoff level of a run (digits), or infinity when the
/// run is unknown (nothing counts as roundoff then).
fn run_roundoff(at: Option<RunAt>) -> f64 {
    at.map_or(f64::INFINITY, |a| roundoff_digits(run_steps(a)))
}

/// The steps of a run in one direction.
fn run_steps(at: RunAt) -> u64 {
    at.steps_per_unit
        .saturating_mul(at.periods.max(1.0).round() as u64)
}

/// The best digits of a record as a reading.
fn best_reading(r: &CheckRecord) -> Option<Reading> {
    r.best.map(|b| Reading {
        value: b.digits,
        uncertainty: b.uncertainty,
    })
}

/// Why an order is not gated, if it is not: a converging reading on
/// either side (named with its finest local slope, interval and the rungs
/// it was read over), or no
/// reading on one side. The digits of every rung and the claims still
/// judge the check.
fn ungated(base: &CheckRecord, now: &CheckRecord) -> Option<String> {
    let converging = |r: &CheckRecord| {
        r.fit
            .filter(|f| f.status == FitStatus::Converging)
            .map(|f| {
                format!(
                    "{:.2} in [{:.2}, {:.2}], {}..{}",
                    f.order,
                    f.low,
                    f.high,
                    r.ladder.label(f.first),
                    r.ladder.label(f.last)
                )
            })
    };
    match (converging(base), converging(now)) {
        (_, Some(n)) => Some(format!("not gated: converging, {n}")),
        (Some(b), None) => Some(format!("not gated: recorded converging, {b}")),
        _ if base.fit.is_none() || now.fit.is_none() => {
            Some("not gated: no reading on one side".into())
        }
        _ => None,
    }
}

/// The order row: judged against its interval, or shown and not gated
/// when either reading never reached its asymptotic range (the digits of
/// every rung are judged instead).
fn order_row(now: &CheckRecord, base: &CheckRecord, slack: &Slack, rows: &mut Rows) {
    let reading = |f: &OrderFit| Reading {
        value: f.order,
        uncertainty: f.uncertainty(),
    };
    match ungated(base, now) {
        Some(why) => {
            let row = MetricRow {
                metric: "order".into(),
                baseline: base.fit.map(|f| f.order),
                now: now.fit.map(|f| f.order),
                allowed: why,
                status: RowStatus::Ok,
            };
            rows.push(row, true);
        }
        None => rows.more_is_better(
            "order".into(),
            base.fit.as_ref().map(reading),
            now.fit.as_ref().map(reading),
            slack.order,
            true,
        ),
    }
}

/// The plateau row: a plateau that appears or starts earlier is worse.
fn plateau_row(now: &CheckRecord, base: &CheckRecord, rows: &mut Rows) {
    let status = match (base.plateau_from, now.plateau_from) {
        (None, Some(_)) => RowStatus::Worse,
        (Some(b), Some(n)) if n < b => RowStatus::Worse,
        (Some(b), Some(n)) if n > b => RowStatus::Better,
        (Some(_), None) => RowStatus::Better,
        _ => RowStatus::Ok,
    };
    let at = |k: Option<usize>| {
        k.map_or("none".to_string(), |k| {
            format!("from {}", base.ladder.label(k))
        })
    };
    let row = MetricRow {
        metric: "plateau".into(),
        baseline: None,
        now: None,
        allowed: format!("{} (now {})", at(base.plateau_from), at(now.plateau_from)),
        status,
    };
    rows.push(row, false);
}

/// Rows comparing `now` with its baseline record.
fn compare(now: &CheckRecord, base: &CheckRecord, slack: &Slack, rows: &mut Rows) {
    order_row(now, base, slack, rows);
    rows.more_is_better(
        "best digits".into(),
        best_reading(base),
        best_reading(now),
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
    // Every rung truncation error decides (not at or near the floor) is
    // stable under rewrites that only change rounding.
    for (k, class) in base.classes.iter().enumerate() {
        let rounding = matches!(
            class,
            RungClass::NearFloor | RungClass::Floor | RungClass::Missing | RungClass::Dip
        );
        if !rounding {
            rows.more_is_better(
                format!("digits @ {}", base.ladder.label(k)),
                base.digits.get(k).copied().flatten().map(Reading::exact),
                now.digits.get(k).copied().flatten().map(Reading::exact),
                slack.digits,
                false,
            );
        }
    }
    plateau_row(now, base, rows);
    for (name, b) in &base.invariants {
        let n = now.invariants.get(name);
        let best = |r: &InvariantRecord| {
            r.best_digits.map(|value| Reading {
                value,
                uncertainty: r.best_uncertainty,
            })
        };
        rows.more_is_better(
            format!("{name} best digits"),
            best(b),
            n.and_then(best),
            slack.invariant_digits,
            false,
        );
        rows.drift(
            format!("{name} drift exponent fwd"),
            (b.drift_forward, n.and_then(|n| n.drift_forward)),
            slack.drift_exponent,
            run_roundoff(base.runs.long_run),
        );
    }
    // Period and virial digits are truncation error of the long run;
    // reversibility of a symmetric method sits at roundoff, where rounding
    // decides it (metrics::rounding_uncertainty over both directions).
    let figures = [
        (
            "period digits",
            (base.period_digits, now.period_digits),
            slack.period_digits,
            None,
        ),
        (
            "virial digits",
            (base.virial_digits, now.virial_digits),
            slack.period_digits,
            None,
        ),
        (
            "reversibility digits",
            (base.reversibility_digits, now.reversibility_digits),
            slack.reversibility_digits,
            base.runs.reversibility,
        ),
    ];
    for (metric, (b, n), s, run) in figures {
        let reading = |v: f64| match run {
            Some(at) if v >= run_roundoff(Some(at)) - FLOOR_BAND => Reading {
                value: v,
                uncertainty: rounding_uncertainty(2 * run_steps(at), v),
            },
            _ => Reading::exact(v),
        };
        rows.more_is_better(metric.into(), b.map(reading), n.map(reading), s, false);
    }
}

/// The order claim against the reading's interval: holds when the whole
/// interval clears the claim band and there is no plateau; violated by a
/// plateau or an interval wholly below it; otherwise not measurable here.
fn order_claim(now: &CheckRecord, claimed: f64, rows: &mut Rows) {
    let least = claimed - ORDER_CLAIM_BAND;
    let (status, why) = match (now.plateau_from, now.fit) {
        (Some(k), _) => (
            RowStatus::Violated,
            format!("plateau from {}", now.ladder.label(k)),
        ),
        (None, Some(f)) if f.low >= least => (RowStatus::Ok, format!("{} range", f.status.name())),
        (None, Some(f)) if f.high < least => (
            RowStatus::Violated,
            format!("{} range up to {:.2}", f.status.name(), f.high),
        ),
        (None, Some(f)) => (
            RowStatus::Unmeasured,
            format!(
                "not measurable here: still converging ({:.2} to {:.2})",
                f.low, f.high
            ),
        ),
        (None, None) => (
            RowStatus::Unmeasured,
            "not measurable here: fewer than two rungs above 1 digit".to_string(),
        ),
    };
    rows.claim(
        "claim: order",
        now.fit.map(|f| f.order),
        format!(">= {least:.2}; {why}"),
        status,
    );
}

/// Rows checking `now` against the stepper's claims.
fn check_claims(now: &CheckRecord, claims: &Claims, rows: &mut Rows) {
    if let Some(c) = claims.order {
        order_claim(now, c, rows);
    }
    if let (Some(c), Some(energy)) = (claims.energy, now.invariants.get("energy")) {
        let worst = claimed_class(c);
        let (status, allowed) = match energy.drift_forward {
            Some(d) if d.class <= worst => (
                RowStatus::Ok,
                format!("<= {} (is {})", worst.name(), d.class.name()),
            ),
            Some(d) => (
                RowStatus::Violated,
                format!("<= {} (is {})", worst.name(), d.class.name()),
            ),
            None => (
                RowStatus::Unmeasured,
                format!("<= {}; not measurable here: no long run", worst.name()),
            ),
        };
        rows.claim(
            "claim: energy drift",
            energy.drift_forward.map(|d| d.exponent),
            allowed,
            status,
        );
    }
    if claims.reversible == Some(true) {
        let d = now.reversibility_digits;
        let (status, why) = match d {
            Some(d) if d >= REVERSIBLE_DIGITS => (RowStatus::Ok, ""),
            Some(_) => (RowStatus::Violated, ""),
            None => (
                RowStatus::Unmeasured,
                "; not measurable here: no reversibility run",
            ),
        };
        rows.claim(
            "claim: reversible",
            d,
            format!(">= {REVERSIBLE_DIGITS:.2}{why}"),
            status,
        );
    }
    if let (Some(floor), Basis::Exact) = (claims.floor, now.basis) {
        let d = now.best.map(|b| b.digits);
        let status = if d.is_some_and(|d| d >= floor) {
            RowStatus::Ok
        } else {
            RowStatus::Violated
        };
        rows.claim("claim: floor", d, format!(">= {floor:.2}"), status);
    }
}

/// Every claim row of `now` against `claims`, holding or not (a report
/// lists them all; a judgement shows only the violated ones).
///
/// ```
/// use drift::baseline::{claim_rows, CheckRecord, LadderRecord, RowStatus};
/// use drift::claims::Claims;
/// use drift::measure::{Basis, MethodKind};
/// use drift::metrics::{FitStatus, OrderFit, RungClass};
/// let r = CheckRecord {
///     kind: MethodKind::Fixed, basis: Basis::Exact,
///     ladder: LadderRecord::Steps(vec![16, 32]), digits: vec![Some(2.0), Some(3.2)],
///     classes: vec![RungClass::Fitted; 2],
///     fit: Some(OrderFit { order: 3.99, residual: 0.0, first: 0, last: 1, low: 3.97, high: 4.01, status: FitStatus::Asymptotic }),
///     best: None, plateau_from: None, floor_from: None, evals_per_step: 4.0,
///     invariants: Default::default(), period_digits: None, virial_digits: None,
///     reversibility_digits: None, diverged_at: None, runs: Default::default(), tolerance: None,
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
/// use drift::metrics::{Best, FitStatus, OrderFit, RungClass};
/// let r = CheckRecord {
///     kind: MethodKind::Fixed, basis: Basis::Exact,
///     ladder: LadderRecord::Steps(vec![16, 32, 64]),
///     digits: vec![Some(2.0), Some(3.2), Some(4.4)], classes: vec![RungClass::Fitted; 3],
///     fit: Some(OrderFit { order: 4.0, residual: 0.0, first: 0, last: 2, low: 3.98, high: 4.02, status: FitStatus::Asymptotic }),
///     best: Some(Best { digits: 4.4, rung: 2, uncertainty: 0.0 }), plateau_from: None, floor_from: None,
///     evals_per_step: 4.0, invariants: Default::default(), period_digits: None,
///     virial_digits: None, reversibility_digits: None, diverged_at: None,
///     runs: Default::default(), tolerance: None,
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
