//! The Lotka-Volterra predator-prey system ([`LotkaVolterra`]): a first
//! integral and a periodic orbit whose period is computed by quadrature.

use super::{check_param, Invariant, ParamError, Problem};
use crate::stepper::Rhs;

/// The Lotka-Volterra equations `u' = u (v - b)`, `v' = v (a - u)`, state
/// `[u, v]`; with the defaults `a = 1`, `b = 2` they are exactly the example
/// of Hairer, Lubich and Wanner, Geometric Numerical Integration, 2nd ed.,
/// I.1.1: `u' = u (v - 2)`, `v' = v (1 - u)`.
///
/// First integral `I = a ln u - u + b ln v - v` (for the defaults
/// `I = ln u - u + 2 ln v - v`, HLW I.1.1; `dI/dt = (a - u)(v - b) + (b - v)(a - u) = 0`).
/// Its scale is `|a ln u0| + u0 + |b ln v0| + v0`, the size of the terms that
/// rounding acts on (`I` itself may vanish). No exact solution, no
/// second-order form.
///
/// Every orbit other than the equilibrium `(a, b)` is periodic. Its period is
/// computed at construction, to about 1e-15 relative, by a quadrature
/// (own derivation): in `p = ln(u/a)`, `q = ln(v/b)` the system is
/// Hamiltonian with the separable `K = a g(p) + b g(q)`, `g(x) = e^x - 1 - x`.
/// Writing `a g(p) = s^2`, `b g(q) = r^2` (signs of `p`, `q`) maps each orbit
/// onto the circle `s^2 + r^2 = R^2`, and the period is the derivative of the
/// enclosed area with respect to `K` (the area-period relation of one
/// degree of freedom, e.g. Arnold, Mathematical Methods of Classical
/// Mechanics, section 50, from memory),
/// `T = 1/(2 sqrt(a b)) * integral over 0..2 pi of X(R cos(phi)/sqrt(a)) X(R sin(phi)/sqrt(b)) dphi`,
/// `X(w) = dx/dw` on `g(x) = w^2` (`X(w) = 2 w / expm1(x)`, `X(0) = sqrt 2`).
/// The integrand is smooth and periodic, so the trapezoidal rule converges
/// geometrically (Trefethen and Weideman, SIAM Review 56 (2014) 385); points
/// are doubled until two estimates agree to 1e-13 (the error of the last one
/// is then far smaller). As `R -> 0` this gives `2 pi / sqrt(a b)`, the
/// linearised period about the equilibrium. [`Problem::time_unit`] is this
/// period. Very large orbits make the integrand sharply peaked: the
/// constructor resolves orbits whose populations reach about 1e10 times the
/// equilibrium (small populations down to 1e-100 and below are fine) and
/// rejects larger ones.
///
/// ```
/// use drift::Problem;
/// use drift::problem::lotka_volterra::LotkaVolterra;
/// let lv = LotkaVolterra::default();
/// let mut i = [0.0];
/// lv.invariant_values(0.0, &[2.0, 2.0], &mut i);
/// assert!((i[0] - (3.0 * 2f64.ln() - 4.0)).abs() < 1e-15);
/// let t = lv.period().unwrap();
/// assert!(t > std::f64::consts::TAU / 2f64.sqrt());
/// ```
#[derive(Clone, Debug, PartialEq)]
pub struct LotkaVolterra {
    a: f64,
    b: f64,
    u0: f64,
    v0: f64,
    period: f64,
    u_max: f64,
    v_max: f64,
    invariants: [Invariant; 1],
}

/// `g(x) = e^x - 1 - x >= 0`: Taylor series `sum_{k >= 2} x^k / k!` for
/// `|x| < 1/2` (terms to `x^20/20!`, the rest below 1e-25 there), else
/// `expm1(x) - x` (cancels by at most a factor 4.4 at `|x| = 1/2`).
fn excess(x: f64) -> f64 {
    if x.abs() < 0.5 {
        let mut sum = 0.0;
        for k in (2..=20).rev() {
            sum = (sum + 1.0) * x / k as f64;
        }
        sum * x
    } else {
        x.exp_m1() - x
    }
}

