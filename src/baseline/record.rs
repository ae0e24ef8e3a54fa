//! The figures of one check as the baseline keeps them ([`CheckRecord`]),
//! built from a [`Measurement`] and rounded so the file is stable.

use std::collections::BTreeMap;

use crate::measure::{Basis, Measurement, MethodKind, Resolution, RunAt};
use crate::metrics::{Best, DriftClass, DriftFit, OrderFit, RungClass};

/// Decimals every figure is rounded to in the baseline.
pub const DECIMALS: i32 = 3;

/// `x` rounded to [`DECIMALS`] decimals; negative zero reads as zero.
///
/// ```
/// assert_eq!(drift::baseline::round_figure(12.34567), 12.346);
/// assert_eq!(drift::baseline::round_figure(-0.0001).to_bits(), 0f64.to_bits());
/// ```
pub fn round_figure(x: f64) -> f64 {
    let scale = 10f64.powi(DECIMALS);
    if !x.is_finite() || x.abs() >= f64::MAX / scale {
        return x;
    }
    // Adding +0.0 turns a rounded -0.0 into +0.0.
    (x * scale).round() / scale + 0.0
}

/// The ladder a check ran, as stored so later runs repeat it exactly.
#[derive(Clone, Debug, PartialEq)]
pub enum LadderRecord {
    /// Fixed steps per time unit, coarse to fine.
    Steps(Vec<u64>),
    /// Tolerances of an adaptive integrator, coarse to fine.
    Tolerances(Vec<f64>),
}

impl LadderRecord {
    /// Number of rungs.
    ///
    /// ```
    /// assert_eq!(drift::baseline::LadderRecord::Steps(vec![16, 32]).len(), 2);
    /// ```
    pub fn len(&self) -> usize {
        match self {
            LadderRecord::Steps(s) => s.len(),
            LadderRecord::Tolerances(t) => t.len(),
        }
    }

    /// Whether the ladder has no rung.
    ///
    /// ```
    /// assert!(drift::baseline::LadderRecord::Tolerances(vec![]).is_empty());
    /// ```
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// A short label of rung `k`: `64/unit` or `tol 1e-6` (`?` past the end).
    ///
    /// ```
    /// use drift::baseline::LadderRecord;
    /// assert_eq!(LadderRecord::Steps(vec![16, 32]).label(1), "32/unit");
    /// assert_eq!(LadderRecord::Tolerances(vec![1e-6]).label(0), "tol 1e-6");
    /// ```
    pub fn label(&self, k: usize) -> String {
        match self {
            LadderRecord::Steps(s) => s.get(k).map_or("?".into(), |n| format!("{n}/unit")),
            LadderRecord::Tolerances(t) => t.get(k).map_or("?".into(), |x| format!("tol {x:e}")),
        }
    }
}

/// The drift of an invariant over the long run, as recorded.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DriftRecord {
    /// Its class (what is compared).
    pub class: DriftClass,
    /// The fitted exponent of err ~ t^a, rounded.
    pub exponent: f64,
    /// Digits of the largest error over the run (absent in older files):
    /// an invariant kept to roundoff drifts by rounding alone, and its
    /// class is then not judged.
    pub digits: Option<f64>,
}

impl DriftRecord {
    fn of(fit: &DriftFit) -> DriftRecord {
        DriftRecord {
            class: fit.class,
            exponent: round_figure(fit.exponent),
            digits: Some(round_figure(crate::metrics::digits(fit.max_error))),
        }
    }
}

/// The figures of one invariant.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct InvariantRecord {
    /// Best digits over the ladder.
    pub best_digits: Option<f64>,
    /// Their uncertainty in digits (see [`Best::uncertainty`]).
    pub best_uncertainty: f64,
    /// Order of convergence of its error, when a fit was possible.
    pub order: Option<f64>,
    /// Drift forward in time.
    pub drift_forward: Option<DriftRecord>,
    /// Drift backward in time.
    pub drift_backward: Option<DriftRecord>,
}

