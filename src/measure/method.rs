//! The uniform face the measuring code sees of the three kinds of user
//! methods: [`Method`], its adapters [`Fixed`], [`Split`] and [`Whole`], and
//! the evaluation-counting view of a problem ([`Counted`]).
//!
//! Everything here is generic: the adapters call the user's `step` or
//! `integrate` with a concrete right-hand-side type, so no virtual call
//! stands between the user's inner loop and the problem.

use std::cell::Cell;

use crate::problem::{has_second_order, Problem};
use crate::stepper::{
    Accel, Control, Counts, IntegrateError, Integrator, Rhs, SplitStepper, Stepper,
};

/// A problem seen through a counter of right-hand-side (or force)
/// evaluations. This is what the user's method is handed.
pub struct Counted<'p, P: ?Sized> {
    problem: &'p P,
    evals: Cell<u64>,
}

impl<'p, P: Problem + ?Sized> Counted<'p, P> {
    /// Wraps `problem` with a zero count.
    ///
    /// ```
    /// use drift::measure::Counted;
    /// use drift::{Problem, Rhs};
    /// struct Decay;
    /// impl Rhs for Decay {
    ///     fn dim(&self) -> usize { 1 }
    ///     fn rhs(&self, _t: f64, y: &[f64], d: &mut [f64]) { d[0] = -y[0]; }
    /// }
    /// impl Problem for Decay {
    ///     fn name(&self) -> &str { "decay" }
    ///     fn initial(&self, y0: &mut [f64]) { y0[0] = 1.0; }
    ///     fn time_unit(&self) -> f64 { 1.0 }
    /// }
    /// let c = Counted::new(&Decay);
    /// let mut d = [0.0];
    /// c.rhs(0.0, &[1.0], &mut d);
    /// assert_eq!(c.evals(), 1);
    /// ```
    pub fn new(problem: &'p P) -> Self {
        Counted {
            problem,
            evals: Cell::new(0),
        }
    }

    /// Evaluations so far.
    pub fn evals(&self) -> u64 {
        self.evals.get()
    }

    /// The wrapped problem.
    pub fn problem(&self) -> &'p P {
        self.problem
    }
}

impl<P: Problem + ?Sized> Rhs for Counted<'_, P> {
    fn dim(&self) -> usize {
        self.problem.dim()
    }
    #[inline]
    fn rhs(&self, t: f64, y: &[f64], dydt: &mut [f64]) {
        self.evals.set(self.evals.get() + 1);
        self.problem.rhs(t, y, dydt);
    }
}

impl<P: Problem + ?Sized> Accel for Counted<'_, P> {
    fn dim(&self) -> usize {
        self.problem.dim() / 2
    }
    #[inline]
    fn accel(&self, t: f64, q: &[f64], a: &mut [f64]) {
        self.evals.set(self.evals.get() + 1);
        // Compatibility is checked once before any stepping (see
        // `Method::compatible`), so the flag is not looked at here.
        let _ = self.problem.accel(t, q, a);
    }
}

/// Which of the user-facing traits a method implements.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
pub enum MethodKind {
    /// A [`Stepper`].
    #[serde(rename = "stepper")]
    Fixed,
    /// A [`SplitStepper`].
    #[serde(rename = "split-stepper")]
    Split,
    /// An [`Integrator`].
    #[serde(rename = "integrator")]
    Whole,
}

impl MethodKind {
    /// Lower-case name: `stepper`, `split-stepper`, `integrator`.
    ///
    /// ```
    /// assert_eq!(drift::measure::MethodKind::Split.name(), "split-stepper");
    /// ```
    pub fn name(self) -> &'static str {
        match self {
            MethodKind::Fixed => "stepper",
            MethodKind::Split => "split-stepper",
            MethodKind::Whole => "integrator",
        }
    }
}

/// A user method as the measuring code drives it.
pub trait Method {
    /// The kind of method.
    fn kind(&self) -> MethodKind;

    /// Whether the method can be run on `problem` at all; `Err` explains why
    /// not (a split stepper needs a velocity-independent second-order form).
    fn compatible<P: Problem + ?Sized>(&self, problem: &P) -> Result<(), String> {
        let _ = problem;
        Ok(())
    }

    /// Takes steps `i0 .. i1` of the grid `t_i = t0 + i h` (integer step
    /// counting: the time of each step is computed from its index, never
    /// accumulated). Returns rejected step attempts.
    fn advance<P: Problem + ?Sized>(
        &mut self,
        f: &Counted<P>,
        t0: f64,
        h: f64,
        i0: u64,
        i1: u64,
        y: &mut [f64],
    ) -> Result<u64, IntegrateError>;

