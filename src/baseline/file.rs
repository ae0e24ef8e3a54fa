//! The TOML layout of the baseline file: flat serde tables for the header and
//! each check, and their checked conversion to and from [`CheckRecord`].
//! Everything that the types alone cannot guarantee (array lengths, rung
//! indices, fields that go together) is validated here, with the position of
//! the offending table.

use std::collections::BTreeMap;
use std::ops::Range;

use serde::{Deserialize, Serialize};
use toml::Spanned;

use super::record::{
    CheckRecord, DriftRecord, InvariantRecord, LadderRecord, RunsRecord, ToleranceRecord,
};
use super::Header;
use crate::measure::{Basis, MethodKind, RunAt};
use crate::metrics::{Best, DriftClass, FitStatus, OrderFit, RungClass, MAX_DIGITS};

/// Digits value that stands for "no figure at this rung".
pub(super) const NO_FIGURE: f64 = -1.0;

/// A problem found in the file, with the byte range it concerns.
pub(super) struct Located {
    pub span: Option<Range<usize>>,
    pub message: String,
}

impl From<toml::de::Error> for Located {
    fn from(e: toml::de::Error) -> Self {
        Located {
            span: e.span(),
            message: e.message().to_string(),
        }
    }
}

/// The whole file; `C` is a plain check for writing and a spanned one for
/// reading.
#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawFile<C> {
    pub header: Header,
    #[serde(default = "BTreeMap::new")]
    pub check: BTreeMap<String, C>,
}

/// Only the format version, read before anything else so that a file from a
/// newer version is reported as such rather than as unknown fields.
#[derive(Deserialize)]
pub(super) struct Probe {
    pub header: ProbeHeader,
}

/// The format field of the header.
#[derive(Deserialize)]
pub(super) struct ProbeHeader {
    pub format: Spanned<u32>,
}

/// One check as written.
#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawCheck {
    kind: MethodKind,
    basis: Basis,
    steps_per_unit: Option<Vec<u64>>,
    tolerances: Option<Vec<String>>,
    digits: Vec<f64>,
    classes: Vec<RungClass>,
    order: Option<f64>,
    order_residual: Option<f64>,
    order_low: Option<f64>,
    order_high: Option<f64>,
    order_status: Option<FitStatus>,
    fit_from: Option<usize>,
    fit_to: Option<usize>,
    best_digits: Option<f64>,
    best_uncertainty: Option<f64>,
    best_rung: Option<usize>,
    plateau_from: Option<usize>,
    floor_from: Option<usize>,
    evals_per_step: f64,
    period_digits: Option<f64>,
    virial_digits: Option<f64>,
    reversibility_digits: Option<f64>,
    diverged_at: Option<f64>,
    long_run_steps_per_unit: Option<u64>,
    long_run_periods: Option<f64>,
    long_run_requested_periods: Option<f64>,
    reversibility_steps_per_unit: Option<u64>,
    reversibility_periods: Option<f64>,
    tolerance_slope: Option<f64>,
    tolerance_offset: Option<f64>,
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    invariant: BTreeMap<String, RawInvariant>,
}

/// One invariant of a check as written.
#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawInvariant {
    best_digits: Option<f64>,
    best_uncertainty: Option<f64>,
    order: Option<f64>,
    drift_forward: Option<DriftClass>,
    drift_forward_exponent: Option<f64>,
    drift_forward_digits: Option<f64>,
    drift_backward: Option<DriftClass>,
    drift_backward_exponent: Option<f64>,
    drift_backward_digits: Option<f64>,
}

/// A run's resolution and horizon from its two keys (`what_steps_per_unit`,
/// `what_periods`), which go together.
fn join_run(steps: Option<u64>, periods: Option<f64>, what: &str) -> Result<Option<RunAt>, String> {
    match (steps, periods) {
        (Some(n), Some(p)) if n > 0 && p.is_finite() && p > 0.0 => Ok(Some(RunAt {
            steps_per_unit: n,
            periods: p,
        })),
        (None, None) => Ok(None),
        _ => Err(format!(
            "`{what}_steps_per_unit` (at least 1) and `{what}_periods` (positive) go together"
        )),
    }
}

type DriftKeys = (Option<DriftClass>, Option<f64>, Option<f64>);

fn split_drift(d: Option<DriftRecord>) -> DriftKeys {
    (
        d.map(|d| d.class),
        d.map(|d| d.exponent),
        d.and_then(|d| d.digits),
    )
}

fn join_drift(
    (class, exponent, digits): DriftKeys,
    what: &str,
) -> Result<Option<DriftRecord>, String> {
    match (class, exponent) {
        (Some(class), Some(exponent)) => Ok(Some(DriftRecord {
            class,
            exponent,
            digits,
        })),
        (None, None) if digits.is_none() => Ok(None),
        _ => Err(format!(
            "`{what}`, `{what}_exponent` (and `{what}_digits`) go together"
        )),
    }
}

