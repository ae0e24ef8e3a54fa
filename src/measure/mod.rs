//! Running a check: a user method on a problem over a ladder of resolutions,
//! and what comes out of it ([`Measurement`]).
//!
//! The parts: [`method`] adapts the three user traits to one driving
//! interface; [`ladder`] runs the rungs (fixed step counts or tolerances)
//! and reads solution and invariant errors at the samples; [`adaptive`]
//! reads a tolerance ladder as a work-precision diagram; [`long_run`]
//! measures drift, period, virial residual and reversibility. The figures
//! are computed by the pure functions of [`crate::metrics`].

pub mod adaptive;
pub mod ladder;
pub mod long_run;
pub mod method;

pub use adaptive::{AdaptiveReport, LadderStop, NoOrder, Proportionality, WorkRegime};
pub use ladder::{Basis, Resolution, Rung};
pub use long_run::{Envelope, LongRunReport, PeriodReport};
pub use method::{Counted, Fixed, Method, MethodKind, Split, Whole};

use crate::metrics::{DriftClass, DriftFit, SeriesAnalysis};
use crate::problem::Problem;
use crate::stepper::{Control, IntegrateError};

/// Which resolutions a check runs at.
#[derive(Clone, Debug, PartialEq)]
pub enum Ladder {
    /// Exactly these steps per time unit (strictly increasing).
    Steps(Vec<u64>),
    /// Steps per time unit doubling from `start` until the solution reaches
    /// 15 digits, the roundoff floor is reached, a plateau persists for two
    /// rungs, `max_rungs` rungs have run, or the next rung would take the
    /// total steps of the ladder over `budget`.
    Auto {
        /// Steps per time unit of the first rung.
        start: u64,
        /// Most rungs.
        max_rungs: usize,
        /// Most steps summed over all rungs.
        budget: u64,
    },
    /// For integrators: adaptive runs at these tolerances (relative and
    /// absolute alike), coarse to fine. Each rung is one call over the whole
    /// horizon, and its error is read at the end. The order is read from the
    /// controller's asymptotic regime on ([`adaptive::work_regime`]).
    Tolerances(Vec<f64>),
    /// For integrators: the tolerances of [`adaptive::auto_tolerances`]
    /// (1e-2 down to 1e-15, half a decade apart) until the solution reaches
    /// 15 digits, the controller's regime reaches the roundoff floor or a
    /// plateau over a decade of tolerance, the integrator fails at a
    /// tolerance (that rung is dropped), or the next rung would take the
    /// evaluations summed over the ladder over `budget`. An integrator that
    /// refuses tolerances ([`IntegrateError::Unsupported`]) on the first
    /// rung runs [`Ladder::Auto`] with `start`, `max_rungs` and `budget`
    /// (then in steps) instead.
    AutoTolerances {
        /// Most right-hand-side evaluations summed over the rungs (most
        /// steps for the step ladder of a fixed-step-only integrator).
        budget: u64,
        /// First rung of the step ladder of a fixed-step-only integrator.
        start: u64,
        /// Most rungs of that step ladder.
        max_rungs: usize,
    },
}

impl Default for Ladder {
    fn default() -> Self {
        Ladder::Auto {
            start: 16,
            max_rungs: 14,
            budget: 4_000_000,
        }
    }
}

impl Ladder {
    /// The default tolerance ladder for integrators: 1e-4 down to 1e-13 by
    /// decades.
    ///
    /// ```
    /// let drift::measure::Ladder::Tolerances(t) = drift::measure::Ladder::default_tolerances() else { panic!() };
    /// assert_eq!(t.len(), 10);
    /// ```
    pub fn default_tolerances() -> Ladder {
        Ladder::Tolerances((4..=13).map(|k| 10f64.powi(-k)).collect())
    }

    /// The automatic tolerance ladder with the step ladder of
    /// [`Ladder::default`] as its fallback.
    ///
    /// ```
    /// use drift::measure::Ladder;
    /// assert!(matches!(Ladder::default_adaptive(), Ladder::AutoTolerances { budget: 4_000_000, .. }));
    /// ```
    pub fn default_adaptive() -> Ladder {
        let Ladder::Auto {
            start,
            max_rungs,
            budget,
        } = Ladder::default()
        else {
            unreachable!("the default ladder is automatic")
        };
        Ladder::AutoTolerances {
            budget,
            start,
            max_rungs,
        }
    }
}

