//! The traits a user's integrator implements (`Stepper`, `SplitStepper`,
//! `Integrator`) and the right-hand-side traits their code is handed (`Rhs`,
//! `Accel`).
//!
//! Every method that receives a right-hand side is generic over it, so a call
//! from the measuring code to the user's stepper, and from the stepper to the
//! right-hand side, is resolved at compile time: nothing here adds a virtual
//! call to the inner loop.

/// A first-order system `y' = f(t, y)` of fixed dimension.
///
/// ```
/// use drift::Rhs;
/// /// y' = -y
/// struct Decay;
/// impl Rhs for Decay {
///     fn dim(&self) -> usize { 1 }
///     fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) { dydt[0] = -y[0]; }
/// }
/// let mut d = [0.0];
/// Decay.rhs(0.0, &[2.0], &mut d);
/// assert_eq!(d[0], -2.0);
/// ```
pub trait Rhs {
    /// Number of components of the state `y`.
    fn dim(&self) -> usize;
    /// Writes `f(t, y)` into `dydt` (both of length [`Rhs::dim`]).
    fn rhs(&self, t: f64, y: &[f64], dydt: &mut [f64]);
}

/// A second-order system `q'' = a(t, q)` whose force does not depend on the
/// velocity, for methods that use the force directly (leapfrog, Stormer-Verlet,
/// compositions).
///
/// ```
/// use drift::Accel;
/// /// q'' = -q
/// struct Spring;
/// impl Accel for Spring {
///     fn dim(&self) -> usize { 1 }
///     fn accel(&self, _t: f64, q: &[f64], a: &mut [f64]) { a[0] = -q[0]; }
/// }
/// let mut a = [0.0];
/// Spring.accel(0.0, &[0.5], &mut a);
/// assert_eq!(a[0], -0.5);
/// ```
pub trait Accel {
    /// Number of position coordinates `q` (the velocity has as many).
    fn dim(&self) -> usize;
    /// Writes `a(t, q)` into `a` (both of length [`Accel::dim`]).
    fn accel(&self, t: f64, q: &[f64], a: &mut [f64]);
}

impl<T: Rhs + ?Sized> Rhs for &T {
    fn dim(&self) -> usize {
        (**self).dim()
    }
    fn rhs(&self, t: f64, y: &[f64], dydt: &mut [f64]) {
        (**self).rhs(t, y, dydt)
    }
}

impl<T: Accel + ?Sized> Accel for &T {
    fn dim(&self) -> usize {
        (**self).dim()
    }
    fn accel(&self, t: f64, q: &[f64], a: &mut [f64]) {
        (**self).accel(t, q, a)
    }
}

/// A one-step method for `y' = f(t, y)` with a fixed step size.
///
/// `step` advances `y` in place from `t` to `t + h`. `h` may be negative
/// (integration backward in time, used for the reversibility check). Keep any
/// scratch space inside the stepper; it is created once per check and reused
/// for every step.
///
/// ```
/// use drift::{Rhs, Stepper};
/// /// Explicit Euler: y <- y + h f(t, y).
/// #[derive(Default)]
/// struct Euler { k: Vec<f64> }
/// impl Stepper for Euler {
///     fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
///         self.k.resize(y.len(), 0.0);
///         f.rhs(t, y, &mut self.k);
///         for (yi, ki) in y.iter_mut().zip(&self.k) { *yi += h * ki; }
///     }
/// }
/// struct Decay;
/// impl Rhs for Decay {
///     fn dim(&self) -> usize { 1 }
///     fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) { dydt[0] = -y[0]; }
/// }
/// let mut y = [1.0];
/// Euler::default().step(&Decay, 0.0, &mut y, 0.5);
/// assert_eq!(y[0], 0.5);
/// ```
pub trait Stepper {
    /// Advances `y` from `t` to `t + h` in place.
    fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64);
}

/// A one-step method for `q'' = a(t, q)` acting on positions and velocities.
///
/// ```
/// use drift::{Accel, SplitStepper};
/// /// Stormer-Verlet in velocity form (kick-drift-kick).
/// #[derive(Default)]
/// struct Verlet { a: Vec<f64> }
/// impl SplitStepper for Verlet {
///     fn step<A: Accel + ?Sized>(&mut self, f: &A, t: f64, q: &mut [f64], v: &mut [f64], h: f64) {
///         self.a.resize(q.len(), 0.0);
///         f.accel(t, q, &mut self.a);
///         for (vi, ai) in v.iter_mut().zip(&self.a) { *vi += 0.5 * h * ai; }
///         for (qi, vi) in q.iter_mut().zip(v.iter()) { *qi += h * vi; }
///         f.accel(t + h, q, &mut self.a);
///         for (vi, ai) in v.iter_mut().zip(&self.a) { *vi += 0.5 * h * ai; }
///     }
/// }
/// struct Free;
/// impl Accel for Free {
///     fn dim(&self) -> usize { 1 }
///     fn accel(&self, _t: f64, _q: &[f64], a: &mut [f64]) { a[0] = 0.0; }
/// }
/// let (mut q, mut v) = ([0.0], [2.0]);
/// Verlet::default().step(&Free, 0.0, &mut q, &mut v, 0.25);
/// assert_eq!(q[0], 0.5);
/// ```
pub trait SplitStepper {
    /// Advances positions `q` and velocities `v` from `t` to `t + h` in place.
    fn step<A: Accel + ?Sized>(&mut self, f: &A, t: f64, q: &mut [f64], v: &mut [f64], h: f64);
}

