//! The adaptive driver shared by the embedded Runge-Kutta pairs of the test
//! steppers (Dormand-Prince 5(4) in steppers.rs, DOP853 in dop853.rs, and
//! their rewrites in rewrites.rs): the scaled error norm, the starting step,
//! the step-size controller, the fixed-step mode and the bound on step
//! attempts. A pair supplies only its stages, its error estimate and its
//! controller constants ([`EmbeddedPair`]).

use drift::{Control, Counts, IntegrateError, Integrator, Rhs};

/// Requested tolerances of an adaptive run.
#[derive(Clone, Copy)]
pub struct Tol {
    /// Relative tolerance.
    pub rtol: f64,
    /// Absolute tolerance.
    pub atol: f64,
}

impl Tol {
    /// Scaled RMS norm `sqrt(mean((x_i / (atol + rtol |s_i|))^2))` of pairs
    /// `(x_i, s_i)` (Hairer, Norsett and Wanner I, II.4, (4.11)). The scale
    /// is zero only for `atol = 0` and `s_i = 0`; then `x_i = 0` counts as
    /// no error and anything else as an infinite one.
    pub fn rms(self, pairs: impl Iterator<Item = (f64, f64)>) -> f64 {
        let (mut sum, mut n) = (0.0, 0usize);
        for (x, s) in pairs {
            let d = self.atol + self.rtol * s.abs();
            let r = if d > 0.0 {
                x / d
            } else if x == 0.0 {
                0.0
            } else {
                f64::INFINITY
            };
            sum += r * r;
            n += 1;
        }
        (sum / n.max(1) as f64).sqrt()
    }

    /// Scaled RMS norm of one embedded error estimate `e = h sum_i w_i k_i`
    /// (`w` the difference of the two weight vectors; `k(i, m)` component
    /// `m` of stage `i`), each component scaled by
    /// `atol + rtol max(|y_m|, |y_new_m|)` (Hairer, Norsett and Wanner I,
    /// II.4, (4.11); the scale of their codes DOPRI5 and DOP853).
    pub fn estimate(
        self,
        y: &[f64],
        y_new: &[f64],
        h: f64,
        w: &[f64],
        k: impl Fn(usize, usize) -> f64,
    ) -> f64 {
        self.rms((0..y.len()).map(|m| {
            let mut e = 0.0;
            for (i, wi) in w.iter().enumerate() {
                e += wi * k(i, m);
            }
            (h * e, y[m].abs().max(y_new[m].abs()))
        }))
    }
}

/// Constants of the step-size controller `h_new = h * clamp(safety *
/// err^(-exponent), fac_min, fac_max)` (Hairer, Norsett and Wanner I,
/// section II.4, (4.13)); `exponent` is `1/(q + 1)` for an error estimate of
/// order `q`, and also the exponent of the starting-step formula.
#[derive(Clone, Copy, Debug)]
pub struct StepControl {
    /// Safety factor.
    pub safety: f64,
    /// Smallest step-size factor.
    pub fac_min: f64,
    /// Largest step-size factor (1 right after a rejection).
    pub fac_max: f64,
    /// Exponent of the error norm.
    pub exponent: f64,
}

impl StepControl {
    /// The factor proposed for error norm `err`, before clamping: `err == 0`
    /// gives the maximal growth, NaN or infinity the minimal.
    fn proposal(self, err: f64) -> f64 {
        if err.is_finite() {
            if err > 0.0 {
                self.safety * err.powf(-self.exponent)
            } else {
                self.fac_max
            }
        } else {
            self.fac_min
        }
    }
}

/// An embedded Runge-Kutta pair as [`Adaptive`] drives it.
pub trait EmbeddedPair: Default {
    /// The controller constants of the published code.
    const CONTROL: StepControl;
    /// Sizes the scratch buffers for states of length `n`.
    fn resize(&mut self, n: usize);
    /// The slot of `k_1 = f(t, y)` at the current point (the driver fills it
    /// at the start; [`EmbeddedPair::accept`] refills it).
    fn k1(&mut self) -> &mut [f64];
    /// One attempted step from `(t, y)` with `k_1` in place: keeps the new
    /// state (the higher-order result) for [`EmbeddedPair::accept`].
    fn attempt<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &[f64], h: f64);
    /// Scaled error norm of the last attempt (accept when at most 1).
    fn error_norm(&self, y: &[f64], h: f64, tol: Tol) -> f64;
    /// Accepts the last attempt: `y <- y_new`, and `k_1 <- f(t_new, y_new)`
    /// (evaluated, or reused when the pair has it already).
    fn accept<F: Rhs + ?Sized>(&mut self, f: &F, t_new: f64, y: &mut [f64]);
}

/// Default bound on step attempts (accepted plus rejected) per call of an
/// [`Adaptive`] integrator.
pub const DEFAULT_MAX_STEPS: u64 = 100_000;

/// An adaptive integrator over an embedded pair, with local extrapolation
/// (the higher-order result is propagated) and error control as in Hairer,
/// Norsett and Wanner I, section II.4. Also runs `Control::Steps(n)` as `n`
/// equal steps of the higher-order method.
///
/// Construct with `default()` (at most [`DEFAULT_MAX_STEPS`] step attempts
/// per call) or [`Adaptive::with_max_steps`].
pub struct Adaptive<P> {
    pair: P,
    y1: Vec<f64>,
    f1: Vec<f64>,
    max_steps: u64,
}

impl<P: EmbeddedPair> Default for Adaptive<P> {
    fn default() -> Self {
        Self::with_max_steps(DEFAULT_MAX_STEPS)
    }
}