/// Least solution digits of a ladder rung for the long run to run at its
/// resolution: the truncation error is then well above rounding, so the
/// drift of the method shows (common practice, no source).
pub const LONG_RUN_DIGITS: f64 = 3.0;

/// One run beside the ladder at one resolution over one horizon: where the
/// long run or the reversibility run was made, as a baseline stores it, and
/// what a later run repeats.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RunAt {
    /// Steps per time unit.
    pub steps_per_unit: u64,
    /// Horizon in time units.
    pub periods: f64,
}

/// The long run that measures drift, period and virial residual.
#[derive(Clone, Debug, PartialEq)]
pub struct LongRun {
    /// The horizon asked for, in time units.
    pub periods: f64,
    /// Steps per time unit; `None` chooses from the ladder ([`LongRun::choose`]).
    pub steps_per_unit: Option<u64>,
    /// Most steps in each direction: when `periods` at the chosen resolution
    /// would take more, the run is shortened to the whole number of time
    /// units that fits (at least one). The report gives the length used.
    pub max_steps: u64,
    /// A recorded long run to repeat as it is (resolution and horizon, the
    /// horizon still capped by `max_steps`); it takes precedence over
    /// `steps_per_unit` and the automatic choice. The harness sets it from
    /// the baseline, so a worse method is measured where the recorded one was.
    pub repeat: Option<RunAt>,
}

impl LongRun {
    /// The length actually run at `n` steps per unit: `periods`, shortened to
    /// fit `max_steps`.
    ///
    /// ```
    /// let lr = drift::measure::LongRun { periods: 1000.0, max_steps: 64_000, ..Default::default() };
    /// assert_eq!(lr.periods_at(32), 1000.0);
    /// assert_eq!(lr.periods_at(256), 250.0);
    /// assert_eq!(lr.periods_at(1 << 20), 1.0);
    /// ```
    pub fn periods_at(&self, n: u64) -> f64 {
        let fits = (self.max_steps / n.max(1)).max(1) as f64;
        self.periods.min(fits)
    }

    /// Whether the whole horizon fits `max_steps` at `n` steps per unit.
    fn fits(&self, n: u64) -> bool {
        self.periods_at(n) >= self.periods
    }

    /// Where the long run is made after a ladder whose rungs are `rungs`
    /// (`fallback` steps per unit when no rung ran at fixed steps):
    /// `repeat`, else `steps_per_unit`, else the automatic choice. That is
    /// the coarsest rung with at least [`LONG_RUN_DIGITS`] solution digits
    /// when the whole horizon fits `max_steps` there; else the finest rung
    /// at which it fits; else the coarsest rung over a shortened horizon.
    ///
    /// The whole horizon comes first because the drift class needs it: a
    /// method's energy error oscillates within each period and its secular
    /// part shows only after many periods (Hairer, Lubich and Wanner,
    /// Geometric Numerical Integration, 2nd ed., ch. IX, where symplectic and
    /// non-symplectic methods part only over long times). A finer resolution
    /// would shrink the secular part faster than the oscillation for
    /// methods whose leading error term conserves energy.
    ///
    /// ```
    /// use drift::measure::{LongRun, Resolution, RunAt, Rung};
    /// let rung = |n: u64, d: f64| Rung {
    ///     resolution: Resolution::StepsPerUnit(n), steps: 10 * n, evals: 20 * n, rejected: 0,
    ///     solution_digits: Some(d), invariant_digits: vec![], diverged_at: None,
    /// };
    /// let lr = LongRun { periods: 1000.0, max_steps: 1_000_000, ..Default::default() };
    /// // 3 digits at 64 steps per unit, and 64 000 steps fit.
    /// let ladder = [rung(16, 1.8), rung(32, 2.4), rung(64, 3.1), rung(128, 3.7)];
    /// assert_eq!(lr.choose(&ladder, 64), RunAt { steps_per_unit: 64, periods: 1000.0 });
    /// // 3 digits only at 2048 steps per unit, which would need 2.048e6 steps:
    /// // the finest rung that fits the whole horizon instead.
    /// let slow: Vec<Rung> = (4..=11).map(|k| rung(1 << k, 0.3 * (k - 4) as f64)).collect();
    /// assert_eq!(lr.choose(&slow, 64), RunAt { steps_per_unit: 512, periods: 1000.0 });
    /// // Nothing fits: the coarsest rung, shortened.
    /// let tight = LongRun { max_steps: 8_000, ..lr.clone() };
    /// assert_eq!(tight.choose(&slow, 64), RunAt { steps_per_unit: 16, periods: 500.0 });
    /// // A recorded run repeats.
    /// let again = LongRun { repeat: Some(RunAt { steps_per_unit: 32, periods: 1000.0 }), ..lr };
    /// assert_eq!(again.choose(&slow, 64), RunAt { steps_per_unit: 32, periods: 1000.0 });
    /// ```
    pub fn choose(&self, rungs: &[Rung], fallback: u64) -> RunAt {
        let at = |n: u64| RunAt {
            steps_per_unit: n,
            periods: self.periods_at(n),
        };
        if let Some(r) = self.repeat {
            return RunAt {
                periods: r.periods.min(self.periods_at(r.steps_per_unit)),
                ..r
            };
        }
        if let Some(n) = self.steps_per_unit {
            return at(n);
        }
        let fixed: Vec<(u64, Option<f64>)> = rungs
            .iter()
            .filter_map(|r| Some((r.resolution.steps_per_unit()?, r.solution_digits)))
            .collect();
        let accurate = fixed
            .iter()
            .find(|(_, d)| d.is_some_and(|d| d >= LONG_RUN_DIGITS))
            .map(|&(n, _)| n)
            .filter(|&n| self.fits(n));
        let fitting = || fixed.iter().rev().map(|&(n, _)| n).find(|&n| self.fits(n));
        let n = accurate
            .or_else(fitting)
            .or_else(|| fixed.iter().map(|&(n, _)| n).min())
            .unwrap_or(fallback);
        at(n)
    }
}

