//! Reference problems: the [`Problem`] trait that built-in and user problems
//! implement, the parameter-validation error they share, and one module per
//! built-in reference problem.
//!
//! State layout convention: a problem with a second-order form stores its
//! state as `y = [q_1 .. q_n, v_1 .. v_n]`, so `dim() == 2 n`, and
//! [`Problem::accel`] acts on the first half.

use crate::stepper::Rhs;

pub mod arenstorf;
pub mod damped;
pub mod driven;
pub mod harmonic;
pub mod kepler;
pub mod linear;
pub mod lotka_volterra;
pub mod pendulum;
pub mod power_law;
pub mod registry;

/// A named conserved quantity of a problem, with the scale its error is
/// measured against (relative error = |I(t) - I(0)| / scale).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Invariant {
    /// Short name, e.g. `"energy"`.
    pub name: &'static str,
    /// Positive scale of the quantity; errors are divided by it.
    pub scale: f64,
}

/// A problem with answers known exactly (or, for user problems, at least a
/// right-hand side), against which a stepper is measured.
///
/// Only [`Rhs`], [`Problem::name`], [`Problem::initial`] and
/// [`Problem::time_unit`] are required; everything else says "not known" by
/// default.
///
/// ```
/// use drift::{Problem, Rhs};
/// /// y' = -y, y(0) = 1, exact solution exp(-t).
/// struct Decay;
/// impl Rhs for Decay {
///     fn dim(&self) -> usize { 1 }
///     fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) { dydt[0] = -y[0]; }
/// }
/// impl Problem for Decay {
///     fn name(&self) -> &str { "decay" }
///     fn initial(&self, y0: &mut [f64]) { y0[0] = 1.0; }
///     fn time_unit(&self) -> f64 { 1.0 }
///     fn exact(&self, t: f64, y: &mut [f64]) -> bool { y[0] = (-t).exp(); true }
/// }
/// let mut y = [0.0];
/// assert!(Decay.exact(0.0, &mut y));
/// assert_eq!(y[0], 1.0);
/// ```
pub trait Problem: Rhs + Send + Sync {
    /// Short identifier, e.g. `"pendulum"`.
    fn name(&self) -> &str;

    /// Start time (default 0).
    fn t0(&self) -> f64 {
        0.0
    }

    /// Writes the initial state into `y0` (length [`Rhs::dim`]).
    fn initial(&self, y0: &mut [f64]);

    /// The natural time unit: the period for periodic problems, otherwise a
    /// characteristic time. Ladders count steps per this unit and horizons
    /// are multiples of it. Must be positive and finite.
    fn time_unit(&self) -> f64;

    /// Writes a positive scale per component into `s`; the solution error of
    /// component `i` is divided by `s[i]`. Default: all ones.
    fn scales(&self, s: &mut [f64]) {
        s.fill(1.0);
    }

    /// Writes the exact solution at time `t` into `y` and returns true, or
    /// returns false where it is not known (the default: never known). A
    /// problem may know it only at some times (a periodic orbit at whole
    /// periods); samples where it is unknown are skipped.
    fn exact(&self, _t: f64, _y: &mut [f64]) -> bool {
        false
    }

    /// The conserved quantities (default none).
    fn invariants(&self) -> &[Invariant] {
        &[]
    }

    /// Writes the value of each of [`Problem::invariants`] at `(t, y)` into `out`.
    fn invariant_values(&self, _t: f64, _y: &[f64], _out: &mut [f64]) {}

    /// The exact period of the true solution, if periodic.
    fn period(&self) -> Option<f64> {
        None
    }

    /// A function of the state whose upward zero crossings happen exactly
    /// once per period; used to measure the period of the numerical
    /// solution. Default: the first component.
    fn crossing(&self, y: &[f64]) -> f64 {
        y[0]
    }

    /// For problems of the form `q'' = a(t, q)`: writes `a(t, q)` into `a`
    /// (length `dim() / 2`) and returns true. Returns false (the default)
    /// when the problem has no velocity-independent second-order form, so
    /// split steppers cannot be run on it.
    fn accel(&self, _t: f64, _q: &[f64], _a: &mut [f64]) -> bool {
        false
    }

    /// For a Hamiltonian `T(v) + V(q)` with `V` homogeneous of degree `p`:
    /// returns `(2 T, p V)` at state `y`, whose time averages over a period
    /// are equal by the virial theorem. Default: none.
    fn virial_terms(&self, _y: &[f64]) -> Option<(f64, f64)> {
        None
    }
}

/// Whether `problem` has a velocity-independent second-order form at its
/// initial state (even dimension and [`Problem::accel`] answers), so split
/// steppers can run on it.
///
/// ```
/// use drift::problem::{damped::Damped, harmonic::Harmonic, has_second_order};
/// assert!(has_second_order(&Harmonic::default()));
/// assert!(!has_second_order(&Damped::default()));
/// ```
pub fn has_second_order<P: Problem + ?Sized>(problem: &P) -> bool {
    let n = problem.dim();
    let mut y0 = vec![0.0; n];
    problem.initial(&mut y0);
    let mut a = vec![0.0; n / 2];
    n > 0 && n % 2 == 0 && problem.accel(problem.t0(), &y0[..n / 2], &mut a)
}

/// A parameter of a built-in problem was outside its allowed range.
#[derive(Clone, Debug, PartialEq)]
pub struct ParamError {
    /// The problem, e.g. `"pendulum"`.
    pub problem: &'static str,
    /// The parameter, e.g. `"amplitude_deg"`.
    pub parameter: &'static str,
    /// The value given.
    pub value: f64,
    /// The allowed range in words, e.g. `"0 < amplitude_deg < 180"`.
    pub allowed: &'static str,
}

impl std::fmt::Display for ParamError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "problem `{}`: parameter `{}` = {} is out of range; allowed: {}",
            self.problem, self.parameter, self.value, self.allowed
        )
    }
}

impl std::error::Error for ParamError {}

/// Checks `ok` for parameter `parameter` of `problem`, for use in the
/// constructors of built-in problems.
///
/// ```
/// use drift::problem::check_param;
/// assert!(check_param("pendulum", "omega", 1.0, 1.0 > 0.0, "omega > 0").is_ok());
/// let err = check_param("pendulum", "omega", -1.0, -1.0 > 0.0, "omega > 0").unwrap_err();
/// assert!(err.to_string().contains("omega > 0"));
/// ```
pub fn check_param(
    problem: &'static str,
    parameter: &'static str,
    value: f64,
    ok: bool,
    allowed: &'static str,
) -> Result<(), ParamError> {
    if ok && value.is_finite() {
        Ok(())
    } else {
        Err(ParamError {
            problem,
            parameter,
            value,
            allowed,
        })
    }
}
