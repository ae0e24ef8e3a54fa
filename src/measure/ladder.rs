//! Running the rungs of a ladder: the step grid of a rung, reading the
//! solution and invariant errors at its samples, the automatic choice of the
//! ladder (steps, or tolerances with the fallback to steps for integrators
//! that support only fixed steps), and self-convergence for problems with no
//! exact solution. Tolerance ladders are read from the controller's
//! asymptotic regime on ([`super::adaptive`]).

use crate::measure::adaptive::{
    auto_tolerances, proportionality, work_regime, AdaptiveReport, LadderStop, NoOrder,
    MIN_REGIME_DECADES,
};
use crate::measure::method::{advance_checked, Counted, Method};
use crate::measure::{Config, Ladder, MeasureError};
use crate::metrics::{
    analyse_series_from, digits, rounding_uncertainty, Best, RungClass, SeriesAnalysis, FLOOR_BAND,
    STALL_SLOPE,
};
use crate::problem::Problem;
use crate::stepper::{Control, Counts, IntegrateError};

/// The resolution of one rung.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Resolution {
    /// Fixed steps per time unit.
    StepsPerUnit(u64),
    /// Adaptive, at this tolerance.
    Tolerance(f64),
}

impl Resolution {
    /// The steps per time unit of a fixed-step rung.
    ///
    /// ```
    /// use drift::measure::Resolution;
    /// assert_eq!(Resolution::StepsPerUnit(64).steps_per_unit(), Some(64));
    /// assert_eq!(Resolution::Tolerance(1e-6).steps_per_unit(), None);
    /// ```
    pub fn steps_per_unit(self) -> Option<u64> {
        match self {
            Resolution::StepsPerUnit(n) => Some(n),
            Resolution::Tolerance(_) => None,
        }
    }
}

/// What the solution error is measured against.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Basis {
    /// The problem's exact solution (at the samples where it is known).
    Exact,
    /// Self-convergence (Richardson): the difference to the next finer rung
    /// at the same samples, which shrinks at the method's order. The finest
    /// rung has no figure.
    SelfConvergence,
}

/// One rung as run.
#[derive(Clone, Debug, PartialEq)]
pub struct Rung {
    /// Its resolution.
    pub resolution: Resolution,
    /// Accepted steps over the horizon.
    pub steps: u64,
    /// Right-hand-side (or force) evaluations.
    pub evals: u64,
    /// Rejected step attempts.
    pub rejected: u64,
    /// Digits of the largest component-scaled solution error over the
    /// samples (`None` for the finest rung under self-convergence).
    pub solution_digits: Option<f64>,
    /// Digits of the largest relative error of each invariant over the samples.
    pub invariant_digits: Vec<f64>,
    /// Time at which the state first stopped being finite, if it did.
    pub diverged_at: Option<f64>,
}

/// The step grid of a fixed-step rung.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Grid {
    /// Steps per time unit.
    pub steps_per_unit: u64,
    /// Steps over the horizon.
    pub total: u64,
    /// Steps between samples.
    pub stride: u64,
}

/// The grid of `n` steps per unit over `periods` units with `samples_per_unit`
/// samples per unit; an error says why it does not fit together.
///
/// ```
/// let g = drift::measure::ladder::grid(64, 10.0, 4).unwrap();
/// assert_eq!((g.total, g.stride), (640, 16));
/// assert!(drift::measure::ladder::grid(6, 10.0, 4).is_err());
/// ```
pub fn grid(n: u64, periods: f64, samples_per_unit: u64) -> Result<Grid, String> {
    if n == 0 || samples_per_unit == 0 || n % samples_per_unit != 0 {
        return Err(format!(
            "{n} steps per unit is not a positive multiple of samples_per_unit = {samples_per_unit}"
        ));
    }
    let total = n as f64 * periods;
    if !(total.is_finite()
        && total >= 1.0
        && total < 2f64.powi(53)
        && (total - total.round()).abs() < 1e-9)
    {
        return Err(format!(
            "{n} steps per unit over {periods} units is not a whole number of steps"
        ));
    }
    let total = total.round() as u64;
    let stride = n / samples_per_unit;
    if total % stride != 0 {
        return Err(format!(
            "{periods} units at {n} steps per unit do not hold a whole number of samples ({samples_per_unit} per unit)"
        ));
    }
    Ok(Grid {
        steps_per_unit: n,
        total,
        stride,
    })
}