    /// Covers `[ta, tb]` adaptively to tolerance `tol` (relative and
    /// absolute alike). Only integrators support this; others return
    /// `Unsupported`.
    fn adaptive<P: Problem + ?Sized>(
        &mut self,
        f: &Counted<P>,
        ta: f64,
        tb: f64,
        y: &mut [f64],
        tol: f64,
    ) -> Result<Counts, IntegrateError> {
        let _ = (f, ta, tb, y);
        Err(IntegrateError::Unsupported(Control::Tolerance {
            rtol: tol,
            atol: tol,
        }))
    }
}

/// Adapter for a [`Stepper`].
pub struct Fixed<S>(pub S);
/// Adapter for a [`SplitStepper`].
pub struct Split<S>(pub S);
/// Adapter for an [`Integrator`].
pub struct Whole<I>(pub I);

impl<S: Stepper> Method for Fixed<S> {
    fn kind(&self) -> MethodKind {
        MethodKind::Fixed
    }
    #[inline]
    fn advance<P: Problem + ?Sized>(
        &mut self,
        f: &Counted<P>,
        t0: f64,
        h: f64,
        i0: u64,
        i1: u64,
        y: &mut [f64],
    ) -> Result<u64, IntegrateError> {
        for i in i0..i1 {
            self.0.step(f, t0 + i as f64 * h, y, h);
        }
        Ok(0)
    }
}

impl<S: SplitStepper> Method for Split<S> {
    fn kind(&self) -> MethodKind {
        MethodKind::Split
    }
    fn compatible<P: Problem + ?Sized>(&self, problem: &P) -> Result<(), String> {
        if has_second_order(problem) {
            Ok(())
        } else {
            Err(format!(
                "problem `{}` has no velocity-independent second-order form q'' = a(t, q), so a split stepper cannot run on it",
                problem.name()
            ))
        }
    }
    #[inline]
    fn advance<P: Problem + ?Sized>(
        &mut self,
        f: &Counted<P>,
        t0: f64,
        h: f64,
        i0: u64,
        i1: u64,
        y: &mut [f64],
    ) -> Result<u64, IntegrateError> {
        let n = y.len() / 2;
        let (q, v) = y.split_at_mut(n);
        for i in i0..i1 {
            self.0.step(f, t0 + i as f64 * h, q, v, h);
        }
        Ok(0)
    }
}

impl<I: Integrator> Method for Whole<I> {
    fn kind(&self) -> MethodKind {
        MethodKind::Whole
    }
    fn advance<P: Problem + ?Sized>(
        &mut self,
        f: &Counted<P>,
        t0: f64,
        h: f64,
        i0: u64,
        i1: u64,
        y: &mut [f64],
    ) -> Result<u64, IntegrateError> {
        if i1 <= i0 {
            return Ok(0);
        }
        let (ta, tb) = (t0 + i0 as f64 * h, t0 + i1 as f64 * h);
        let counts = self.0.integrate(f, ta, tb, y, Control::Steps(i1 - i0))?;
        Ok(counts.rejected)
    }
    fn adaptive<P: Problem + ?Sized>(
        &mut self,
        f: &Counted<P>,
        ta: f64,
        tb: f64,
        y: &mut [f64],
        tol: f64,
    ) -> Result<Counts, IntegrateError> {
        self.0.integrate(
            f,
            ta,
            tb,
            y,
            Control::Tolerance {
                rtol: tol,
                atol: tol,
            },
        )
    }
}

/// What [`advance_checked`] saw.
pub(crate) struct Advanced {
    /// Rejected step attempts.
    pub rejected: u64,
    /// Time of the first step whose state was not finite.
    pub diverged_at: Option<f64>,
}

/// [`Method::advance`] followed by a check that the state is finite. When it
/// is not, the segment is taken again step by step from the state saved in
/// `prev` to find the first step that went non-finite, so a divergence is
/// reported at its time without a per-step check in the common case.
#[allow(clippy::too_many_arguments)] // mirrors Method::advance plus the saved state
pub(crate) fn advance_checked<M: Method, P: Problem + ?Sized>(
    method: &mut M,
    f: &Counted<P>,
    t0: f64,
    h: f64,
    i0: u64,
    i1: u64,
    y: &mut [f64],
    prev: &mut [f64],
) -> Result<Advanced, IntegrateError> {
    prev.copy_from_slice(y);
    let rejected = method.advance(f, t0, h, i0, i1, y)?;
    if y.iter().all(|v| v.is_finite()) {
        return Ok(Advanced {
            rejected,
            diverged_at: None,
        });
    }
    y.copy_from_slice(prev);
    for i in i0..i1 {
        method.advance(f, t0, h, i, i + 1, y)?;
        if !y.iter().all(|v| v.is_finite()) {
            return Ok(Advanced {
                rejected,
                diverged_at: Some(t0 + (i + 1) as f64 * h),
            });
        }
    }
    // The second pass stayed finite (a method with hidden state); report the
    // end of the segment.
    Ok(Advanced {
        rejected,
        diverged_at: Some(t0 + i1 as f64 * h),
    })
}