impl<P: EmbeddedPair> Adaptive<P> {
    /// An integrator that gives up (with [`IntegrateError::Failed`]) after
    /// `max_steps` step attempts in one call.
    pub fn with_max_steps(max_steps: u64) -> Self {
        Adaptive {
            pair: P::default(),
            y1: Vec::new(),
            f1: Vec::new(),
            max_steps,
        }
    }

    /// Starting step size (Hairer, Norsett and Wanner I, section II.4,
    /// "Starting step size", steps (a)-(f)), with `k_1 = f(t0, y0)` in
    /// place; costs one evaluation. Returns a magnitude in `(0, span]`.
    fn initial_step<F: Rhs + ?Sized>(
        &mut self,
        f: &F,
        t0: f64,
        y: &[f64],
        span: f64,
        tol: Tol,
    ) -> f64 {
        let dir = span.signum();
        let span = span.abs();
        let k1 = self.pair.k1();
        let d0 = tol.rms(y.iter().map(|&yi| (yi, yi)));
        let d1 = tol.rms(y.iter().zip(k1.iter()).map(|(&yi, &fi)| (fi, yi)));
        let h0 = if d0 < 1e-5 || d1 < 1e-5 {
            1e-6
        } else {
            0.01 * d0 / d1
        }
        .min(span);
        for ((s, &yi), &fi) in self.y1.iter_mut().zip(y).zip(k1.iter()) {
            *s = yi + dir * h0 * fi;
        }
        f.rhs(t0 + dir * h0, &self.y1, &mut self.f1);
        // h0 > 0: it is at least min(1e-6, span) and span > 0.
        let d2 = tol.rms(
            y.iter()
                .zip(self.pair.k1().iter())
                .zip(&self.f1)
                .map(|((&yi, &a), &b)| (b - a, yi)),
        ) / h0;
        let dmax = d1.max(d2);
        let h1 = if dmax > 1e-15 {
            (0.01 / dmax).powf(P::CONTROL.exponent)
        } else {
            (h0 * 1e-3).max(1e-6)
        };
        (100.0 * h0).min(h1).min(span)
    }

    fn fixed<F: Rhs + ?Sized>(
        &mut self,
        f: &F,
        t0: f64,
        t1: f64,
        y: &mut [f64],
        n: u64,
    ) -> Result<Counts, IntegrateError> {
        if n == 0 {
            if t0 == t1 {
                return Ok(Counts::default());
            }
            return Err(IntegrateError::Failed {
                t: t0,
                reason: "zero steps for a nonempty interval".into(),
            });
        }
        let h = (t1 - t0) / n as f64;
        f.rhs(t0, y, self.pair.k1());
        for i in 0..n {
            // Integer step counting: t_i = t0 + i h, never t += h.
            self.pair.attempt(f, t0 + i as f64 * h, y, h);
            self.pair.accept(f, t0 + (i + 1) as f64 * h, y);
        }
        Ok(Counts {
            steps: n,
            rejected: 0,
        })
    }

    fn adaptive<F: Rhs + ?Sized>(
        &mut self,
        f: &F,
        t0: f64,
        t1: f64,
        y: &mut [f64],
        tol: Tol,
    ) -> Result<Counts, IntegrateError> {
        let control = P::CONTROL;
        let mut counts = Counts::default();
        if t0 == t1 {
            return Ok(counts);
        }
        let dir = (t1 - t0).signum();
        f.rhs(t0, y, self.pair.k1());
        let mut h = dir * self.initial_step(f, t0, y, t1 - t0, tol);
        let mut t = t0;
        let mut rejected_last = false;
        loop {
            if counts.steps + counts.rejected >= self.max_steps {
                return Err(IntegrateError::Failed {
                    t,
                    reason: format!("maximum of {} step attempts reached", self.max_steps),
                });
            }
            // Land exactly on t1: when this step would reach or pass it (or
            // leave a sliver shorter than 1% of a step), take t1 - t instead.
            let last = (t + 1.01 * h - t1) * dir >= 0.0;
            if last {
                h = t1 - t;
            }
            if h == 0.0 || h.abs() <= 16.0 * f64::EPSILON * t.abs() {
                return Err(IntegrateError::Failed {
                    t,
                    reason: format!("step size underflow (h = {h:e})"),
                });
            }
            self.pair.attempt(f, t, y, h);
            let err = self.pair.error_norm(y, h, tol);
            let grow = control.proposal(err);
            if err <= 1.0 {
                self.pair.accept(f, if last { t1 } else { t + h }, y);
                counts.steps += 1;
                if last {
                    return Ok(counts);
                }
                t += h;
                let cap = if rejected_last { 1.0 } else { control.fac_max };
                h *= grow.clamp(control.fac_min, cap);
                rejected_last = false;
            } else {
                counts.rejected += 1;
                h *= grow.clamp(control.fac_min, 1.0);
                rejected_last = true;
            }
        }
    }
}

impl<P: EmbeddedPair> Integrator for Adaptive<P> {
    fn integrate<F: Rhs + ?Sized>(
        &mut self,
        f: &F,
        t0: f64,
        t1: f64,
        y: &mut [f64],
        control: Control,
    ) -> Result<Counts, IntegrateError> {
        self.pair.resize(y.len());
        self.y1.resize(y.len(), 0.0);
        self.f1.resize(y.len(), 0.0);
        match control {
            Control::Steps(n) => self.fixed(f, t0, t1, y, n),
            Control::Tolerance { rtol, atol } => {
                if !(rtol >= 0.0 && atol >= 0.0 && rtol + atol > 0.0) {
                    return Err(IntegrateError::Unsupported(control));
                }
                self.adaptive(f, t0, t1, y, Tol { rtol, atol })
            }
        }
    }
}