/// The rungs of a ladder with their series analyses.
pub(crate) struct LadderRun {
    pub rungs: Vec<Rung>,
    pub basis: Basis,
    pub solution: SeriesAnalysis,
    pub invariant_analyses: Vec<SeriesAnalysis>,
    /// How a tolerance ladder was read (`None` for fixed steps).
    pub adaptive: Option<AdaptiveReport>,
}

/// A rung with the raw data needed after it ran.
struct RawRung {
    rung: Rung,
    /// Largest scaled error against the exact solution, if any sample knew it.
    exact_error: Option<f64>,
    /// States at the samples (kept only while no sample knew the exact
    /// answer: they serve self-convergence).
    samples: Vec<Vec<f64>>,
}

/// Reads errors at the samples of a run.
struct Reader<'p, P: ?Sized> {
    problem: &'p P,
    scales: Vec<f64>,
    inv0: Vec<f64>,
    inv: Vec<f64>,
    exact: Vec<f64>,
    exact_error: Option<f64>,
    inv_error: Vec<f64>,
    samples: Vec<Vec<f64>>,
}

impl<'p, P: Problem + ?Sized> Reader<'p, P> {
    fn new(problem: &'p P, y0: &[f64]) -> Self {
        let n = problem.dim();
        let m = problem.invariants().len();
        let mut scales = vec![1.0; n];
        problem.scales(&mut scales);
        let mut inv0 = vec![0.0; m];
        problem.invariant_values(problem.t0(), y0, &mut inv0);
        Reader {
            problem,
            scales,
            inv0,
            inv: vec![0.0; m],
            exact: vec![0.0; n],
            exact_error: None,
            inv_error: vec![0.0; m],
            samples: Vec::new(),
        }
    }

    fn read(&mut self, t: f64, y: &[f64]) {
        if self.problem.exact(t, &mut self.exact) {
            let e = scaled_distance(y, &self.exact, &self.scales);
            self.exact_error = Some(self.exact_error.map_or(e, |m| m.max(e)));
            // With an exact answer the samples are never compared between
            // rungs; not keeping them saves an allocation per sample.
            self.samples = Vec::new();
        } else if self.exact_error.is_none() {
            self.samples.push(y.to_vec());
        }
        self.problem.invariant_values(t, y, &mut self.inv);
        for (k, inv) in self.problem.invariants().iter().enumerate() {
            let e = (self.inv[k] - self.inv0[k]).abs() / inv.scale;
            self.inv_error[k] = self.inv_error[k].max(if e.is_nan() { f64::INFINITY } else { e });
        }
    }

    fn finish(
        self,
        resolution: Resolution,
        counts: Counts,
        evals: u64,
        diverged_at: Option<f64>,
    ) -> RawRung {
        let diverged = diverged_at.is_some();
        let rung = Rung {
            resolution,
            steps: counts.steps,
            evals,
            rejected: counts.rejected,
            solution_digits: None,
            invariant_digits: self
                .inv_error
                .iter()
                .map(|&e| if diverged { 0.0 } else { digits(e) })
                .collect(),
            diverged_at,
        };
        RawRung {
            rung,
            exact_error: if diverged {
                Some(f64::INFINITY)
            } else {
                self.exact_error
            },
            samples: self.samples,
        }
    }
}

/// Largest component-scaled difference `max_i |a_i - b_i| / s_i`; a NaN reads
/// as infinity.
pub(crate) fn scaled_distance(a: &[f64], b: &[f64], s: &[f64]) -> f64 {
    a.iter().zip(b).zip(s).fold(0.0, |m, ((x, y), s)| {
        let e = (x - y).abs() / s;
        if e.is_nan() {
            f64::INFINITY
        } else {
            m.max(e)
        }
    })
}

fn initial_state<P: Problem + ?Sized>(problem: &P) -> Vec<f64> {
    let mut y0 = vec![0.0; problem.dim()];
    problem.initial(&mut y0);
    y0
}

fn run_fixed_rung<M: Method, P: Problem + ?Sized>(
    method: &mut M,
    problem: &P,
    g: Grid,
    periods: f64,
) -> Result<RawRung, MeasureError> {
    let f = Counted::new(problem);
    let mut y = initial_state(problem);
    let mut reader = Reader::new(problem, &y);
    let t0 = problem.t0();
    let h = periods * problem.time_unit() / g.total as f64;
    let mut prev = y.clone();
    let (mut rejected, mut diverged_at) = (0, None);
    let mut i = 0;
    while i < g.total {
        let next = i + g.stride;
        let step = advance_checked(method, &f, t0, h, i, next, &mut y, &mut prev)
            .map_err(MeasureError::Integrator)?;
        rejected += step.rejected;
        if let Some(t) = step.diverged_at {
            diverged_at = Some(t);
            break;
        }
        reader.read(t0 + next as f64 * h, &y);
        i = next;
    }
    let counts = Counts {
        steps: g.total,
        rejected,
    };
    Ok(reader.finish(
        Resolution::StepsPerUnit(g.steps_per_unit),
        counts,
        f.evals(),
        diverged_at,
    ))
}

