//! The damped oscillator `x'' + 2 gamma x' + omega0^2 x = 0` ([`Damped`]) in
//! its three regimes, with one closed form that stays accurate across the
//! critical point.

use super::harmonic::{exp_phase, turn, two_prod, two_sum};
use super::{check_param, ParamError, Problem};
use crate::stepper::Rhs;

/// Which closed form applies, by the sign of `gamma^2 - omega0^2`.
///
/// ```
/// use drift::problem::damped::{Damped, Regime};
/// assert_eq!(Damped::new(2.0, 2.0 * (1.0 + 1e-12), 1.0, 0.0).unwrap().regime(), Regime::Over);
/// ```
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Regime {
    /// `gamma < omega0`: decaying oscillation at `omega_d = sqrt(omega0^2 - gamma^2)`.
    Under,
    /// `gamma == omega0`: `x = exp(-gamma t) (x0 + (v0 + gamma x0) t)`.
    Critical,
    /// `gamma > omega0`: sum of two decaying exponentials.
    Over,
}

/// The damped oscillator `x'' + 2 gamma x' + omega0^2 x = 0`, state `[x, v]`.
///
/// Exact solution (Taylor, Classical Mechanics, 5.4): with
/// `D = gamma^2 - omega0^2`, `kappa = sqrt(|D|)` and the two entire
/// functions `C(t) = cosh(sqrt(D) t)`, `S(t) = sinh(sqrt(D) t)/sqrt(D)`
/// (`cos(kappa t)`, `sin(kappa t)/kappa` when under-damped; `1`, `t` when
/// critical; `cosh(kappa t)`, `sinh(kappa t)/kappa` when over-damped),
///
/// `x = exp(-gamma t) (x0 C + (v0 + gamma x0) S)`,
/// `v = exp(-gamma t) (v0 C - (gamma v0 + omega0^2 x0) S)`,
///
/// which is `exp(A t)` for the companion matrix `A`, written as
/// `exp(-gamma t) (C I + S (A + gamma I))` since `(A + gamma I)^2 = D I`.
/// Accuracy near the critical point: `D` is formed as
/// `(gamma - omega0)(gamma + omega0)` in two doubles, `S` as `t sinc(kappa t)`
/// with a series for small phases, and in the over-damped regime
/// `exp(-gamma t) S = exp(-(gamma - kappa) t) t (1 - exp(-2 kappa t))/(2 kappa t)`
/// with `expm1` and `gamma - kappa = omega0^2 / (gamma + kappa)`, so nothing
/// cancels on either side of `gamma = omega0`.
///
/// The force depends on the velocity, so there is no split form
/// ([`Problem::accel`] returns false), and there are no invariants.
///
/// ```
/// use drift::Problem;
/// use drift::problem::damped::{Damped, Regime};
/// let d = Damped::new(1.0, 1.0, 1.0, 0.0).unwrap();
/// assert_eq!(d.regime(), Regime::Critical);
/// let mut y = [0.0; 2];
/// d.exact(2.0, &mut y);
/// // critical: x = exp(-t) (1 + t)
/// assert!((y[0] - 3.0 * (-2.0f64).exp()).abs() < 1e-15);
/// ```
#[derive(Clone, Debug, PartialEq)]
pub struct Damped {
    omega0: f64,
    gamma: f64,
    x0: f64,
    v0: f64,
    /// `kappa = sqrt(|gamma^2 - omega0^2|)` in two doubles.
    kappa: (f64, f64),
    regime: Regime,
    amplitude: f64,
}

/// `(1 - exp(-z)) / z`, with its Taylor series `1 - z/2 + z^2/6 - z^3/24 + z^4/120`
/// for `|z| < 1/1024` (the first omitted term, `z^5/720`, is below 1.2e-18
/// there, far below an ulp of the leading 1), `-expm1(-z)/z` elsewhere.
fn one_minus_exp_over(z: f64) -> f64 {
    if z.abs() < 1.0 / 1024.0 {
        1.0 - z / 2.0 * (1.0 - z / 3.0 * (1.0 - z / 4.0 * (1.0 - z / 5.0)))
    } else {
        -(-z).exp_m1() / z
    }
}

/// `sqrt(hi + lo)` for `hi >= 0`, in two doubles: one Newton correction of
/// the double square root, with the residual formed exactly by an FMA.
fn sqrt2(hi: f64, lo: f64) -> (f64, f64) {
    let r = hi.sqrt();
    if r == 0.0 {
        return (0.0, 0.0);
    }
    let resid = (-r).mul_add(r, hi) + lo;
    (r, resid / (2.0 * r))
}