impl From<&CheckRecord> for RawCheck {
    fn from(r: &CheckRecord) -> Self {
        let (steps_per_unit, tolerances) = match &r.ladder {
            LadderRecord::Steps(s) => (Some(s.clone()), None),
            LadderRecord::Tolerances(t) => {
                (None, Some(t.iter().map(|t| format!("{t:e}")).collect()))
            }
        };
        let invariant = r
            .invariants
            .iter()
            .map(|(name, inv)| {
                let (drift_forward, drift_forward_exponent, drift_forward_digits) =
                    split_drift(inv.drift_forward);
                let (drift_backward, drift_backward_exponent, drift_backward_digits) =
                    split_drift(inv.drift_backward);
                let raw = RawInvariant {
                    best_digits: inv.best_digits,
                    best_uncertainty: inv.best_digits.map(|_| inv.best_uncertainty),
                    order: inv.order,
                    drift_forward,
                    drift_forward_exponent,
                    drift_forward_digits,
                    drift_backward,
                    drift_backward_exponent,
                    drift_backward_digits,
                };
                (name.clone(), raw)
            })
            .collect();
        RawCheck {
            kind: r.kind,
            basis: r.basis,
            steps_per_unit,
            tolerances,
            digits: r.digits.iter().map(|d| d.unwrap_or(NO_FIGURE)).collect(),
            classes: r.classes.clone(),
            order: r.fit.map(|f| f.order),
            order_residual: r.fit.map(|f| f.residual),
            order_low: r.fit.map(|f| f.low),
            order_high: r.fit.map(|f| f.high),
            order_status: r.fit.map(|f| f.status),
            fit_from: r.fit.map(|f| f.first),
            fit_to: r.fit.map(|f| f.last),
            best_digits: r.best.map(|b| b.digits),
            best_uncertainty: r.best.map(|b| b.uncertainty),
            best_rung: r.best.map(|b| b.rung),
            plateau_from: r.plateau_from,
            floor_from: r.floor_from,
            evals_per_step: r.evals_per_step,
            period_digits: r.period_digits,
            virial_digits: r.virial_digits,
            reversibility_digits: r.reversibility_digits,
            diverged_at: r.diverged_at,
            long_run_steps_per_unit: r.runs.long_run.map(|a| a.steps_per_unit),
            long_run_periods: r.runs.long_run.map(|a| a.periods),
            long_run_requested_periods: r.runs.long_run_requested,
            reversibility_steps_per_unit: r.runs.reversibility.map(|a| a.steps_per_unit),
            reversibility_periods: r.runs.reversibility.map(|a| a.periods),
            tolerance_slope: r.tolerance.map(|t| t.slope),
            tolerance_offset: r.tolerance.map(|t| t.offset),
            invariant,
        }
    }
}

