//! The harmonic oscillator `x'' = -omega^2 x` ([`Harmonic`]), and the
//! compensated-arithmetic helpers (error-free products, phases carried in
//! two doubles) that the closed-form oscillator problems share
//! (`harmonic`, `damped`, `driven`, `linear`).

use super::{check_param, Invariant, ParamError, Problem};
use crate::stepper::Rhs;

/// Error-free product: returns `(p, e)` with `p = fl(a b)` and `a b = p + e`
/// exactly (TwoProduct with a fused multiply-add; Ogita, Rump and Oishi,
/// SIAM J. Sci. Comput. 26 (2005) 1955, section 3).
pub(crate) fn two_prod(a: f64, b: f64) -> (f64, f64) {
    let p = a * b;
    (p, a.mul_add(b, -p))
}

/// Error-free sum: returns `(s, e)` with `s = fl(a + b)` and `a + b = s + e`
/// exactly (TwoSum; Knuth, The Art of Computer Programming vol. 2, 4.2.2).
pub(crate) fn two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    let bb = s - a;
    (s, (a - (s - bb)) + (b - bb))
}

/// The phase `rate * t` for a rate carried as the unevaluated sum
/// `rate.0 + rate.1`, returned the same way (`|error| <~ ulp^2` of the phase).
/// Carrying the phase in two doubles keeps `cos(omega t)` accurate to an ulp
/// of the amplitude even after many periods, where rounding `omega t` to one
/// double would cost `|omega t|` ulps.
pub(crate) fn phase(rate: (f64, f64), t: f64) -> (f64, f64) {
    let (p, e) = two_prod(rate.0, t);
    (p, e + rate.1 * t)
}

/// `exp(rate t)` with the exponent carried in two doubles:
/// `exp(p + e) = exp(p) (1 + e)` to second order in the tiny `e`.
pub(crate) fn exp_phase(rate: (f64, f64), t: f64) -> f64 {
    let (p, e) = phase(rate, t);
    let x = p.exp();
    x + x * e
}

/// Sine, cosine and "sine over rate" of one phase, see [`turn`].
#[derive(Clone, Copy, Debug)]
pub(crate) struct Turn {
    /// `sin(rate t)`.
    pub sin: f64,
    /// `cos(rate t)`.
    pub cos: f64,
    /// `sin(rate t) / rate`, equal to `t` at `rate = 0`.
    pub sin_over_rate: f64,
}

/// Below this |phase| the sinc series is used (its first omitted term,
/// theta^8/9!, is below 1e-29 there).
const SINC_SERIES_BELOW: f64 = 1.0 / 1024.0;

/// `sin`, `cos` and `sin(rate t) / rate` of the phase `rate * t`, the rate
/// carried in two doubles. The phase `p + e` is evaluated as
/// `sin p + e cos p` and `cos p - e sin p` (first order in `|e| <= ulp(p)`,
/// the neglected `e^2` is far below an ulp). `sin(rate t)/rate` is
/// `t sinc(rate t)` with the Taylor series of sinc for small phases, so it
/// stays accurate (and finite) as the rate goes to zero.
pub(crate) fn turn(rate: (f64, f64), t: f64) -> Turn {
    let (p, e) = phase(rate, t);
    let (sp, cp) = p.sin_cos();
    let sin = sp + e * cp;
    let cos = cp - e * sp;
    let sin_over_rate = if p.abs() < SINC_SERIES_BELOW {
        // sinc(x) = 1 - x^2/3! + x^4/5! - x^6/7! + ..., from the series
        // of sin (A&S 4.3.65).
        let x2 = p * p;
        t * (1.0 - x2 / 6.0 * (1.0 - x2 / 20.0 * (1.0 - x2 / 42.0)))
    } else {
        // Here |p| >= 1/1024, so rate.0 != 0.
        sin / rate.0
    };
    Turn {
        sin,
        cos,
        sin_over_rate,
    }
}

