//! The long run at one resolution: drift of every invariant forward and
//! backward in time, the period from located crossings, the virial residual
//! from time averages; and the forward-then-backward reversibility run.

use crate::measure::ladder::{grid, scaled_distance};
use crate::measure::method::{advance_checked, Counted, Method};
use crate::measure::RunAt;
use crate::metrics::{digits, drift_fit, virial_residual, DriftFit};
use crate::problem::Problem;
use crate::stepper::IntegrateError;

/// Most iterations of the crossing location (Illinois converges
/// superlinearly; 60 halvings of the bracket would already reach roundoff).
const CROSSING_ITERATIONS: usize = 60;

/// The period of the numerical solution.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PeriodReport {
    /// Mean spacing of the located upward crossings.
    pub measured: f64,
    /// The exact period, if the problem knows it.
    pub exact: Option<f64>,
    /// Digits of the relative period error, when the exact period is known.
    pub digits: Option<f64>,
    /// Number of crossings located.
    pub crossings: usize,
}

/// The error of one invariant over the forward long run, thinned for
/// plotting: the largest error in each of at most [`ENVELOPE_BINS`]
/// logarithmically spaced time bins, with the time it occurred.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Envelope {
    /// Elapsed times (time units of the problem's clock), increasing.
    pub t: Vec<f64>,
    /// Relative invariant error at those times.
    pub error: Vec<f64>,
}

/// Most points of an [`Envelope`]: enough for a smooth curve on a log time
/// axis, small enough for a report.
pub const ENVELOPE_BINS: usize = 160;

impl Envelope {
    /// The envelope of errors `err[i]` at increasing positive times `t[i]`:
    /// per logarithmic time bin, the sample with the largest error (so a
    /// bounded oscillation keeps its peaks and a growth keeps its shape).
    /// Samples whose time or error is not finite are left out.
    ///
    /// ```
    /// use drift::measure::long_run::{Envelope, ENVELOPE_BINS};
    /// let t: Vec<f64> = (1..=100_000).map(|i| i as f64).collect();
    /// let e: Vec<f64> = t.iter().map(|t| 1e-12 * t).collect();
    /// let env = Envelope::of(&t, &e);
    /// assert!(env.t.len() <= ENVELOPE_BINS && env.t.len() > 100);
    /// assert_eq!(env.error.last(), Some(&1e-7));
    /// ```
    pub fn of(t: &[f64], err: &[f64]) -> Envelope {
        let finite: Vec<(f64, f64)> = t
            .iter()
            .zip(err)
            .filter(|(t, e)| t.is_finite() && e.is_finite())
            .map(|(&t, &e)| (t, e))
            .collect();
        let (Some(&(first, _)), Some(&(last, _))) = (finite.first(), finite.last()) else {
            return Envelope::default();
        };
        if finite.len() <= ENVELOPE_BINS || first <= 0.0 || last <= first {
            return Envelope {
                t: finite.iter().map(|p| p.0).collect(),
                error: finite.iter().map(|p| p.1).collect(),
            };
        }
        let span = (last / first).ln();
        let mut out = Envelope::default();
        let mut current: Option<(usize, f64, f64)> = None;
        for &(ti, ei) in &finite {
            let frac = (ti / first).ln() / span;
            let bin = ((frac * ENVELOPE_BINS as f64) as usize).min(ENVELOPE_BINS - 1);
            match current {
                Some((b, _, worst)) if b == bin => {
                    if ei > worst {
                        current = Some((bin, ti, ei));
                    }
                }
                _ => {
                    if let Some((_, tb, eb)) = current {
                        out.t.push(tb);
                        out.error.push(eb);
                    }
                    current = Some((bin, ti, ei));
                }
            }
        }
        if let Some((_, tb, eb)) = current {
            out.t.push(tb);
            out.error.push(eb);
        }
        out
    }
}

/// What the long run measured.
#[derive(Clone, Debug, PartialEq)]
pub struct LongRunReport {
    /// Resolution of the run.
    pub steps_per_unit: u64,
    /// Length run, in time units.
    pub periods: f64,
    /// Length asked for; more than `periods` when the step budget shortened
    /// the run.
    pub requested_periods: f64,
    /// Drift fit of each invariant, forward in time.
    pub drift_forward: Vec<Option<DriftFit>>,
    /// Drift fit of each invariant, backward in time.
    pub drift_backward: Vec<Option<DriftFit>>,
    /// Error of each invariant against time, forward, thinned for plots.
    pub envelopes: Vec<Envelope>,
    /// The period, when the problem has one and two crossings were seen.
    pub period: Option<PeriodReport>,
    /// Digits of the virial residual, when the problem has virial terms.
    pub virial_digits: Option<f64>,
    /// Time at which the state stopped being finite, if it did.
    pub diverged_at: Option<f64>,
}

