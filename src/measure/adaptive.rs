//! Adaptive integrators on a tolerance ladder, read as a work-precision
//! diagram (Hairer, Norsett and Wanner I, II.4 and II.10: achieved error
//! against right-hand-side evaluations): the tolerances of the automatic
//! ladder, the controller's asymptotic regime (the rungs from which on the
//! work grows steadily with the tolerance), and tolerance proportionality
//! (achieved error against requested tolerance over that regime).
//!
//! Everything here is arithmetic on figures already measured; the rungs
//! are run by [`super::ladder`].

/// Coarsest tolerance of the automatic ladder. Common practice, no source:
/// at 1e-2 a reference problem keeps about one digit; coarser rungs cost
/// next to nothing but are never in a controller's asymptotic regime.
pub const TOL_COARSEST_EXPONENT: i32 = 2;

/// Finest tolerance of the automatic ladder: 1e-15, about 4.5 units of
/// `f64::EPSILON`. Below a few units of rounding a relative tolerance
/// cannot be met by any step (its own rounding exceeds it), so integrators
/// fail or stall there. Common practice, no source.
pub const TOL_FINEST_EXPONENT: i32 = 15;

/// The work of the controller is steady over a stretch of the ladder when
/// every decade slope in it (log10 of evaluations against log10 of the
/// requested tolerance, over rungs a decade of tolerance apart) lies within
/// this fraction of their median. Measured on the Dormand-Prince 5(4)
/// pair: in its asymptotic regime the decade slopes agree with 1/5 to
/// 0.01, while before it they wander between 0.1 and 0.3. Since the order
/// read against evaluations is the error's slope against the tolerance
/// divided by this slope, a 5 percent band keeps the order of a 5th-order
/// pair within about 0.25. Common practice, no source.
pub const STEADY_BAND: f64 = 0.05;

/// Least span of the regime, and of the order fit inside it, in decades of
/// tolerance: two decade slopes to compare, and five rungs of the automatic
/// ladder for the fit. Common practice, no source.
pub const MIN_REGIME_DECADES: f64 = 2.0;

/// The tolerances of the automatic ladder, coarse to fine, about half a
/// decade apart: 1e-2, 3e-3, 1e-3, ..., 3e-15, 1e-15 (each the nearest
/// double to its decimal, so the baseline writes it back as that decimal).
/// Half-decade spacing gives an 8th-order pair, whose evaluations grow like
/// tol^(-1/8), a rung per 1/16 decade of work; in a controller's regime the
/// error falls about half a digit per rung. Common practice, no source.
///
/// ```
/// let t = drift::measure::adaptive::auto_tolerances();
/// assert_eq!(t.len(), 27);
/// assert_eq!((t[0], t[1], t[26]), (1e-2, 3e-3, 1e-15));
/// assert!(t.windows(2).all(|w| w[1] < w[0]));
/// ```
pub fn auto_tolerances() -> Vec<f64> {
    let mut out = Vec::new();
    for k in TOL_COARSEST_EXPONENT..=TOL_FINEST_EXPONENT {
        out.push(format!("1e-{k}"));
        if k < TOL_FINEST_EXPONENT {
            out.push(format!("3e-{}", k + 1));
        }
    }
    out.iter().filter_map(|s| s.parse().ok()).collect()
}

/// The controller's asymptotic regime on a tolerance ladder.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct WorkRegime {
    /// First rung of the regime (it runs to the end of the ladder).
    pub start: usize,
    /// Median decade slope of log10(evaluations) against -log10(tolerance)
    /// over the regime: evaluations grow like tol^(-slope). For a pair
    /// whose error estimate has order q, 1/(q + 1) (1/5 for Dormand-Prince
    /// 5(4); Hairer, Norsett and Wanner I, II.4).
    pub work_slope: f64,
}

/// Why an adaptive method's order was not read.
#[derive(Clone, Debug, PartialEq)]
#[non_exhaustive]
pub enum NoOrder {
    /// The ladder spans too few decades of tolerance to judge the work.
    LadderTooShort {
        /// Its span in decades of tolerance.
        decades: f64,
    },
    /// No stretch of at least [`MIN_REGIME_DECADES`] at the fine end of
    /// the ladder has steady work: the controller never reached its
    /// asymptotic regime on this ladder.
    WorkNotSteady {
        /// Finest tolerance run.
        finest: f64,
    },
    /// The fit inside the regime (rungs between one digit and the roundoff
    /// floor) spans fewer than [`MIN_REGIME_DECADES`] decades of tolerance.
    RegimeUnresolved {
        /// First rung of the regime.
        start: usize,
    },
}