impl Default for LongRun {
    fn default() -> Self {
        LongRun {
            max_steps: 1_000_000,
            periods: 1000.0,
            steps_per_unit: None,
            repeat: None,
        }
    }
}

/// What to measure, and how hard.
#[derive(Clone, Debug, PartialEq)]
pub struct Config {
    /// The resolutions.
    pub ladder: Ladder,
    /// Horizon of each rung, in time units of the problem.
    pub periods: f64,
    /// Samples per time unit at which errors are read (the steps per time
    /// unit of every rung must be a multiple of it).
    pub samples_per_unit: u64,
    /// The long run, or `None` to skip drift, period and virial.
    pub long_run: Option<LongRun>,
    /// Whether to measure forward-then-backward reversibility.
    pub reversibility: bool,
    /// Where the reversibility run is made; `None`: at the long run's
    /// resolution (without a long run, the first rung's) over the ladder's
    /// horizon. The harness sets it from the baseline, as it sets
    /// [`LongRun::repeat`].
    pub reversibility_at: Option<RunAt>,
}

impl Default for Config {
    fn default() -> Self {
        Config {
            ladder: Ladder::default(),
            periods: 10.0,
            samples_per_unit: 4,
            long_run: Some(LongRun::default()),
            reversibility: true,
            reversibility_at: None,
        }
    }
}

/// The figures of one conserved quantity.
#[derive(Clone, Debug, PartialEq)]
pub struct InvariantReport {
    /// Its name.
    pub name: String,
    /// Its digits over the ladder, read as a series (order, floor, plateau).
    pub analysis: SeriesAnalysis,
    /// Drift over the long run forward in time.
    pub drift_forward: Option<DriftFit>,
    /// Drift over the long run backward in time.
    pub drift_backward: Option<DriftFit>,
}

/// Where a run produced a NaN or an infinity.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Divergence {
    /// The rung (`None`: the long run or the reversibility run).
    pub rung: Option<usize>,
    /// Time of the first step whose result was not finite.
    pub t: f64,
}

