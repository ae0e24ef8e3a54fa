//! The measurement behind a check's figures, kept for reports: every rung's
//! resolution, steps, evaluations, rejections and digits, the problem's
//! clock, and the long run's invariant error against time. The harness
//! writes it into its JSON document (`detail` of each check); `cargo drift
//! report` reads it back with the same types.

use serde::{Deserialize, Serialize};

use crate::measure::{Measurement, Resolution};

/// One rung as measured.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RungDetail {
    /// Fixed steps per time unit (fixed-step rungs).
    pub steps_per_unit: Option<u64>,
    /// Requested tolerance (adaptive rungs).
    pub tolerance: Option<f64>,
    /// Accepted steps over the horizon.
    pub steps: u64,
    /// Right-hand-side (or force) evaluations over the horizon.
    pub evals: u64,
    /// Rejected step attempts.
    pub rejected: u64,
    /// Solution digits (`None` where there is no figure).
    pub digits: Option<f64>,
    /// Digits of each invariant, in the order of [`Detail::invariants`].
    pub invariant_digits: Vec<f64>,
}

/// One invariant's relative error against elapsed time over the long run.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ErrorSeries {
    /// The invariant.
    pub name: String,
    /// Elapsed time in time units of the problem (periods where it has one).
    pub t: Vec<f64>,
    /// Largest relative error near each time.
    pub error: Vec<f64>,
}

/// The long run as measured.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LongRunDetail {
    /// Its resolution.
    pub steps_per_unit: u64,
    /// Its length in time units.
    pub periods: f64,
    /// Error of each invariant against time, forward.
    pub series: Vec<ErrorSeries>,
}

/// What a report needs beyond the baseline figures.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Detail {
    /// Length of each rung's run, in time units.
    pub horizon: f64,
    /// Whether the time unit is the problem's exact period.
    pub periodic: bool,
    /// Names of the invariants, in rung order.
    pub invariants: Vec<String>,
    /// Every rung.
    pub rungs: Vec<RungDetail>,
    /// The long run, when one ran.
    pub long_run: Option<LongRunDetail>,
}

impl Detail {
    /// The detail of `m`, measured over `horizon` time units of a problem
    /// whose clock is `time_unit` (the long run's times are converted to
    /// time units).
    ///
    /// ```
    /// use drift::harness::detail::Detail;
    /// use drift::measure::{Basis, Measurement, MethodKind, Resolution, Rung};
    /// use drift::metrics::analyse_series;
    /// let rung = Rung { resolution: Resolution::StepsPerUnit(16), steps: 32, evals: 128,
    ///     rejected: 0, solution_digits: Some(2.0), invariant_digits: vec![], diverged_at: None };
    /// let m = Measurement { problem: "harmonic".into(), kind: MethodKind::Fixed,
    ///     basis: Basis::Exact, solution: analyse_series(&[1.2], &[Some(2.0)], &[32]),
    ///     rungs: vec![rung], invariants: vec![], long_run: None,
    ///     reversibility_digits: None, reversibility_run: None, evals_per_step: 4.0, diverged: None, adaptive: None };
    /// let d = Detail::of(&m, 2.0, 6.283185307179586, true);
    /// assert_eq!(d.rungs[0].steps_per_unit, Some(16));
    /// assert_eq!(d.rungs[0].evals, 128);
    /// ```
    pub fn of(m: &Measurement, horizon: f64, time_unit: f64, periodic: bool) -> Detail {
        let rungs = m
            .rungs
            .iter()
            .map(|r| {
                let (steps_per_unit, tolerance) = match r.resolution {
                    Resolution::StepsPerUnit(n) => (Some(n), None),
                    Resolution::Tolerance(t) => (None, Some(t)),
                };
                RungDetail {
                    steps_per_unit,
                    tolerance,
                    steps: r.steps,
                    evals: r.evals,
                    rejected: r.rejected,
                    digits: r.solution_digits,
                    invariant_digits: r.invariant_digits.clone(),
                }
            })
            .collect();
        let names: Vec<String> = m.invariants.iter().map(|i| i.name.clone()).collect();
        let unit = if time_unit > 0.0 && time_unit.is_finite() {
            time_unit
        } else {
            1.0
        };
        let long_run = m.long_run.as_ref().map(|lr| LongRunDetail {
            steps_per_unit: lr.steps_per_unit,
            periods: lr.periods,
            series: names
                .iter()
                .zip(&lr.envelopes)
                .map(|(name, env)| ErrorSeries {
                    name: name.clone(),
                    t: env.t.iter().map(|t| t / unit).collect(),
                    error: env.error.clone(),
                })
                .collect(),
        });
        Detail {
            horizon,
            periodic,
            invariants: names,
            rungs,
            long_run,
        }
    }
}