impl std::fmt::Display for NoOrder {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            NoOrder::LadderTooShort { decades } => write!(
                f,
                "the tolerance ladder spans {decades:.1} decades; at least {MIN_REGIME_DECADES} are needed to see the controller's work settle"
            ),
            NoOrder::WorkNotSteady { finest } => write!(
                f,
                "the controller's work never grew steadily with the tolerance down to {finest:e} (no asymptotic regime within the ladder)"
            ),
            NoOrder::RegimeUnresolved { start } => write!(
                f,
                "inside the controller's asymptotic regime (from rung {start}) the rungs between one digit and the roundoff floor span fewer than {MIN_REGIME_DECADES} decades of tolerance"
            ),
        }
    }
}

/// log10 of each tolerance's reciprocal and of each rung's evaluations;
/// `None` when a tolerance is not in (0, 1] or an evaluation count is 0.
fn work_axes(tols: &[f64], evals: &[u64]) -> Option<(Vec<f64>, Vec<f64>)> {
    let n = tols.len().min(evals.len());
    let u: Option<Vec<f64>> = tols[..n]
        .iter()
        .map(|&t| (t.is_finite() && t > 0.0).then(|| -t.log10()))
        .collect();
    let w: Option<Vec<f64>> = evals[..n]
        .iter()
        .map(|&e| (e > 0).then(|| (e as f64).log10()))
        .collect();
    Some((u?, w?))
}

/// Median of a nonempty slice (the mean of the middle two for an even
/// length).
fn median(v: &[f64]) -> f64 {
    let mut s = v.to_vec();
    s.sort_by(f64::total_cmp);
    let m = s.len() / 2;
    if s.len() % 2 == 0 {
        0.5 * (s[m - 1] + s[m])
    } else {
        s[m]
    }
}

/// The controller's asymptotic regime on a ladder of tolerances `tols`
/// (coarse to fine) whose rungs took `evals` right-hand-side evaluations.
///
/// Work-precision practice (Hairer, Norsett and Wanner I, II.10) reads a
/// method's order off the straight part of error against work. An adaptive
/// method's work follows `tol^(-1/(q+1))` only once its controller has
/// settled; before that the first step, the step-size limits and the
/// rejections set it. Each rung `j` with a partner at least a decade of
/// tolerance finer gets a *decade slope*: `Delta log10(evals) / Delta
/// log10(1/tol)` between them. The regime is the longest tail of the
/// ladder whose decade slopes are positive and lie within [`STEADY_BAND`]
/// (relative) of their median; it starts at the first rung of that tail
/// and must span at least [`MIN_REGIME_DECADES`] decades of tolerance.
/// A single wild rung breaks the two decade slopes it is part of, so the
/// regime starts after it when it is near the coarse end.
///
/// ```
/// use drift::measure::adaptive::{work_regime, NoOrder};
/// // Work settling to tol^(-1/5) from 1e-5 on, a decade apart.
/// let tols: Vec<f64> = (2..=14).map(|k| 10f64.powi(-k)).collect();
/// let evals = [40, 50, 70, 100, 158, 251, 398, 631, 1000, 1585, 2512, 3981, 6310];
/// let r = work_regime(&tols, &evals).unwrap();
/// assert_eq!(r.start, 3);
/// assert!((r.work_slope - 0.2).abs() < 0.01);
/// // Work that never settles.
/// let wild = [40, 80, 90, 200, 210, 500, 520, 1400, 1500, 4000, 4100, 9000, 9500];
/// assert!(matches!(work_regime(&tols, &wild), Err(NoOrder::WorkNotSteady { .. })));
/// ```
pub fn work_regime(tols: &[f64], evals: &[u64]) -> Result<WorkRegime, NoOrder> {
    let n = tols.len().min(evals.len());
    let finest = tols.get(n.wrapping_sub(1)).copied().unwrap_or(f64::NAN);
    let Some((u, w)) = work_axes(tols, evals) else {
        return Err(NoOrder::WorkNotSteady { finest });
    };
    let span = match (u.first(), u.last()) {
        (Some(a), Some(b)) => b - a,
        _ => 0.0,
    };
    // A NaN span (impossible after work_axes) counts as too short.
    if span.is_nan() || span < MIN_REGIME_DECADES - 1e-9 {
        return Err(NoOrder::LadderTooShort {
            decades: span.max(0.0),
        });
    }
    // Decade slope of each rung that has a partner a decade finer.
    let slopes: Vec<Option<f64>> = (0..n)
        .map(|j| {
            let k = (j + 1..n).find(|&k| u[k] - u[j] >= 1.0 - 1e-9)?;
            let du = u[k] - u[j];
            (du > 0.0).then(|| (w[k] - w[j]) / du)
        })
        .collect();
    for start in 0..n {
        if u[n - 1] - u[start] < MIN_REGIME_DECADES - 1e-9 {
            break;
        }
        let tail: Vec<f64> = slopes[start..].iter().flatten().copied().collect();
        if tail.is_empty() {
            break;
        }
        let m = median(&tail);
        if m > 0.0 && tail.iter().all(|s| (s - m).abs() <= STEADY_BAND * m) {
            return Ok(WorkRegime {
                start,
                work_slope: m,
            });
        }
    }
    Err(NoOrder::WorkNotSteady { finest })
}