/// Raw results of one direction of the long run.
struct Pass {
    drift: Vec<Option<DriftFit>>,
    envelopes: Vec<Envelope>,
    crossings: Vec<f64>,
    virial: Option<(f64, f64)>,
    diverged_at: Option<f64>,
}

/// Locates the upward zero crossing of `problem.crossing` inside the step
/// from `(t, y_prev)` of size `h`, by the Illinois variant of regula falsi
/// (Dowell and Jarratt, BIT 11 (1971) 168) on the fraction `theta` of a
/// partial step taken with the method itself, so the crossing is that of
/// the method's own solution. `g0 < 0 <= g1` are the values at the ends.
#[allow(clippy::too_many_arguments)]
fn locate<M: Method, P: Problem + ?Sized>(
    method: &mut M,
    problem: &P,
    t: f64,
    h: f64,
    y_prev: &[f64],
    g0: f64,
    g1: f64,
    tmp: &mut [f64],
) -> Result<f64, IntegrateError> {
    let f = Counted::new(problem);
    let (mut a, mut ga, mut b, mut gb) = (0.0f64, g0, 1.0f64, g1);
    let mut side = 0i8;
    for _ in 0..CROSSING_ITERATIONS {
        let denom = gb - ga;
        if denom == 0.0 || !denom.is_finite() || b - a <= 4.0 * f64::EPSILON {
            break;
        }
        let theta = ((a * gb - b * ga) / denom).clamp(a, b);
        tmp.copy_from_slice(y_prev);
        method.advance(&f, t, theta * h, 0, 1, tmp)?;
        let g = problem.crossing(tmp);
        if !g.is_finite() {
            break;
        }
        if g == 0.0 {
            return Ok(t + theta * h);
        }
        if g < 0.0 {
            (a, ga) = (theta, g);
            if side == -1 {
                gb *= 0.5;
            }
            side = -1;
        } else {
            (b, gb) = (theta, g);
            if side == 1 {
                ga *= 0.5;
            }
            side = 1;
        }
    }
    let theta = if gb - ga != 0.0 {
        ((a * gb - b * ga) / (gb - ga)).clamp(a, b)
    } else {
        0.5 * (a + b)
    };
    Ok(t + theta * h)
}

fn pass<M: Method, P: Problem + ?Sized>(
    method: &mut M,
    problem: &P,
    n: u64,
    periods: f64,
    samples_per_unit: u64,
    forward: bool,
) -> Result<Pass, IntegrateError> {
    let g = grid(n, periods, samples_per_unit).map_err(|reason| IntegrateError::Failed {
        t: problem.t0(),
        reason,
    })?;
    let f = Counted::new(problem);
    let dim = problem.dim();
    let invs = problem.invariants();
    let t0 = problem.t0();
    let h = periods * problem.time_unit() / g.total as f64 * if forward { 1.0 } else { -1.0 };
    let mut y = vec![0.0; dim];
    problem.initial(&mut y);
    let (mut prev, mut tmp) = (y.clone(), y.clone());
    let (mut inv0, mut inv) = (vec![0.0; invs.len()], vec![0.0; invs.len()]);
    problem.invariant_values(t0, &y, &mut inv0);
    let mut times = Vec::new();
    let mut errs: Vec<Vec<f64>> = vec![Vec::new(); invs.len()];
    let mut interval_max = vec![0.0f64; invs.len()];
    let track = forward && problem.period().is_some();
    let mut crossings = Vec::new();
    let mut g_prev = problem.crossing(&y);
    let mut virial = if forward {
        problem.virial_terms(&y).map(|(a, b)| (0.5 * a, 0.5 * b))
    } else {
        None
    };
    let mut diverged_at = None;
    for i in 0..g.total {
        let step = advance_checked(method, &f, t0, h, i, i + 1, &mut y, &mut prev)?;
        if let Some(t) = step.diverged_at {
            diverged_at = Some(t);
            break;
        }
        let t = t0 + (i + 1) as f64 * h;
        if track {
            let gi = problem.crossing(&y);
            if g_prev < 0.0 && gi >= 0.0 {
                crossings.push(locate(
                    method,
                    problem,
                    t - h,
                    h,
                    &prev,
                    g_prev,
                    gi,
                    &mut tmp,
                )?);
            }
            g_prev = gi;
        }
        if let (Some((sa, sb)), Some((a, b))) = (virial.as_mut(), problem.virial_terms(&y)) {
            let w = if i + 1 == g.total { 0.5 } else { 1.0 };
            *sa += w * a;
            *sb += w * b;
        }
        // Invariants are read at every step and their largest error per
        // sample interval is kept: reading only at the samples would see an
        // oscillating error at a phase that drifts slowly with the method's
        // period error, and a bounded error would look like slow growth.
        if !invs.is_empty() {
            problem.invariant_values(t, &y, &mut inv);
            for (k, worst) in interval_max.iter_mut().enumerate() {
                *worst = worst.max((inv[k] - inv0[k]).abs() / invs[k].scale);
            }
        }
        if (i + 1) % g.stride == 0 {
            times.push((t - t0).abs());
            for (e, worst) in errs.iter_mut().zip(interval_max.iter_mut()) {
                e.push(*worst);
                *worst = 0.0;
            }
        }
    }
    let drift = errs.iter().map(|e| drift_fit(&times, e)).collect();
    let envelopes = if forward {
        errs.iter().map(|e| Envelope::of(&times, e)).collect()
    } else {
        Vec::new()
    };
    let virial = if diverged_at.is_none() {
        virial.map(|(a, b)| (a / g.total as f64, b / g.total as f64))
    } else {
        None
    };
    Ok(Pass {
        drift,
        envelopes,
        crossings,
        virial,
        diverged_at,
    })
}