/// Solves `sign(x) sqrt(g(x)) = w` for `x` and returns `(x, dx/dw)`.
///
/// Newton's method on the increasing convex function
/// `phi(x) = sign(x) sqrt(g(x))`, `phi'(x) = expm1(x) / (2 phi(x))`: from any
/// start the first step lands right of the root and the iterates then fall
/// monotonically and quadratically to it. Stops when a step changes `x` by
/// less than 2 ulp; after 100 steps (never reached: under 60 for
/// `|w| <= 1e150`) the last iterate is returned.
fn inverse_excess(w: f64) -> (f64, f64) {
    if w == 0.0 {
        return (0.0, std::f64::consts::SQRT_2);
    }
    // Start: sqrt(2) w for small w; 2 ln w for large positive w; -(w^2 + 1)
    // for large negative w.
    let mut x = if w > 0.0 {
        (std::f64::consts::SQRT_2 * w + w * w).ln_1p()
    } else {
        -(std::f64::consts::SQRT_2 * -w + w * w)
    };
    for _ in 0..100 {
        let g = excess(x);
        let phi = g.max(0.0).sqrt().copysign(x);
        let d = x.exp_m1();
        if d == 0.0 || phi == 0.0 {
            // x underflowed to 0: the root is x = sqrt(2) w to first order.
            x = std::f64::consts::SQRT_2 * w;
            break;
        }
        let step = (phi - w) * 2.0 * phi / d;
        x -= step;
        if step.abs() <= 2.0 * f64::EPSILON * x.abs() {
            break;
        }
    }
    let d = x.exp_m1();
    let slope = if d == 0.0 {
        std::f64::consts::SQRT_2
    } else {
        2.0 * w / d
    };
    (x, slope)
}

/// The period by the trapezoidal rule on the circle, see [`LotkaVolterra`].
/// Returns `None` if 2^20 points do not reach agreement to 1e-13.
fn period_quadrature(a: f64, b: f64, radius: f64) -> Option<f64> {
    let (sa, sb) = (a.sqrt(), b.sqrt());
    let integrand = |phi: f64| {
        let (s, c) = phi.sin_cos();
        inverse_excess(radius * c / sa).1 * inverse_excess(radius * s / sb).1
    };
    let factor = 1.0 / (2.0 * (a * b).sqrt());
    let mut n: u32 = 8;
    let mut sum: f64 = (0..n)
        .map(|j| integrand(std::f64::consts::TAU * f64::from(j) / f64::from(n)))
        .sum();
    let mut estimate = factor * std::f64::consts::TAU * sum / f64::from(n);
    while n < 1 << 20 {
        // Add the midpoints: the 2n-point rule reuses the n-point sum.
        let mid: f64 = (0..n)
            .map(|j| integrand(std::f64::consts::TAU * (f64::from(j) + 0.5) / f64::from(n)))
            .sum();
        sum += mid;
        n *= 2;
        let next = factor * std::f64::consts::TAU * sum / f64::from(n);
        let converged = (next - estimate).abs() <= 1e-13 * next;
        estimate = next;
        if converged {
            return Some(estimate);
        }
    }
    None
}