fn run_tolerance_rung<M: Method, P: Problem + ?Sized>(
    method: &mut M,
    problem: &P,
    tol: f64,
    config: &Config,
) -> Result<RawRung, MeasureError> {
    let f = Counted::new(problem);
    let mut y = initial_state(problem);
    let mut reader = Reader::new(problem, &y);
    let t0 = problem.t0();
    let horizon = config.periods * problem.time_unit();
    // One call over the whole horizon: an adaptive integrator restarted at
    // every sample would pay its start-up and its shortened last step each
    // time, which distorts the work it is measured against.
    let t1 = t0 + horizon;
    let c = method
        .adaptive(&f, t0, t1, &mut y, tol)
        .map_err(MeasureError::Integrator)?;
    let diverged_at = y.iter().any(|v| !v.is_finite()).then_some(t1);
    if diverged_at.is_none() {
        reader.read(t1, &y);
    }
    Ok(reader.finish(Resolution::Tolerance(tol), c, f.evals(), diverged_at))
}

/// Solution digits per rung on the chosen basis.
fn solution_digits<P: Problem + ?Sized>(
    problem: &P,
    raw: &[RawRung],
    basis: Basis,
) -> Vec<Option<f64>> {
    match basis {
        Basis::Exact => raw.iter().map(|r| r.exact_error.map(digits)).collect(),
        Basis::SelfConvergence => {
            let mut scales = vec![1.0; problem.dim()];
            problem.scales(&mut scales);
            (0..raw.len())
                .map(|k| {
                    let (a, b) = (&raw[k], raw.get(k + 1)?);
                    if a.rung.diverged_at.is_some() {
                        return Some(0.0);
                    }
                    if b.rung.diverged_at.is_some() || a.samples.len() != b.samples.len() {
                        return None;
                    }
                    let d = a
                        .samples
                        .iter()
                        .zip(&b.samples)
                        .map(|(x, y)| scaled_distance(x, y, &scales))
                        .fold(0.0, f64::max);
                    Some(digits(d))
                })
                .collect()
        }
    }
}

fn x_axis(rungs: &[RawRung]) -> Vec<f64> {
    rungs
        .iter()
        .map(|r| match r.rung.resolution {
            Resolution::StepsPerUnit(n) => (n as f64).log10(),
            Resolution::Tolerance(_) => (r.rung.evals.max(1) as f64).log10(),
        })
        .collect()
}

/// The series `d` over the rungs, read from rung `start` on.
/// At tolerances this tight or tighter, a rung that stops improving is the
/// floor, however far above rounding it sits: the error achieved there is
/// set by the problem's conditioning times rounding, not by the controller
/// (a correct DOP853 stalls at 9 digits on the Arenstorf orbit from 1e-13
/// on, above the bound of `metrics::rounding_digits` for its 1000 steps,
/// while on Kepler it keeps improving down to 1e-15). Common practice, no
/// source.
pub const TIGHTEST_READ: f64 = 1e-12;

/// The first rung a tolerance ladder does not read: at a tolerance of at
/// most [`TIGHTEST_READ`], the first that does not improve on the rung
/// before it by [`STALL_SLOPE`] digits per decade of evaluations (the
/// conditioning floor), or else the first within [`FLOOR_BAND`] digits of
/// the most digits the ladder reached. An adaptive run approaches its floor
/// gradually, its local slope drifting by a few tenths over the last two
/// digits (Dormand-Prince 5(4) on the power-law oscillator: 4.98, 4.84,
/// 4.65, 3.71 above 10 digits), with no stall to mark it. Common practice,
/// no source. `None` for fixed steps.
fn tolerance_floor(raw: &[RawRung], d: &[Option<f64>]) -> Option<usize> {
    let tolerance = |k: usize| match raw[k].rung.resolution {
        Resolution::Tolerance(t) => Some(t),
        Resolution::StepsPerUnit(_) => None,
    };
    tolerance(0)?;
    let x = x_axis(raw);
    let stalled = (1..raw.len()).find(|&k| {
        let tight = tolerance(k).is_some_and(|t| t <= TIGHTEST_READ);
        let (Some(a), Some(b)) = (d[k - 1], d[k]) else {
            return false;
        };
        let dx = x[k] - x[k - 1];
        tight && dx > 0.0 && (b - a) / dx < STALL_SLOPE
    });
    let end = stalled.unwrap_or(raw.len());
    let most = d[..end].iter().flatten().copied().fold(f64::MIN, f64::max);
    (0..end)
        .find(|&k| d[k].is_some_and(|v| v > most - FLOOR_BAND))
        .or(stalled)
}