/// The harmonic oscillator `x'' = -omega^2 x` with unit mass, state `[x, v]`.
///
/// Exact solution (any mechanics text, e.g. Taylor, Classical Mechanics, 5.2):
/// `x = x0 cos(omega t) + (v0/omega) sin(omega t)`,
/// `v = v0 cos(omega t) - omega x0 sin(omega t)`, evaluated with the phase
/// `omega t` carried in two doubles so that it stays within a few ulp of the
/// amplitude at any time. Energy `E = v^2/2 + omega^2 x^2/2` is conserved;
/// since `V` is homogeneous of degree 2 the virial terms are
/// `(2T, 2V) = (v^2, omega^2 x^2)`. Period `2 pi / omega`.
///
/// ```
/// use drift::Problem;
/// use drift::problem::harmonic::Harmonic;
/// let h = Harmonic::new(2.0, 1.0, 0.0).unwrap();
/// let mut y = [0.0; 2];
/// assert!(h.exact(h.period().unwrap(), &mut y));
/// assert!((y[0] - 1.0).abs() < 1e-15 && y[1].abs() < 1e-15);
/// assert!(Harmonic::new(-1.0, 1.0, 0.0).is_err());
/// ```
#[derive(Clone, Debug, PartialEq)]
pub struct Harmonic {
    omega: f64,
    x0: f64,
    v0: f64,
    amplitude: f64,
    invariants: [Invariant; 1],
}

impl Harmonic {
    /// Angular frequency `omega > 0`, initial position `x0` and velocity `v0`
    /// (finite, not both zero).
    ///
    /// ```
    /// use drift::problem::harmonic::Harmonic;
    /// let err = Harmonic::new(1.0, 0.0, 0.0).unwrap_err();
    /// assert_eq!(err.parameter, "v0");
    /// ```
    pub fn new(omega: f64, x0: f64, v0: f64) -> Result<Self, ParamError> {
        const P: &str = "harmonic";
        check_param(P, "omega", omega, omega > 0.0, "0 < omega < inf")?;
        check_param(P, "x0", x0, true, "finite")?;
        check_param(P, "v0", v0, true, "finite")?;
        check_param(P, "v0", v0, x0 != 0.0 || v0 != 0.0, "x0 and v0 not both 0")?;
        let amplitude = x0.hypot(v0 / omega);
        let energy = 0.5 * (v0 * v0 + (omega * x0) * (omega * x0));
        check_param(
            P,
            "x0",
            x0,
            amplitude.is_finite() && energy > 0.0,
            "energy finite and positive",
        )?;
        Ok(Harmonic {
            omega,
            x0,
            v0,
            amplitude,
            invariants: [Invariant {
                name: "energy",
                scale: energy,
            }],
        })
    }

    fn energy(&self, y: &[f64]) -> f64 {
        let wx = self.omega * y[0];
        0.5 * (y[1] * y[1] + wx * wx)
    }
}

impl Default for Harmonic {
    /// `omega = 1`, `x0 = 1`, `v0 = 0`.
    fn default() -> Self {
        Harmonic::new(1.0, 1.0, 0.0).expect("valid default")
    }
}

impl Rhs for Harmonic {
    fn dim(&self) -> usize {
        2
    }
    fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) {
        dydt[0] = y[1];
        dydt[1] = -self.omega * self.omega * y[0];
    }
}

impl Problem for Harmonic {
    fn name(&self) -> &str {
        "harmonic"
    }
    fn initial(&self, y0: &mut [f64]) {
        y0[0] = self.x0;
        y0[1] = self.v0;
    }
    fn time_unit(&self) -> f64 {
        std::f64::consts::TAU / self.omega
    }
    /// Amplitude `sqrt(x0^2 + (v0/omega)^2)` for `x`, `omega` times it for `v`.
    fn scales(&self, s: &mut [f64]) {
        s[0] = self.amplitude;
        s[1] = self.omega * self.amplitude;
    }
    fn exact(&self, t: f64, y: &mut [f64]) -> bool {
        let w = turn((self.omega, 0.0), t);
        y[0] = self.x0 * w.cos + self.v0 * w.sin_over_rate;
        y[1] = self.v0 * w.cos - self.omega * self.x0 * w.sin;
        true
    }
    fn invariants(&self) -> &[Invariant] {
        &self.invariants
    }
    fn invariant_values(&self, _t: f64, y: &[f64], out: &mut [f64]) {
        out[0] = self.energy(y);
    }
    fn period(&self) -> Option<f64> {
        Some(self.time_unit())
    }
    fn accel(&self, _t: f64, q: &[f64], a: &mut [f64]) -> bool {
        a[0] = -self.omega * self.omega * q[0];
        true
    }
    fn virial_terms(&self, y: &[f64]) -> Option<(f64, f64)> {
        let wx = self.omega * y[0];
        Some((y[1] * y[1], wx * wx))
    }
}