/// Where the runs beside the ladder were made, so that later runs whose
/// long run is automatic repeat them (as they repeat the recorded ladder)
/// and a worse method cannot earn better long-run figures at a finer step.
///
/// ```
/// use drift::baseline::RunsRecord;
/// use drift::measure::RunAt;
/// let r = RunsRecord {
///     long_run: Some(RunAt { steps_per_unit: 16384, periods: 61.0 }),
///     long_run_requested: Some(1000.0),
///     reversibility: Some(RunAt { steps_per_unit: 16384, periods: 10.0 }),
/// };
/// assert_eq!(r.long_run_asked(), Some(1000.0));
/// assert_eq!(r.shortened(), Some((61.0, 1000.0)));
/// assert_eq!(RunsRecord::default().shortened(), None);
/// ```
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct RunsRecord {
    /// Resolution and horizon of the long run as run.
    pub long_run: Option<RunAt>,
    /// The horizon asked for, kept only when the budget shortened the run.
    pub long_run_requested: Option<f64>,
    /// Resolution and horizon of the reversibility run.
    pub reversibility: Option<RunAt>,
}

impl RunsRecord {
    /// The long-run horizon that was asked for (the one run unless shortened).
    pub fn long_run_asked(&self) -> Option<f64> {
        self.long_run_requested.or(self.long_run.map(|a| a.periods))
    }

    /// `(run, asked)` horizons when the budget shortened the long run.
    pub fn shortened(&self) -> Option<(f64, f64)> {
        Some((self.long_run?.periods, self.long_run_requested?))
    }
}

/// Everything the baseline keeps of one check, figures rounded to
/// [`DECIMALS`] decimals.
#[derive(Clone, Debug, PartialEq)]
pub struct CheckRecord {
    /// The kind of method.
    pub kind: MethodKind,
    /// Against the exact solution or by self-convergence.
    pub basis: Basis,
    /// The ladder run.
    pub ladder: LadderRecord,
    /// Solution digits of each rung (`None`: no figure at that rung).
    pub digits: Vec<Option<f64>>,
    /// Class of each rung in the solution series.
    pub classes: Vec<RungClass>,
    /// The order fit of the solution: order, residual, first and last rung.
    pub fit: Option<OrderFit>,
    /// Best solution digits and their rung.
    pub best: Option<Best>,
    /// First rung of a plateau (a consistency error).
    pub plateau_from: Option<usize>,
    /// First rung of the roundoff floor.
    pub floor_from: Option<usize>,
    /// Right-hand-side evaluations per step on the finest rung.
    pub evals_per_step: f64,
    /// Per invariant, by name.
    pub invariants: BTreeMap<String, InvariantRecord>,
    /// Digits of the period measured over the long run.
    pub period_digits: Option<f64>,
    /// Digits of the virial residual over the long run.
    pub virial_digits: Option<f64>,
    /// Digits of forward-then-backward reversibility.
    pub reversibility_digits: Option<f64>,
    /// Time at which the method diverged (NaN or infinity), if it did.
    pub diverged_at: Option<f64>,
    /// Where the long run and the reversibility run were made.
    pub runs: RunsRecord,
    /// Tolerance proportionality of an adaptive integrator over its fitted
    /// rungs (`None` for fixed steps, or with no order read).
    pub tolerance: Option<ToleranceRecord>,
}

/// How an adaptive integrator's achieved error follows the requested
/// tolerance: log10(error) against log10(tolerance), rounded.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ToleranceRecord {
    /// Slope: 1 when the error is proportional to the tolerance.
    pub slope: f64,
    /// Decades the error sits above (positive) or below the tolerance.
    pub offset: f64,
}