/// Everything measured of one method on one problem.
#[derive(Clone, Debug, PartialEq)]
pub struct Measurement {
    /// The problem's name.
    pub problem: String,
    /// The kind of method.
    pub kind: MethodKind,
    /// Whether the solution error is against the exact solution or by
    /// self-convergence.
    pub basis: Basis,
    /// The rungs run, coarse to fine.
    pub rungs: Vec<Rung>,
    /// The solution digits over the ladder read as a series: order fit with
    /// its range and residual, floor, plateau.
    pub solution: SeriesAnalysis,
    /// One report per invariant of the problem.
    pub invariants: Vec<InvariantReport>,
    /// The long run, when configured and supported.
    pub long_run: Option<LongRunReport>,
    /// Digits to which forward-then-backward stepping returns to the initial
    /// state (at the long run's resolution over the ladder's horizon).
    pub reversibility_digits: Option<f64>,
    /// Where the reversibility run was made, when it was.
    pub reversibility_run: Option<RunAt>,
    /// Right-hand-side evaluations per accepted step, on the finest rung.
    pub evals_per_step: f64,
    /// A NaN or infinity in the finest rung: the method diverged.
    /// (Divergence of coarse rungs is recorded in the rung only; a long run
    /// that blows up reads as growing drift, a reversibility run that does
    /// as 0 digits: the method's behaviour at that resolution, not a fault.)
    pub diverged: Option<Divergence>,
    /// How a tolerance ladder was read: the controller's regime, tolerance
    /// proportionality, why no order was read (`None` on fixed steps).
    pub adaptive: Option<AdaptiveReport>,
}

/// Why a measurement could not be made.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum MeasureError {
    /// The method cannot run on this problem.
    Incompatible(String),
    /// The configuration is unusable (the message says which field and why).
    Config(String),
    /// The user's method panicked; the panic message.
    Panicked(String),
    /// The integrator refused or failed.
    Integrator(IntegrateError),
}

impl std::fmt::Display for MeasureError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            MeasureError::Incompatible(m) => write!(f, "incompatible: {m}"),
            MeasureError::Config(m) => write!(f, "configuration: {m}"),
            MeasureError::Panicked(m) => write!(f, "the method panicked: {m}"),
            MeasureError::Integrator(e) => {
                write!(f, "{e}")?;
                if let Some(help) = integrator_help(e) {
                    write!(f, "\n  help: {help}")?;
                }
                Ok(())
            }
        }
    }
}

/// What to change in `drift.toml` when an integrator refuses how it is driven.
fn integrator_help(e: &IntegrateError) -> Option<&'static str> {
    match e {
        IntegrateError::Unsupported(Control::Tolerance { .. }) => Some(
            "this integrator supports fixed steps only: remove `tolerances` from the check in drift.toml for an automatic step ladder, or give `ladder = [...]` (steps per period)",
        ),
        IntegrateError::Unsupported(Control::Steps(_)) => Some(
            "this integrator supports tolerances only: remove `ladder` from the check in drift.toml for the automatic tolerance ladder, or give `tolerances = [...]`",
        ),
        _ => None,
    }
}

impl std::error::Error for MeasureError {}

/// Measures `method` on `problem` as `config` says. A panic inside the user's
/// method is caught and returned as [`MeasureError::Panicked`]; a NaN or
/// infinity is reported as a divergence at its time, never a panic.
///
/// ```
/// use drift::measure::{measure, Config, Fixed, Ladder};
/// use drift::{Problem, Rhs, Stepper};
/// /// y' = i y as two real components, exact solution (cos t, sin t).
/// struct Rotation;
/// impl Rhs for Rotation {
///     fn dim(&self) -> usize { 2 }
///     fn rhs(&self, _t: f64, y: &[f64], d: &mut [f64]) { d[0] = -y[1]; d[1] = y[0]; }
/// }
/// impl Problem for Rotation {
///     fn name(&self) -> &str { "rotation" }
///     fn initial(&self, y0: &mut [f64]) { y0.copy_from_slice(&[1.0, 0.0]); }
///     fn time_unit(&self) -> f64 { std::f64::consts::TAU }
///     fn exact(&self, t: f64, y: &mut [f64]) -> bool { y[0] = t.cos(); y[1] = t.sin(); true }
/// }
/// /// Heun's method (Hairer-Norsett-Wanner I, II.1), order 2.
/// #[derive(Default)]
/// struct Heun { k1: Vec<f64>, k2: Vec<f64>, y1: Vec<f64> }
/// impl Stepper for Heun {
///     fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
///         let n = y.len();
///         self.k1.resize(n, 0.0); self.k2.resize(n, 0.0); self.y1.resize(n, 0.0);
///         f.rhs(t, y, &mut self.k1);
///         for i in 0..n { self.y1[i] = y[i] + h * self.k1[i]; }
///         f.rhs(t + h, &self.y1, &mut self.k2);
///         for i in 0..n { y[i] += 0.5 * h * (self.k1[i] + self.k2[i]); }
///     }
/// }
/// let config = Config { ladder: Ladder::Steps(vec![64, 128, 256, 512]), long_run: None, ..Config::default() };
/// let m = measure(&mut Fixed(Heun::default()), &Rotation, &config).unwrap();
/// let fit = m.solution.fit.unwrap();
/// assert!((fit.order - 2.0).abs() < 0.05, "order {}", fit.order);
/// assert_eq!(m.evals_per_step, 2.0);
/// ```
pub fn measure<M: Method, P: Problem + ?Sized>(
    method: &mut M,
    problem: &P,
    config: &Config,
) -> Result<Measurement, MeasureError> {
    let run = std::panic::AssertUnwindSafe(|| measure_inner(method, problem, config));
    match std::panic::catch_unwind(run) {
        Ok(result) => result,
        Err(payload) => {
            let msg = payload
                .downcast_ref::<&str>()
                .map(|s| s.to_string())
                .or_else(|| payload.downcast_ref::<String>().cloned())
                .unwrap_or_else(|| "(no message)".to_string());
            Err(MeasureError::Panicked(msg))
        }
    }
}

