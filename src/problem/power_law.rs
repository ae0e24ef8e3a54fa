//! The power-law oscillator, potential V = k |x|^p for real p > 1: exact
//! period through Gamma functions, exact state at every quarter period,
//! energy and the virial theorem 2 <T> = p <V>.

use crate::problem::{check_param, Invariant, ParamError, Problem};
use crate::special::gamma_ratio_half;
use crate::stepper::Rhs;

const NAME: &str = "power_law";

/// One-dimensional motion of mass `m` in the potential V = k |x|^p,
/// m x'' = -p k |x|^(p-1) sign(x), state `[x, v]`, released from rest at
/// x = A.
///
/// - Period T = (2/p) sqrt(2 pi m / k) A^(1 - p/2) Gamma(1/p) / Gamma(1/p + 1/2)
///   (Landau and Lifshitz, Mechanics, 3rd ed., section 11 problem 2).
/// - Exact state: known at the multiples of T/4, where it is
///   (A, 0), (0, -v_max), (-A, 0), (0, v_max) in turn, v_max = sqrt(2 E / m).
///   [`Problem::exact`] answers at times within a small window around a
///   multiple j T/4 (the window is at most 1e-9 T, and smaller where needed,
///   see below), returning the state at j T/4 advanced to first order,
///   y + dt f(y), so rounding of the sample time costs nothing; elsewhere it
///   returns false.
/// - Energy E = m v^2 / 2 + k |x|^p = k A^p (its own scale); virial terms
///   (2 T, p V) = (m v^2, p k |x|^p), whose averages over a period agree
///   (Landau and Lifshitz section 10).
///
/// For 1 < p < 2 the force is not differentiable at x = 0, so the solution
/// is only about p + 1 times differentiable there: high-order steppers show
/// reduced convergence order on this problem. That is a property of the
/// problem, not a bug in the stepper. For the same reason the exactness
/// window shrinks: it is the largest |dt| for which the neglected terms,
/// (k/m) v_max^(p-2) |dt|^p relative at the zero crossings and
/// (p k A^(p-2) / (2 m)) dt^2 relative at the turning points, stay below a
/// quarter of f64 epsilon.
///
/// ```
/// use drift::Problem;
/// use drift::problem::power_law::PowerLaw;
/// // p = 2, m = k = A = 1: harmonic, T = pi sqrt 2 (Landau and Lifshitz).
/// let h = PowerLaw::new(2.0, 1.0, 1.0, 1.0).unwrap();
/// assert!((h.period().unwrap() - 4.442882938158366).abs() < 2e-15);
/// let mut y = [0.0; 2];
/// assert!(h.exact(h.period().unwrap() / 2.0, &mut y));
/// assert_eq!(y, [-1.0, 0.0]);
/// assert!(!h.exact(1.0, &mut y));
/// ```
#[derive(Clone, Debug)]
pub struct PowerLaw {
    p: f64,
    k: f64,
    mass: f64,
    amplitude: f64,
    /// p k / m, the force coefficient per unit mass.
    force: f64,
    v_max: f64,
    period: f64,
    quarter: f64,
    window: f64,
    invariants: [Invariant; 1],
}

impl PowerLaw {
    /// The oscillator with exponent `p > 1`, stiffness `k > 0`, mass
    /// `m > 0` and amplitude `amplitude > 0` (in that order).
    ///
    /// ```
    /// use drift::problem::power_law::PowerLaw;
    /// let err = PowerLaw::new(1.0, 1.0, 1.0, 1.0).unwrap_err();
    /// assert_eq!((err.parameter, err.allowed), ("p", "p > 1"));
    /// assert!(PowerLaw::new(4.0, 1.0, 0.0, 1.0).is_err());
    /// ```
    pub fn new(p: f64, k: f64, m: f64, amplitude: f64) -> Result<Self, ParamError> {
        check_param(NAME, "p", p, p > 1.0, "p > 1")?;
        check_param(NAME, "k", k, k > 0.0, "k > 0")?;
        check_param(NAME, "m", m, m > 0.0, "m > 0")?;
        check_param(
            NAME,
            "amplitude",
            amplitude,
            amplitude > 0.0,
            "amplitude > 0",
        )?;
        let energy = k * amplitude.powf(p);
        let v_max = (2.0 * energy / m).sqrt();
        // 1/p lies in (0, 1), inside the domain of the gamma ratio.
        let ratio = gamma_ratio_half(1.0 / p).map_err(|_| ParamError {
            problem: NAME,
            parameter: "p",
            value: p,
            allowed: "p > 1",
        })?;
        let period = (2.0 / p)
            * (std::f64::consts::TAU * m / k).sqrt()
            * amplitude.powf(1.0 - 0.5 * p)
            * ratio;
        check_param(
            NAME,
            "amplitude",
            amplitude,
            energy > 0.0 && v_max > 0.0 && v_max.is_finite() && period.is_finite() && period > 0.0,
            "amplitude > 0 with positive finite energy k amplitude^p, peak speed and period",
        )?;
        let quarter_eps = 0.25 * f64::EPSILON;
        let turning = (quarter_eps * 2.0 * m / (p * k * amplitude.powf(p - 2.0))).sqrt();
        let crossing = (quarter_eps * m / (k * v_max.powf(p - 2.0))).powf(1.0 / p);
        let window = (1e-9 * period).min(turning).min(crossing);
        Ok(PowerLaw {
            p,
            k,
            mass: m,
            amplitude,
            force: p * k / m,
            v_max,
            period,
            quarter: 0.25 * period,
            window,
            invariants: [Invariant {
                name: "energy",
                scale: energy,
            }],
        })
    }