impl RawCheck {
    /// The record, or what is inconsistent about the table.
    pub(super) fn into_record(self) -> Result<CheckRecord, String> {
        let ladder = match (self.steps_per_unit, self.tolerances) {
            (Some(s), None) => LadderRecord::Steps(s),
            (None, Some(t)) => LadderRecord::Tolerances(
                t.iter()
                    .map(|s| match s.trim().parse::<f64>() {
                        Ok(x) if x.is_finite() && x > 0.0 => Ok(x),
                        _ => Err(format!(
                            "`tolerances` entry \"{s}\" is not a positive number such as \"1e-6\""
                        )),
                    })
                    .collect::<Result<_, _>>()?,
            ),
            _ => return Err("give exactly one of `steps_per_unit` and `tolerances`".into()),
        };
        let n = ladder.len();
        for (name, len) in [
            ("digits", self.digits.len()),
            ("classes", self.classes.len()),
        ] {
            if len != n {
                return Err(format!(
                    "`{name}` has {len} entries but the ladder has {n} rungs"
                ));
            }
        }
        let digits = self
            .digits
            .iter()
            .map(|&d| {
                if d == NO_FIGURE {
                    Ok(None)
                } else if (0.0..=MAX_DIGITS).contains(&d) {
                    Ok(Some(d))
                } else {
                    Err(format!(
                        "`digits` entry {d} is neither in [0, {MAX_DIGITS}] nor {NO_FIGURE} (no figure)"
                    ))
                }
            })
            .collect::<Result<_, _>>()?;
        let rung = |name: &str, k: Option<usize>| match k {
            Some(k) if k >= n => Err(format!("`{name}` = {k} is past the last rung ({n} rungs)")),
            _ => Ok(k),
        };
        let fit = match (
            self.order,
            self.order_residual,
            rung("fit_from", self.fit_from)?,
            rung("fit_to", self.fit_to)?,
        ) {
            (Some(order), Some(residual), Some(first), Some(last)) if first <= last => {
                // Files written before readings carried an interval read
                // as asymptotic with no uncertainty (slack alone).
                let (low, high) = (
                    self.order_low.unwrap_or(order),
                    self.order_high.unwrap_or(order),
                );
                if !(low <= order && order <= high) {
                    return Err(format!(
                        "`order` = {order} must lie in [`order_low`, `order_high`] = [{low}, {high}]"
                    ));
                }
                Some(OrderFit {
                    order,
                    residual,
                    first,
                    last,
                    low,
                    high,
                    status: self.order_status.unwrap_or(FitStatus::Asymptotic),
                })
            }
            (None, None, None, None) => None,
            _ => {
                return Err(
                    "`order`, `order_residual`, `fit_from` and `fit_to` go together (with fit_from <= fit_to)"
                        .into(),
                )
            }
        };
        let best = match (self.best_digits, rung("best_rung", self.best_rung)?) {
            (Some(digits), Some(rung)) => Some(Best {
                digits,
                rung,
                uncertainty: uncertainty("best_uncertainty", self.best_uncertainty)?,
            }),
            (None, None) => None,
            _ => return Err("`best_digits` and `best_rung` go together".into()),
        };
        let invariants = self
            .invariant
            .into_iter()
            .map(|(name, raw)| {
                let inv = InvariantRecord {
                    best_digits: raw.best_digits,
                    best_uncertainty: uncertainty("best_uncertainty", raw.best_uncertainty)?,
                    order: raw.order,
                    drift_forward: join_drift(
                        (
                            raw.drift_forward,
                            raw.drift_forward_exponent,
                            raw.drift_forward_digits,
                        ),
                        "drift_forward",
                    )?,
                    drift_backward: join_drift(
                        (
                            raw.drift_backward,
                            raw.drift_backward_exponent,
                            raw.drift_backward_digits,
                        ),
                        "drift_backward",
                    )?,
                };
                Ok((name, inv))
            })
            .collect::<Result<_, String>>()?;
        let long_run = join_run(
            self.long_run_steps_per_unit,
            self.long_run_periods,
            "long_run",
        )?;
        let long_run_requested = match (self.long_run_requested_periods, long_run) {
            (None, _) => None,
            (Some(asked), Some(run)) if asked > run.periods => Some(asked),
            (Some(_), _) => return Err(
                "`long_run_requested_periods` needs `long_run_periods` and must exceed it (it is kept only when the run was shortened)".into(),
            ),
        };
        Ok(CheckRecord {
            kind: self.kind,
            basis: self.basis,
            ladder,
            digits,
            classes: self.classes,
            fit,
            best,
            plateau_from: rung("plateau_from", self.plateau_from)?,
            floor_from: rung("floor_from", self.floor_from)?,
            evals_per_step: self.evals_per_step,
            invariants,
            period_digits: self.period_digits,
            virial_digits: self.virial_digits,
            reversibility_digits: self.reversibility_digits,
            diverged_at: self.diverged_at,
            runs: RunsRecord {
                long_run,
                long_run_requested,
                reversibility: join_run(
                    self.reversibility_steps_per_unit,
                    self.reversibility_periods,
                    "reversibility",
                )?,
            },
            tolerance: match (self.tolerance_slope, self.tolerance_offset) {
                (Some(slope), Some(offset)) if slope.is_finite() && offset.is_finite() => {
                    Some(ToleranceRecord { slope, offset })
                }
                (None, None) => None,
                _ => {
                    return Err(
                        "`tolerance_slope` and `tolerance_offset` go together, as finite numbers"
                            .into(),
                    )
                }
            },
        })
    }
}

/// An uncertainty in digits: absent reads as 0 (older files), else it
/// must be finite and non-negative.
fn uncertainty(name: &str, u: Option<f64>) -> Result<f64, String> {
    match u {
        None => Ok(0.0),
        Some(u) if u.is_finite() && u >= 0.0 => Ok(u),
        Some(u) => Err(format!("`{name}` = {u} must be a finite number >= 0")),
    }
}

/// Converts spanned checks read from a file, naming the check and pointing
/// at its table on failure.
pub(super) fn records(
    checks: BTreeMap<String, Spanned<RawCheck>>,
) -> Result<BTreeMap<String, CheckRecord>, Located> {
    checks
        .into_iter()
        .map(|(name, spanned)| {
            let span = spanned.span();
            spanned
                .into_inner()
                .into_record()
                .map(|r| (name.clone(), r))
                .map_err(|m| Located {
                    span: Some(span),
                    message: format!("check \"{name}\": {m}"),
                })
        })
        .collect()
}