fn measure_inner<M: Method, P: Problem + ?Sized>(
    method: &mut M,
    problem: &P,
    config: &Config,
) -> Result<Measurement, MeasureError> {
    validate(problem, config)?;
    method
        .compatible(problem)
        .map_err(MeasureError::Incompatible)?;
    let lad = ladder::run(method, problem, config)?;
    let finest = lad
        .rungs
        .last()
        .ok_or_else(|| MeasureError::Config("the ladder ran no rung".into()))?;
    let evals_per_step = if finest.steps > 0 {
        finest.evals as f64 / finest.steps as f64
    } else {
        0.0
    };
    let diverged = finest.diverged_at.map(|t| Divergence {
        rung: Some(lad.rungs.len() - 1),
        t,
    });

    // Fixed steps ran (a tolerance ladder falls back to steps for an
    // integrator that supports only fixed steps).
    let fixed_ladder = lad.adaptive.is_none();
    let fallback = config.samples_per_unit * 64;
    let long_at = config
        .long_run
        .as_ref()
        .map(|lr| (lr, lr.choose(&lad.rungs, fallback)));
    let mut long = None;
    let mut invariant_drift = vec![(None, None); problem.invariants().len()];
    if let (Some((lr, at)), true) = (long_at, fixed_ladder && long_run_measures(problem)) {
        match long_run::run(method, problem, at, lr.periods, config.samples_per_unit) {
            Ok(report) => {
                // A long run that blows up at a resolution the ladder read
                // cleanly is the method's unbounded growth there, not a
                // fault: its invariants read as growing (explicit Euler on
                // an oscillator gains energy geometrically, HNW I, II.1).
                let blown = report.diverged_at.is_some();
                let grown = |d: Option<DriftFit>| {
                    if blown {
                        Some(DriftFit {
                            class: DriftClass::Growing,
                            max_error: f64::INFINITY,
                            exponent: d.map_or(f64::INFINITY, |d| {
                                d.exponent.max(DriftClass::Linear.upper_exponent())
                            }),
                        })
                    } else {
                        d
                    }
                };
                for (k, slot) in invariant_drift.iter_mut().enumerate() {
                    *slot = (
                        grown(report.drift_forward.get(k).copied().flatten()),
                        grown(report.drift_backward.get(k).copied().flatten()),
                    );
                }
                long = Some(report);
            }
            Err(IntegrateError::Unsupported(_)) => {}
            Err(e) => return Err(MeasureError::Integrator(e)),
        }
    }
    let mut reversibility_digits = None;
    let mut reversibility_run = None;
    if config.reversibility && fixed_ladder {
        let at = config.reversibility_at.unwrap_or_else(|| RunAt {
            steps_per_unit: long_at.map_or_else(
                || lad.rungs[0].resolution.steps_per_unit().unwrap_or(64),
                |(_, at)| at.steps_per_unit,
            ),
            periods: config.periods,
        });
        match long_run::reversibility(method, problem, at.steps_per_unit, at.periods) {
            Ok(Ok(d)) => {
                reversibility_digits = Some(d);
                reversibility_run = Some(at);
            }
            // Blown up on the way there or back at a resolution the ladder
            // read cleanly: the method does not return at all.
            Ok(Err(_)) => {
                reversibility_digits = Some(0.0);
                reversibility_run = Some(at);
            }
            Err(IntegrateError::Unsupported(_)) => {}
            Err(e) => return Err(MeasureError::Integrator(e)),
        }
    }

    let invariants = problem
        .invariants()
        .iter()
        .zip(lad.invariant_analyses)
        .zip(invariant_drift)
        .map(|((inv, analysis), (fwd, bwd))| InvariantReport {
            name: inv.name.to_string(),
            analysis,
            drift_forward: fwd,
            drift_backward: bwd,
        })
        .collect();
    Ok(Measurement {
        problem: problem.name().to_string(),
        kind: method.kind(),
        basis: lad.basis,
        solution: lad.solution,
        rungs: lad.rungs,
        invariants,
        long_run: long,
        reversibility_digits,
        reversibility_run,
        evals_per_step,
        diverged,
        adaptive: lad.adaptive,
    })
}