impl LotkaVolterra {
    /// Rates `a > 0`, `b > 0` (the equilibrium is `(a, b)`) and initial
    /// populations `u0 > 0`, `v0 > 0`, not at the equilibrium (and not on an
    /// orbit too large for the period quadrature, see [`LotkaVolterra`]).
    ///
    /// ```
    /// use drift::problem::lotka_volterra::LotkaVolterra;
    /// assert!(LotkaVolterra::new(1.0, 2.0, 4.0, 8.0).is_ok());
    /// assert_eq!(LotkaVolterra::new(1.0, 2.0, 0.0, 1.0).unwrap_err().parameter, "u0");
    /// assert_eq!(LotkaVolterra::new(1.0, 2.0, 1.0, 2.0).unwrap_err().parameter, "v0");
    /// ```
    pub fn new(a: f64, b: f64, u0: f64, v0: f64) -> Result<Self, ParamError> {
        const P: &str = "lotka_volterra";
        check_param(P, "a", a, a > 0.0, "0 < a < inf")?;
        check_param(P, "b", b, b > 0.0, "0 < b < inf")?;
        check_param(P, "u0", u0, u0 > 0.0, "0 < u0 < inf")?;
        check_param(P, "v0", v0, v0 > 0.0, "0 < v0 < inf")?;
        check_param(
            P,
            "v0",
            v0,
            u0 != a || v0 != b,
            "(u0, v0) != (a, b), the equilibrium",
        )?;
        // R^2 = a g(ln(u0/a)) + b g(ln(v0/b)), formed without cancellation.
        let radius = (a * excess((u0 / a).ln()) + b * excess((v0 / b).ln())).sqrt();
        let ok = radius > 0.0 && radius.is_finite();
        check_param(P, "u0", u0, ok, "(u0, v0) resolvably away from (a, b)")?;
        // Blame the population farther (in log) from its equilibrium value.
        let (parameter, value) = if (u0 / a).ln().abs() >= (v0 / b).ln().abs() {
            ("u0", u0)
        } else {
            ("v0", v0)
        };
        let period = period_quadrature(a, b, radius).ok_or(ParamError {
            problem: P,
            parameter,
            value,
            allowed: "an orbit whose period the quadrature resolves \
                      (populations up to about 1e10 times the equilibrium)",
        })?;
        let scale = (a * u0.ln()).abs() + u0 + (b * v0.ln()).abs() + v0;
        Ok(LotkaVolterra {
            a,
            b,
            u0,
            v0,
            period,
            u_max: a * inverse_excess(radius / a.sqrt()).0.exp(),
            v_max: b * inverse_excess(radius / b.sqrt()).0.exp(),
            invariants: [Invariant {
                name: "first_integral",
                scale,
            }],
        })
    }
}

impl Default for LotkaVolterra {
    /// HLW I.1.1: `a = 1`, `b = 2`, `(u0, v0) = (2, 2)`, where `I = 3 ln 2 - 4`.
    fn default() -> Self {
        LotkaVolterra::new(1.0, 2.0, 2.0, 2.0).expect("valid default")
    }
}

impl Rhs for LotkaVolterra {
    fn dim(&self) -> usize {
        2
    }
    fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) {
        dydt[0] = y[0] * (y[1] - self.b);
        dydt[1] = y[1] * (self.a - y[0]);
    }
}

impl Problem for LotkaVolterra {
    fn name(&self) -> &str {
        "lotka_volterra"
    }
    fn initial(&self, y0: &mut [f64]) {
        y0[0] = self.u0;
        y0[1] = self.v0;
    }
    /// The period of the orbit.
    fn time_unit(&self) -> f64 {
        self.period
    }
    /// The largest value each population reaches on the orbit.
    fn scales(&self, s: &mut [f64]) {
        s[0] = self.u_max;
        s[1] = self.v_max;
    }
    fn invariants(&self) -> &[Invariant] {
        &self.invariants
    }
    /// NaN for a non-positive population (only a failing stepper produces one).
    fn invariant_values(&self, _t: f64, y: &[f64], out: &mut [f64]) {
        out[0] = self.a * y[0].ln() - y[0] + self.b * y[1].ln() - y[1];
    }
    fn period(&self) -> Option<f64> {
        Some(self.period)
    }
    /// `v - b`: the orbit circles the equilibrium clockwise and is convex in
    /// `(ln u, ln v)`, so `v` passes upward through `b` once per period (at
    /// `u < a`).
    fn crossing(&self, y: &[f64]) -> f64 {
        y[1] - self.b
    }
}