fn analyse(raw: &[RawRung], d: &[Option<f64>], start: usize) -> SeriesAnalysis {
    let steps: Vec<u64> = raw.iter().map(|r| r.rung.steps).collect();
    let Some(cut) = tolerance_floor(raw, d) else {
        return analyse_series_from(&x_axis(raw), d, &steps, start);
    };
    // The rungs from the cut on are near the floor: not read, but kept for
    // the best digits.
    let read: Vec<Option<f64>> = d
        .iter()
        .enumerate()
        .map(|(k, v)| v.filter(|_| k < cut))
        .collect();
    let mut a = analyse_series_from(&x_axis(raw), &read, &steps, start.min(cut));
    for (k, v) in d.iter().enumerate().skip(cut) {
        let Some(v) = *v else { continue };
        a.classes[k] = RungClass::NearFloor;
        if a.best.is_none_or(|b| v > b.digits) {
            a.best = Some(Best {
                digits: v,
                rung: k,
                uncertainty: rounding_uncertainty(steps[k], v),
            });
        }
    }
    a
}

/// The tolerances and evaluations of tolerance rungs (empty for fixed steps).
fn tolerance_axes(raw: &[RawRung]) -> (Vec<f64>, Vec<u64>) {
    raw.iter()
        .filter_map(|r| match r.rung.resolution {
            Resolution::Tolerance(t) => Some((t, r.rung.evals)),
            Resolution::StepsPerUnit(_) => None,
        })
        .unzip()
}

/// The first rung of the fit: 0 for fixed steps; for tolerances the start
/// of the controller's asymptotic regime (the whole ladder when there is
/// none, so nothing is fitted).
fn fit_start(raw: &[RawRung]) -> usize {
    let (tols, evals) = tolerance_axes(raw);
    if tols.is_empty() {
        return 0;
    }
    work_regime(&tols, &evals).map_or(raw.len(), |r| r.start)
}

/// Whether the automatic step ladder can stop after the rungs so far.
fn ladder_done<P: Problem + ?Sized>(problem: &P, raw: &[RawRung], basis: Basis) -> bool {
    let d = solution_digits(problem, raw, basis);
    let a = analyse(raw, &d, 0);
    let latest = d.iter().rev().flatten().next().copied().unwrap_or(0.0);
    let plateau_rungs = a.plateau_from.map_or(0, |p| raw.len() - p);
    latest >= 15.0 || a.floor_from.is_some() || plateau_rungs >= 2
}

/// Why the automatic tolerance ladder can stop after the rungs so far, if
/// it can: 15 digits anywhere, or the roundoff floor within the
/// controller's regime. A plateau does not stop it: on a ladder still
/// growing, the regime found so far may start too early, and an apparent
/// plateau there is often the controller settling; the ladder is bounded
/// by its finest tolerance anyway.
fn tolerances_done<P: Problem + ?Sized>(
    problem: &P,
    raw: &[RawRung],
    basis: Basis,
) -> Option<LadderStop> {
    let d = solution_digits(problem, raw, basis);
    if d.iter().rev().flatten().next().is_some_and(|&x| x >= 15.0) {
        return Some(LadderStop::Digits);
    }
    let (tols, evals) = tolerance_axes(raw);
    let start = work_regime(&tols, &evals).ok()?.start;
    analyse(raw, &d, start)
        .floor_from
        .map(|_| LadderStop::Floor)
}

/// Whether the order fit of a tolerance ladder spans at least
/// [`MIN_REGIME_DECADES`] decades of tolerance (always true on fixed steps).
fn fit_spans_regime(raw: &[RawRung], a: &SeriesAnalysis) -> bool {
    let Some(f) = a.fit else { return true };
    match (raw[f.first].rung.resolution, raw[f.last].rung.resolution) {
        (Resolution::Tolerance(a), Resolution::Tolerance(b)) => {
            b > 0.0 && a / b >= 10f64.powf(MIN_REGIME_DECADES) * (1.0 - 1e-9)
        }
        _ => true,
    }
}