/// Whether the long run has anything to measure on `problem`: invariants,
/// a period or virial terms.
fn long_run_measures<P: Problem + ?Sized>(problem: &P) -> bool {
    let mut y0 = vec![0.0; problem.dim()];
    problem.initial(&mut y0);
    !problem.invariants().is_empty()
        || problem.period().is_some()
        || problem.virial_terms(&y0).is_some()
}

fn validate<P: Problem + ?Sized>(problem: &P, config: &Config) -> Result<(), MeasureError> {
    let bad = |m: String| Err(MeasureError::Config(m));
    let unit = problem.time_unit();
    if !(unit.is_finite() && unit > 0.0) {
        return bad(format!(
            "problem `{}` has time unit {unit}; it must be positive and finite",
            problem.name()
        ));
    }
    if problem.dim() == 0 {
        return bad(format!("problem `{}` has dimension 0", problem.name()));
    }
    if !(config.periods.is_finite() && config.periods > 0.0) {
        return bad(format!(
            "periods = {} must be positive and finite",
            config.periods
        ));
    }
    if config.samples_per_unit == 0 {
        return bad("samples_per_unit must be at least 1".into());
    }
    if let Some(lr) = &config.long_run {
        if !(lr.periods.is_finite() && lr.periods > 0.0) {
            return bad(format!(
                "long-run periods = {} must be positive and finite",
                lr.periods
            ));
        }
        if let Some(n) = lr.steps_per_unit {
            ladder::grid(n, lr.periods, config.samples_per_unit).map_err(MeasureError::Config)?;
        }
        if let Some(r) = lr.repeat {
            ladder::grid(r.steps_per_unit, r.periods, config.samples_per_unit)
                .map_err(|e| MeasureError::Config(format!("the repeated long run: {e}")))?;
        }
    }
    if let Some(r) = config.reversibility_at {
        ladder::grid(r.steps_per_unit, r.periods, 1)
            .map_err(|e| MeasureError::Config(format!("the reversibility run: {e}")))?;
    }
    match &config.ladder {
        Ladder::Steps(steps) => {
            if steps.is_empty() {
                return bad("the ladder is empty".into());
            }
            if steps.windows(2).any(|w| w[1] <= w[0]) {
                return bad(format!("ladder {steps:?} must be strictly increasing"));
            }
            for &n in steps {
                ladder::grid(n, config.periods, config.samples_per_unit)
                    .map_err(MeasureError::Config)?;
            }
        }
        Ladder::Auto {
            start, max_rungs, ..
        } => {
            ladder::grid(*start, config.periods, config.samples_per_unit)
                .map_err(MeasureError::Config)?;
            if *max_rungs == 0 {
                return bad("max_rungs must be at least 1".into());
            }
        }
        Ladder::AutoTolerances {
            budget, max_rungs, ..
        } => {
            // The fallback's first rung is checked when it runs: an
            // integrator that takes tolerances never needs it.
            if *budget == 0 || *max_rungs == 0 {
                return bad(
                    "the budget and max_rungs of a tolerance ladder must be at least 1".into(),
                );
            }
        }
        Ladder::Tolerances(tols) => {
            if tols.is_empty() {
                return bad("the tolerance ladder is empty".into());
            }
            if let Some(t) = tols
                .iter()
                .find(|t| !(t.is_finite() && **t > 0.0 && **t < 1.0))
            {
                return bad(format!("tolerance {t} must lie in (0, 1)"));
            }
            if tols.windows(2).any(|w| w[1] >= w[0]) {
                return bad(format!("tolerances {tols:?} must be strictly decreasing"));
            }
        }
    }
    Ok(())
}