impl CheckRecord {
    /// The record of a measurement, every figure rounded to [`DECIMALS`]
    /// decimals. The ladder is read from the rungs: a tolerance ladder when
    /// the rungs ran at tolerances, else steps per unit (the measuring code
    /// never mixes the two).
    ///
    /// ```
    /// use drift::baseline::{CheckRecord, LadderRecord};
    /// use drift::measure::{Basis, Measurement, MethodKind, Resolution, Rung};
    /// use drift::metrics::{analyse_series, RungClass};
    /// let d = [Some(2.0), Some(3.2041), Some(4.4082)];
    /// let x: Vec<f64> = [16f64, 32.0, 64.0].iter().map(|n| n.log10()).collect();
    /// let rungs: Vec<Rung> = [16u64, 32, 64].iter().zip(d).map(|(&n, d)| Rung {
    ///     resolution: Resolution::StepsPerUnit(n), steps: 10 * n, evals: 40 * n,
    ///     rejected: 0, solution_digits: d, invariant_digits: vec![], diverged_at: None,
    /// }).collect();
    /// let m = Measurement {
    ///     problem: "harmonic".into(), kind: MethodKind::Fixed, basis: Basis::Exact,
    ///     solution: analyse_series(&x, &d, &[160, 320, 640]), rungs,
    ///     invariants: vec![], long_run: None, reversibility_digits: None,
    ///     reversibility_run: None, evals_per_step: 4.0, diverged: None, adaptive: None,
    /// };
    /// let r = CheckRecord::from_measurement(&m);
    /// assert_eq!(r.ladder, LadderRecord::Steps(vec![16, 32, 64]));
    /// assert_eq!(r.digits[1], Some(3.204));
    /// assert_eq!(r.classes, vec![RungClass::Fitted; 3]);
    /// ```
    pub fn from_measurement(m: &Measurement) -> CheckRecord {
        let tolerances: Vec<f64> = m
            .rungs
            .iter()
            .filter_map(|r| match r.resolution {
                Resolution::Tolerance(t) => Some(t),
                Resolution::StepsPerUnit(_) => None,
            })
            .collect();
        let ladder = if tolerances.is_empty() {
            LadderRecord::Steps(
                m.rungs
                    .iter()
                    .filter_map(|r| r.resolution.steps_per_unit())
                    .collect(),
            )
        } else {
            LadderRecord::Tolerances(tolerances)
        };
        let invariants = m
            .invariants
            .iter()
            .map(|inv| {
                let record = InvariantRecord {
                    best_digits: inv.analysis.best.map(|b| round_figure(b.digits)),
                    best_uncertainty: inv
                        .analysis
                        .best
                        .map_or(0.0, |b| round_figure(b.uncertainty)),
                    order: inv.analysis.fit.map(|f| round_figure(f.order)),
                    drift_forward: inv.drift_forward.as_ref().map(DriftRecord::of),
                    drift_backward: inv.drift_backward.as_ref().map(DriftRecord::of),
                };
                (inv.name.clone(), record)
            })
            .collect();
        let long = m.long_run.as_ref();
        CheckRecord {
            kind: m.kind,
            basis: m.basis,
            ladder,
            digits: m
                .rungs
                .iter()
                .map(|r| r.solution_digits.map(round_figure))
                .collect(),
            classes: m.solution.classes.clone(),
            fit: m.solution.fit.map(|f| OrderFit {
                order: round_figure(f.order),
                residual: round_figure(f.residual),
                low: round_figure(f.low),
                high: round_figure(f.high),
                ..f
            }),
            best: m.solution.best.map(|b| Best {
                digits: round_figure(b.digits),
                uncertainty: round_figure(b.uncertainty),
                ..b
            }),
            plateau_from: m.solution.plateau_from,
            floor_from: m.solution.floor_from,
            evals_per_step: round_figure(m.evals_per_step),
            invariants,
            period_digits: long
                .and_then(|l| l.period.as_ref())
                .and_then(|p| p.digits)
                .map(round_figure),
            virial_digits: long.and_then(|l| l.virial_digits).map(round_figure),
            reversibility_digits: m.reversibility_digits.map(round_figure),
            diverged_at: m.diverged.map(|d| round_figure(d.t)),
            runs: RunsRecord {
                long_run: long.map(|l| RunAt {
                    steps_per_unit: l.steps_per_unit,
                    periods: round_figure(l.periods),
                }),
                long_run_requested: long
                    .filter(|l| l.requested_periods > l.periods)
                    .map(|l| round_figure(l.requested_periods)),
                reversibility: m.reversibility_run.map(|r| RunAt {
                    periods: round_figure(r.periods),
                    ..r
                }),
            },
            tolerance: m
                .adaptive
                .as_ref()
                .and_then(|a| a.proportionality)
                .map(|p| ToleranceRecord {
                    slope: round_figure(p.slope),
                    offset: round_figure(p.offset),
                }),
        }
    }
}