    /// The exponent p.
    ///
    /// ```
    /// assert_eq!(drift::problem::power_law::PowerLaw::default().p(), 4.0);
    /// ```
    pub fn p(&self) -> f64 {
        self.p
    }

    /// The largest |t - j T/4| at which [`Problem::exact`] still answers.
    ///
    /// ```
    /// let q = drift::problem::power_law::PowerLaw::new(1.5, 1.0, 1.0, 1.0).unwrap();
    /// assert!(q.exact_window() < 1e-9 * 3.0);
    /// ```
    pub fn exact_window(&self) -> f64 {
        self.window
    }

    fn accel_of(&self, x: f64) -> f64 {
        -self.force * x.abs().powf(self.p - 1.0) * x.signum()
    }
}

impl Default for PowerLaw {
    /// The quartic oscillator p = 4 with k = m = A = 1.
    fn default() -> Self {
        PowerLaw::new(4.0, 1.0, 1.0, 1.0).expect("default power-law parameters are in range")
    }
}

impl Rhs for PowerLaw {
    fn dim(&self) -> usize {
        2
    }
    fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) {
        dydt[0] = y[1];
        dydt[1] = self.accel_of(y[0]);
    }
}

impl Problem for PowerLaw {
    fn name(&self) -> &str {
        NAME
    }

    fn initial(&self, y0: &mut [f64]) {
        y0[0] = self.amplitude;
        y0[1] = 0.0;
    }

    /// The period.
    fn time_unit(&self) -> f64 {
        self.period
    }

    /// The amplitude for x, the peak speed for v.
    fn scales(&self, s: &mut [f64]) {
        s[0] = self.amplitude;
        s[1] = self.v_max;
    }

    fn exact(&self, t: f64, y: &mut [f64]) -> bool {
        let j = (t / self.quarter).round();
        let dt = (-j).mul_add(self.quarter, t);
        if dt.is_nan() || dt.abs() > self.window {
            return false; // off the quarter periods, or t not finite
        }
        let (x, v) = match j.rem_euclid(4.0) as u8 {
            0 => (self.amplitude, 0.0),
            1 => (0.0, -self.v_max),
            2 => (-self.amplitude, 0.0),
            _ => (0.0, self.v_max),
        };
        y[0] = x + dt * v;
        y[1] = v + dt * self.accel_of(x);
        true
    }

    fn invariants(&self) -> &[Invariant] {
        &self.invariants
    }

    fn invariant_values(&self, _t: f64, y: &[f64], out: &mut [f64]) {
        out[0] = 0.5 * self.mass * y[1] * y[1] + self.k * y[0].abs().powf(self.p);
    }

    fn period(&self) -> Option<f64> {
        Some(self.period)
    }

    /// x itself: it crosses zero upwards once per period, at 3T/4.
    fn crossing(&self, y: &[f64]) -> f64 {
        y[0]
    }

    fn accel(&self, _t: f64, q: &[f64], a: &mut [f64]) -> bool {
        a[0] = self.accel_of(q[0]);
        true
    }

    fn virial_terms(&self, y: &[f64]) -> Option<(f64, f64)> {
        Some((
            self.mass * y[1] * y[1],
            self.p * self.k * y[0].abs().powf(self.p),
        ))
    }
}