fn basis_of(first: &RawRung) -> Basis {
    if first.exact_error.is_some() {
        Basis::Exact
    } else {
        Basis::SelfConvergence
    }
}

/// The automatic step ladder: steps per unit doubling from `start` (see
/// [`Ladder::Auto`]).
fn run_auto_steps<M: Method, P: Problem + ?Sized>(
    method: &mut M,
    problem: &P,
    config: &Config,
    (start, max_rungs, budget): (u64, usize, u64),
    raw: &mut Vec<RawRung>,
) -> Result<(), MeasureError> {
    let (mut n, mut total) = (start, 0u64);
    loop {
        let g = grid(n, config.periods, config.samples_per_unit).map_err(MeasureError::Config)?;
        if !raw.is_empty() && total.saturating_add(g.total) > budget {
            // Out of budget while the local slope still moves: one more
            // rung at the fine end with what is left.
            if raw.len() < max_rungs && still_converging(problem, raw, basis_of(&raw[0])) {
                if let Some(g) = refinement(n / 2, budget.saturating_sub(total), config) {
                    raw.push(run_fixed_rung(method, problem, g, config.periods)?);
                }
            }
            return Ok(());
        }
        raw.push(run_fixed_rung(method, problem, g, config.periods)?);
        total += g.total;
        if raw.len() >= max_rungs || ladder_done(problem, raw, basis_of(&raw[0])) {
            return Ok(());
        }
        match n.checked_mul(2) {
            Some(next) => n = next,
            None => return Ok(()),
        }
    }
}

/// Whether the order reading of the rungs so far is not (yet) asymptotic.
fn still_converging<P: Problem + ?Sized>(problem: &P, raw: &[RawRung], basis: Basis) -> bool {
    let d = solution_digits(problem, raw, basis);
    analyse(raw, &d, 0)
        .fit
        .is_none_or(|f| f.status != crate::metrics::FitStatus::Asymptotic)
}

/// One more rung between `last` and `2 last` steps per unit that fits the
/// `left` steps of the budget: the finest of `last * k / 8` for k = 15
/// down to 9 whose grid is whole.
fn refinement(last: u64, left: u64, config: &Config) -> Option<Grid> {
    (9..16u64).rev().find_map(|k| {
        let n = last.checked_mul(k)? / 8;
        let g = grid(n, config.periods, config.samples_per_unit).ok()?;
        (n * 8 == last * k && g.total <= left).then_some(g)
    })
}

/// Consecutive failed rungs that end the automatic tolerance ladder.
const FAILURES_TO_STOP: usize = 2;

/// The automatic tolerance ladder: the tolerances of [`auto_tolerances`]
/// until a stop rule holds. A rung the integrator fails on is left out (a
/// coarse tolerance can lose an orbit that finer ones follow); two in a row
/// end the ladder. `first` is the outcome of the first rung, already run.
fn run_auto_tolerances<M: Method, P: Problem + ?Sized>(
    method: &mut M,
    problem: &P,
    config: &Config,
    budget: u64,
    first: Result<RawRung, IntegrateError>,
    raw: &mut Vec<RawRung>,
) -> Result<LadderStop, MeasureError> {
    let mut pending = Some(first);
    let (mut fails, mut total) = (0, 0u64);
    for tol in auto_tolerances() {
        let outcome = match pending.take() {
            Some(first) => first,
            None => {
                if let Some(stop) = raw
                    .first()
                    .and_then(|f| tolerances_done(problem, raw, basis_of(f)))
                {
                    return Ok(stop);
                }
                // The next rung's work, extrapolated geometrically.
                let e: Vec<f64> = raw
                    .iter()
                    .rev()
                    .take(2)
                    .map(|r| r.rung.evals.max(1) as f64)
                    .collect();
                let next = match e.as_slice() {
                    [a, b] => a * a / b,
                    [a] => 2.0 * a,
                    _ => 0.0,
                };
                if total as f64 + next > budget as f64 {
                    return Ok(LadderStop::Budget(budget));
                }
                match run_tolerance_rung(method, problem, tol, config) {
                    Err(MeasureError::Integrator(e)) => Err(e),
                    other => Ok(other?),
                }
            }
        };
        match outcome {
            Ok(r) => {
                total = total.saturating_add(r.rung.evals);
                raw.push(r);
                fails = 0;
            }
            Err(e) => {
                fails += 1;
                if fails >= FAILURES_TO_STOP {
                    if raw.is_empty() {
                        return Err(MeasureError::Integrator(e));
                    }
                    return Ok(LadderStop::Failed {
                        tol,
                        reason: e.to_string(),
                    });
                }
            }
        }
    }
    let basis = raw.first().map(basis_of).unwrap_or(Basis::Exact);
    Ok(tolerances_done(problem, raw, basis).unwrap_or(LadderStop::Finest))
}