/// Runs the long run forward and backward at `at` (`requested` is the
/// horizon asked for, which the report keeps beside the one run).
pub(crate) fn run<M: Method, P: Problem + ?Sized>(
    method: &mut M,
    problem: &P,
    at: RunAt,
    requested: f64,
    samples_per_unit: u64,
) -> Result<LongRunReport, IntegrateError> {
    let RunAt {
        steps_per_unit: n,
        periods,
    } = at;
    let fwd = pass(method, problem, n, periods, samples_per_unit, true)?;
    let bwd = pass(method, problem, n, periods, samples_per_unit, false)?;
    let period = (fwd.crossings.len() >= 2).then(|| {
        let c = &fwd.crossings;
        let measured = (c[c.len() - 1] - c[0]) / (c.len() - 1) as f64;
        let exact = problem.period();
        PeriodReport {
            measured,
            exact,
            digits: exact.map(|p| digits((measured - p) / p)),
            crossings: c.len(),
        }
    });
    Ok(LongRunReport {
        steps_per_unit: n,
        periods,
        requested_periods: requested.max(periods),
        drift_forward: fwd.drift,
        drift_backward: bwd.drift,
        envelopes: fwd.envelopes,
        period,
        virial_digits: fwd
            .virial
            .and_then(|(a, b)| virial_residual(a, b))
            .map(digits),
        diverged_at: fwd.diverged_at.or(bwd.diverged_at),
    })
}

/// Steps forward over `periods` units at `n` steps per unit, then back with
/// the negated step, and returns the digits of the component-scaled distance
/// to the initial state (`Ok(Err(t))` when the state went non-finite at `t`).
pub(crate) fn reversibility<M: Method, P: Problem + ?Sized>(
    method: &mut M,
    problem: &P,
    n: u64,
    periods: f64,
) -> Result<Result<f64, f64>, IntegrateError> {
    let g = grid(n, periods, 1).map_err(|reason| IntegrateError::Failed {
        t: problem.t0(),
        reason,
    })?;
    let f = Counted::new(problem);
    let t0 = problem.t0();
    let h = periods * problem.time_unit() / g.total as f64;
    let mut y0 = vec![0.0; problem.dim()];
    problem.initial(&mut y0);
    let (mut y, mut prev) = (y0.clone(), y0.clone());
    let out = advance_checked(method, &f, t0, h, 0, g.total, &mut y, &mut prev)?;
    if let Some(t) = out.diverged_at {
        return Ok(Err(t));
    }
    let t_end = t0 + g.total as f64 * h;
    let back = advance_checked(method, &f, t_end, -h, 0, g.total, &mut y, &mut prev)?;
    if let Some(t) = back.diverged_at {
        return Ok(Err(t));
    }
    let mut s = vec![1.0; y.len()];
    problem.scales(&mut s);
    Ok(Ok(digits(scaled_distance(&y, &y0, &s))))
}