/// How an [`Integrator`] is asked to cover an interval.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Control {
    /// Exactly this many equal steps.
    Steps(u64),
    /// Adaptive stepping to a requested local tolerance: a step is accepted
    /// when its error estimate is below `atol + rtol * |y|` component-wise.
    Tolerance {
        /// Relative tolerance.
        rtol: f64,
        /// Absolute tolerance.
        atol: f64,
    },
}

impl std::fmt::Display for Control {
    /// `fixed steps (n = 64)`, `tolerances (rtol = 1e-4, atol = 1e-4)`.
    ///
    /// ```
    /// use drift::Control;
    /// assert_eq!(Control::Steps(64).to_string(), "fixed steps (n = 64)");
    /// let c = Control::Tolerance { rtol: 1e-4, atol: 1e-4 };
    /// assert_eq!(c.to_string(), "tolerances (rtol = 1e-4, atol = 1e-4)");
    /// ```
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Control::Steps(n) => write!(f, "fixed steps (n = {n})"),
            Control::Tolerance { rtol, atol } => {
                write!(f, "tolerances (rtol = {rtol:e}, atol = {atol:e})")
            }
        }
    }
}

/// What an [`Integrator`] reports about one call.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Counts {
    /// Accepted steps.
    pub steps: u64,
    /// Rejected step attempts (0 for fixed-step integrators).
    pub rejected: u64,
}

impl Counts {
    /// Adds the counts of another call.
    ///
    /// ```
    /// let mut c = drift::Counts { steps: 3, rejected: 1 };
    /// c.add(drift::Counts { steps: 2, rejected: 0 });
    /// assert_eq!(c, drift::Counts { steps: 5, rejected: 1 });
    /// ```
    pub fn add(&mut self, other: Counts) {
        self.steps += other.steps;
        self.rejected += other.rejected;
    }
}

/// Why an [`Integrator`] could not cover an interval.
#[derive(Clone, Debug, PartialEq)]
#[non_exhaustive]
pub enum IntegrateError {
    /// The integrator does not support this kind of [`Control`].
    Unsupported(Control),
    /// The integrator gave up at time `t` (step size underflow, too many steps).
    Failed {
        /// Time reached.
        t: f64,
        /// The integrator's own explanation.
        reason: String,
    },
}

impl std::fmt::Display for IntegrateError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            IntegrateError::Unsupported(c) => write!(f, "integrator does not support {c}"),
            IntegrateError::Failed { t, reason } => {
                write!(f, "integrator failed at t = {t}: {reason}")
            }
        }
    }
}

impl std::error::Error for IntegrateError {}

/// A solver that covers a whole interval itself: adaptive methods, or methods
/// with their own start-up or step-size logic.
///
/// ```
/// use drift::{Control, Counts, IntegrateError, Integrator, Rhs};
/// /// Fixed-step explicit Euler driven as a whole-interval solver.
/// #[derive(Default)]
/// struct EulerRun { k: Vec<f64> }
/// impl Integrator for EulerRun {
///     fn integrate<F: Rhs + ?Sized>(&mut self, f: &F, t0: f64, t1: f64, y: &mut [f64],
///                                   control: Control) -> Result<Counts, IntegrateError> {
///         let Control::Steps(n) = control else { return Err(IntegrateError::Unsupported(control)) };
///         let h = (t1 - t0) / n as f64;
///         self.k.resize(y.len(), 0.0);
///         for i in 0..n {
///             f.rhs(t0 + i as f64 * h, y, &mut self.k);
///             for (yi, ki) in y.iter_mut().zip(&self.k) { *yi += h * ki; }
///         }
///         Ok(Counts { steps: n, rejected: 0 })
///     }
/// }
/// struct Grow;
/// impl Rhs for Grow {
///     fn dim(&self) -> usize { 1 }
///     fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) { dydt[0] = y[0]; }
/// }
/// let mut y = [1.0];
/// let counts = EulerRun::default().integrate(&Grow, 0.0, 1.0, &mut y, Control::Steps(2)).unwrap();
/// assert_eq!((y[0], counts.steps), (2.25, 2));
/// ```
pub trait Integrator {
    /// Advances `y` from `t0` to `t1` under `control`, landing exactly on `t1`.
    fn integrate<F: Rhs + ?Sized>(
        &mut self,
        f: &F,
        t0: f64,
        t1: f64,
        y: &mut [f64],
        control: Control,
    ) -> Result<Counts, IntegrateError>;
}