/// Tolerance proportionality over a stretch of rungs: the least-squares line
/// `log10(error) = slope * log10(tol) + b`. A controller whose achieved
/// error is proportional to its tolerance has slope 1 (Hairer, Norsett and
/// Wanner I, II.4, "tolerance proportionality").
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Proportionality {
    /// d log10(error) / d log10(tol).
    pub slope: f64,
    /// Mean of log10(error / tol) over the rungs: how many decades the
    /// achieved error sits above (positive) or below the requested
    /// tolerance.
    pub offset: f64,
    /// RMS residual of the line, in decades.
    pub residual: f64,
    /// First rung used.
    pub first: usize,
    /// Last rung used.
    pub last: usize,
}

/// Tolerance proportionality over rungs `first..=last` of tolerances `tols`
/// with solution digits `d` (error `10^-d`); rungs without a figure are
/// skipped. `None` with fewer than two usable rungs.
///
/// ```
/// use drift::measure::adaptive::proportionality;
/// let tols = [1e-4, 1e-6, 1e-8, 1e-10];
/// // Achieved error 50 x tol: 1.7 decades above.
/// let d: Vec<Option<f64>> = tols.iter().map(|t: &f64| Some(-(50.0 * t).log10())).collect();
/// let p = proportionality(&tols, &d, 0, 3).unwrap();
/// assert!((p.slope - 1.0).abs() < 1e-12);
/// assert!((p.offset - 50f64.log10()).abs() < 1e-12);
/// ```
pub fn proportionality(
    tols: &[f64],
    d: &[Option<f64>],
    first: usize,
    last: usize,
) -> Option<Proportionality> {
    let end = last
        .min(tols.len().saturating_sub(1))
        .min(d.len().saturating_sub(1));
    let (mut x, mut y) = (Vec::new(), Vec::new());
    for k in first..=end {
        if let (t, Some(dk)) = (tols[k], d[k]) {
            if t.is_finite() && t > 0.0 && dk.is_finite() {
                x.push(t.log10());
                y.push(-dk);
            }
        }
    }
    let line = crate::metrics::fit_line(&x, &y)?;
    let offset = x.iter().zip(&y).map(|(a, b)| b - a).sum::<f64>() / x.len() as f64;
    Some(Proportionality {
        slope: line.slope,
        offset,
        residual: line.residual,
        first,
        last: end,
    })
}

/// Why an automatic tolerance ladder ended.
#[derive(Clone, Debug, PartialEq)]
#[non_exhaustive]
pub enum LadderStop {
    /// It ran every tolerance down to 10^-[`TOL_FINEST_EXPONENT`].
    Finest,
    /// The solution reached 15 digits.
    Digits,
    /// The regime reached the roundoff floor.
    Floor,
    /// The regime showed a plateau for two rungs.
    Plateau,
    /// The next rung would have taken the evaluations over this budget.
    Budget(u64),
    /// The integrator failed at this tolerance (the rung is not kept).
    Failed {
        /// The tolerance it failed at.
        tol: f64,
        /// Its explanation.
        reason: String,
    },
}

impl std::fmt::Display for LadderStop {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            LadderStop::Finest => {
                write!(f, "reached the finest tolerance 1e-{TOL_FINEST_EXPONENT}")
            }
            LadderStop::Digits => write!(f, "reached 15 digits"),
            LadderStop::Floor => write!(f, "reached the roundoff floor"),
            LadderStop::Plateau => write!(f, "stopped improving for two rungs (plateau)"),
            LadderStop::Budget(b) => write!(
                f,
                "the next rung would exceed the budget of {b} evaluations"
            ),
            LadderStop::Failed { tol, reason } => {
                write!(f, "the integrator failed at tolerance {tol:e}: {reason}")
            }
        }
    }
}

/// How an adaptive method's tolerance ladder was read.
#[derive(Clone, Debug, PartialEq)]
pub struct AdaptiveReport {
    /// The controller's asymptotic regime, where the order is fitted.
    pub regime: Option<WorkRegime>,
    /// Why no order was read (`None` when the solution series has a fit).
    pub no_order: Option<NoOrder>,
    /// Achieved error against requested tolerance over the fitted rungs.
    pub proportionality: Option<Proportionality>,
    /// Why the automatic ladder ended (`None` for a given list of tolerances).
    pub stop: Option<LadderStop>,
}