impl Damped {
    /// Natural frequency `omega0 > 0`, damping rate `gamma >= 0`, initial
    /// position `x0` and velocity `v0` (finite, not both zero).
    ///
    /// ```
    /// use drift::problem::damped::{Damped, Regime};
    /// assert_eq!(Damped::new(1.0, 3.0, 1.0, 0.0).unwrap().regime(), Regime::Over);
    /// assert_eq!(Damped::new(1.0, -0.1, 1.0, 0.0).unwrap_err().parameter, "gamma");
    /// ```
    pub fn new(omega0: f64, gamma: f64, x0: f64, v0: f64) -> Result<Self, ParamError> {
        const P: &str = "damped";
        check_param(P, "omega0", omega0, omega0 > 0.0, "0 < omega0 < inf")?;
        check_param(P, "gamma", gamma, gamma >= 0.0, "0 <= gamma < inf")?;
        check_param(P, "x0", x0, true, "finite")?;
        check_param(P, "v0", v0, true, "finite")?;
        check_param(P, "v0", v0, x0 != 0.0 || v0 != 0.0, "x0 and v0 not both 0")?;
        let amplitude = x0.hypot(v0 / omega0);
        check_param(
            P,
            "x0",
            x0,
            amplitude.is_finite(),
            "hypot(x0, v0/omega0) finite",
        )?;
        // D = (gamma - omega0)(gamma + omega0) in two doubles: the factors by
        // TwoSum, their product by TwoProduct plus the cross terms.
        let (d, de) = two_sum(gamma, -omega0);
        let (s, se) = two_sum(gamma, omega0);
        let (p, pe) = two_prod(d, s);
        let (dhi, dlo) = two_sum(p, pe + d * se + de * s);
        let regime = if dhi < 0.0 {
            Regime::Under
        } else if dhi > 0.0 {
            Regime::Over
        } else {
            Regime::Critical
        };
        let kappa = if dhi < 0.0 {
            sqrt2(-dhi, -dlo)
        } else {
            sqrt2(dhi, dlo)
        };
        Ok(Damped {
            omega0,
            gamma,
            x0,
            v0,
            kappa,
            regime,
            amplitude,
        })
    }

    /// The regime, by the sign of `gamma^2 - omega0^2`.
    ///
    /// ```
    /// use drift::problem::damped::{Damped, Regime};
    /// assert_eq!(Damped::default().regime(), Regime::Under);
    /// ```
    pub fn regime(&self) -> Regime {
        self.regime
    }

    /// `(exp(-gamma t) C(t), exp(-gamma t) S(t))`, see the type's docs.
    fn propagator(&self, t: f64) -> (f64, f64) {
        match self.regime {
            Regime::Under | Regime::Critical => {
                let decay = exp_phase((-self.gamma, 0.0), t);
                let w = turn(self.kappa, t);
                (decay * w.cos, decay * w.sin_over_rate)
            }
            Regime::Over => {
                let k = self.kappa.0;
                // gamma - kappa = omega0^2/(gamma + kappa): no cancellation.
                let slow = -(self.omega0 * self.omega0) / (self.gamma + k);
                let a1 = (slow * t).exp();
                let m = (-2.0 * k * t).exp_m1();
                (
                    a1 * (1.0 + 0.5 * m),
                    a1 * t * one_minus_exp_over(2.0 * k * t),
                )
            }
        }
    }
}

impl Default for Damped {
    /// Light damping: `omega0 = 1`, `gamma = 0.1`, `x0 = 1`, `v0 = 0`.
    fn default() -> Self {
        Damped::new(1.0, 0.1, 1.0, 0.0).expect("valid default")
    }
}

impl Rhs for Damped {
    fn dim(&self) -> usize {
        2
    }
    fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) {
        dydt[0] = y[1];
        dydt[1] = -2.0 * self.gamma * y[1] - self.omega0 * self.omega0 * y[0];
    }
}

impl Problem for Damped {
    fn name(&self) -> &str {
        "damped"
    }
    fn initial(&self, y0: &mut [f64]) {
        y0[0] = self.x0;
        y0[1] = self.v0;
    }
    /// The undamped period `2 pi / omega0`.
    fn time_unit(&self) -> f64 {
        std::f64::consts::TAU / self.omega0
    }
    /// Initial amplitude `sqrt(x0^2 + (v0/omega0)^2)` for `x`, `omega0`
    /// times it for `v`.
    fn scales(&self, s: &mut [f64]) {
        s[0] = self.amplitude;
        s[1] = self.omega0 * self.amplitude;
    }
    fn exact(&self, t: f64, y: &mut [f64]) -> bool {
        let (c, s) = self.propagator(t);
        let (g, w2) = (self.gamma, self.omega0 * self.omega0);
        y[0] = c * self.x0 + s * (self.v0 + g * self.x0);
        y[1] = c * self.v0 - s * (g * self.v0 + w2 * self.x0);
        true
    }
}