/// How the tolerance rungs were read: regime, the reason for no order,
/// proportionality over the fitted rungs.
fn adaptive_report(
    raw: &[RawRung],
    d: &[Option<f64>],
    solution: &SeriesAnalysis,
    stop: Option<LadderStop>,
) -> Option<AdaptiveReport> {
    let (tols, evals) = tolerance_axes(raw);
    if tols.is_empty() {
        return None;
    }
    let regime = work_regime(&tols, &evals);
    let no_order = match (&regime, solution.fit) {
        (_, Some(_)) => None,
        (Ok(r), None) => Some(NoOrder::RegimeUnresolved { start: r.start }),
        (Err(e), None) => Some(e.clone()),
    };
    Some(AdaptiveReport {
        regime: regime.ok(),
        no_order,
        proportionality: solution
            .fit
            .and_then(|f| proportionality(&tols, d, f.first, f.last)),
        stop,
    })
}

/// Runs every rung of the configured ladder.
pub(crate) fn run<M: Method, P: Problem + ?Sized>(
    method: &mut M,
    problem: &P,
    config: &Config,
) -> Result<LadderRun, MeasureError> {
    let mut raw: Vec<RawRung> = Vec::new();
    let mut stop = None;
    match &config.ladder {
        Ladder::Steps(steps) => {
            for &n in steps {
                let g = grid(n, config.periods, config.samples_per_unit)
                    .map_err(MeasureError::Config)?;
                raw.push(run_fixed_rung(method, problem, g, config.periods)?);
            }
        }
        Ladder::Tolerances(tols) => {
            for &tol in tols {
                raw.push(run_tolerance_rung(method, problem, tol, config)?);
            }
        }
        Ladder::Auto {
            start,
            max_rungs,
            budget,
        } => run_auto_steps(
            method,
            problem,
            config,
            (*start, *max_rungs, *budget),
            &mut raw,
        )?,
        Ladder::AutoTolerances {
            budget,
            start,
            max_rungs,
        } => {
            let first = auto_tolerances()[0];
            match run_tolerance_rung(method, problem, first, config) {
                // Fixed steps only: the automatic step ladder instead.
                Err(MeasureError::Integrator(IntegrateError::Unsupported(
                    Control::Tolerance { .. },
                ))) => run_auto_steps(
                    method,
                    problem,
                    config,
                    (*start, *max_rungs, *budget),
                    &mut raw,
                )?,
                rung => {
                    // A failed first rung is left out like any other.
                    let first = match rung {
                        Err(MeasureError::Integrator(e)) => Err(e),
                        other => Ok(other?),
                    };
                    stop = Some(run_auto_tolerances(
                        method, problem, config, *budget, first, &mut raw,
                    )?)
                }
            }
        }
    }
    let first = raw
        .first()
        .ok_or_else(|| MeasureError::Config("the ladder ran no rung".into()))?;
    let basis = basis_of(first);
    let d = solution_digits(problem, &raw, basis);
    let start = fit_start(&raw);
    let mut solution = analyse(&raw, &d, start);
    if !fit_spans_regime(&raw, &solution) {
        // Too short a fit to be an order: nothing is fitted, but the
        // digits and the best reached stay.
        solution.fit = None;
        for c in &mut solution.classes {
            if *c == RungClass::Fitted {
                *c = RungClass::PreAsymptotic;
            }
        }
    }
    let invariant_analyses = (0..problem.invariants().len())
        .map(|k| {
            let dk: Vec<Option<f64>> = raw
                .iter()
                .map(|r| r.rung.invariant_digits.get(k).copied())
                .collect();
            analyse(&raw, &dk, start)
        })
        .collect();
    let adaptive = adaptive_report(&raw, &d, &solution, stop);
    let rungs = raw
        .into_iter()
        .zip(d)
        .map(|(r, d)| Rung {
            solution_digits: d,
            ..r.rung
        })
        .collect();
    Ok(LadderRun {
        rungs,
        basis,
        solution,
        invariant_analyses,
        adaptive,
    })
}
