//! The plane pendulum theta'' = -omega0^2 sin(theta) released from rest at
//! any amplitude below 180 degrees: exact period through the complete
//! elliptic integral K, exact solution through the Jacobi functions, energy.

use crate::problem::{check_param, Invariant, ParamError, Problem};
use crate::special::EllipticParameter;
use crate::stepper::Rhs;

const NAME: &str = "pendulum";
const AMPLITUDE_RANGE: &str = "0 < amplitude_deg < 180";

/// The plane pendulum theta'' = -omega0^2 sin(theta), state
/// `[theta, theta_dot]`, released from rest at `theta(0) = theta0`.
///
/// With k = sin(theta0 / 2) and m = k^2 (complement m1 = cos^2(theta0 / 2),
/// formed directly so that amplitudes near 180 degrees keep their digits):
/// - period T = 4 K(m) / omega0 (Carvalhaes and Suppes, Am. J. Phys. 76
///   (2008) 1150);
/// - theta(t) = 2 arcsin(k sn(K - omega0 t | m)),
///   theta_dot(t) = -2 k omega0 cn(K - omega0 t | m) (Belendez et al., Rev.
///   Bras. Ensino Fis. 29 (2007) 645). The angle is evaluated as
///   2 atan2(k sn, dn), which is the same quantity (cos(theta/2) = dn) but
///   stays well conditioned at the turning points of large swings, and `t`
///   is first reduced modulo the period (exactly, by `%`);
/// - energy theta_dot^2 / 2 + omega0^2 (1 - cos theta), evaluated as
///   theta_dot^2 / 2 + 2 omega0^2 sin^2(theta / 2); its value
///   2 omega0^2 m is also its scale.
///
/// Sensitivity grows without bound as the amplitude approaches 180 degrees
/// (the period diverges like ln(1 / cos(theta0 / 2))).
///
/// ```
/// use drift::Problem;
/// use drift::problem::pendulum::Pendulum;
/// let p = Pendulum::new(90.0, 1.0).unwrap();
/// // T / T0 = sqrt(pi) / Gamma(3/4)^2 at 90 degrees (OEIS A175574).
/// let ratio = p.period().unwrap() / (2.0 * std::f64::consts::PI);
/// assert!((ratio - 1.1803405990160962).abs() < 1e-15);
/// assert!(Pendulum::new(180.0, 1.0).is_err());
/// ```
#[derive(Clone, Debug)]
pub struct Pendulum {
    amplitude_deg: f64,
    omega0: f64,
    theta0: f64,
    k: f64,
    param: EllipticParameter,
    quarter_k: f64,
    period: f64,
    invariants: [Invariant; 1],
}

impl Pendulum {
    /// A pendulum of small-amplitude angular frequency `omega0 > 0`, released
    /// from rest at `0 < amplitude_deg < 180` degrees.
    ///
    /// ```
    /// use drift::problem::pendulum::Pendulum;
    /// let err = Pendulum::new(0.0, 1.0).unwrap_err();
    /// assert_eq!(err.parameter, "amplitude_deg");
    /// assert!(Pendulum::new(30.0, -2.0).unwrap_err().to_string().contains("omega0 > 0"));
    /// ```
    pub fn new(amplitude_deg: f64, omega0: f64) -> Result<Self, ParamError> {
        let amplitude_err = || ParamError {
            problem: NAME,
            parameter: "amplitude_deg",
            value: amplitude_deg,
            allowed: AMPLITUDE_RANGE,
        };
        check_param(
            NAME,
            "amplitude_deg",
            amplitude_deg,
            amplitude_deg > 0.0 && amplitude_deg < 180.0,
            AMPLITUDE_RANGE,
        )?;
        check_param(NAME, "omega0", omega0, omega0 > 0.0, "omega0 > 0")?;
        let theta0 = amplitude_deg.to_radians();
        let (k, kc) = (0.5 * theta0).sin_cos();
        // An amplitude just below 180 degrees can round to theta0 beyond pi
        // (kc < 0), and a tiny one to m = 0; both are outside the range.
        let (m, m1) = (k * k, kc * kc);
        if !(kc > 0.0 && m > 0.0) {
            return Err(amplitude_err());
        }
        let param = if m <= 0.5 {
            EllipticParameter::from_m(m)
        } else {
            EllipticParameter::from_m1(m1)
        }
        .map_err(|_| amplitude_err())?;
        let quarter_k = param.complete_k();
        let period = 4.0 * quarter_k / omega0;
        let energy = 2.0 * omega0 * omega0 * m;
        check_param(
            NAME,
            "omega0",
            omega0,
            energy > 0.0 && energy.is_finite() && period.is_finite(),
            "omega0 > 0 with positive finite energy 2 omega0^2 sin^2(theta0/2) and period",
        )?;
        Ok(Pendulum {
            amplitude_deg,
            omega0,
            theta0,
            k,
            param,
            quarter_k,
            period,
            invariants: [Invariant {
                name: "energy",
                scale: energy,
            }],
        })
    }

    /// The release amplitude in degrees.
    ///
    /// ```
    /// assert_eq!(drift::problem::pendulum::Pendulum::new(45.0, 1.0).unwrap().amplitude_deg(), 45.0);
    /// ```
    pub fn amplitude_deg(&self) -> f64 {
        self.amplitude_deg
    }

    /// The release angle theta0 in radians (`amplitude_deg.to_radians()`).
    ///
    /// ```
    /// let p = drift::problem::pendulum::Pendulum::new(90.0, 1.0).unwrap();
    /// assert_eq!(p.theta0(), std::f64::consts::FRAC_PI_2);
    /// ```
    pub fn theta0(&self) -> f64 {
        self.theta0
    }

    /// The small-amplitude angular frequency omega0.
    ///
    /// ```
    /// assert_eq!(drift::problem::pendulum::Pendulum::new(45.0, 3.0).unwrap().omega0(), 3.0);
    /// ```
    pub fn omega0(&self) -> f64 {
        self.omega0
    }

    fn energy_of(&self, y: &[f64]) -> f64 {
        let s = (0.5 * y[0]).sin();
        0.5 * y[1] * y[1] + 2.0 * self.omega0 * self.omega0 * s * s
    }
}

impl Default for Pendulum {
    /// 60 degrees, omega0 = 1.
    fn default() -> Self {
        Pendulum::new(60.0, 1.0).expect("default pendulum parameters are in range")
    }
}

impl Rhs for Pendulum {
    fn dim(&self) -> usize {
        2
    }
    fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) {
        dydt[0] = y[1];
        dydt[1] = -self.omega0 * self.omega0 * y[0].sin();
    }
}

impl Problem for Pendulum {
    fn name(&self) -> &str {
        NAME
    }

    fn initial(&self, y0: &mut [f64]) {
        y0[0] = self.theta0;
        y0[1] = 0.0;
    }

    /// The period.
    fn time_unit(&self) -> f64 {
        self.period
    }

    /// theta0 for the angle, the peak angular speed 2 k omega0 for the rate.
    fn scales(&self, s: &mut [f64]) {
        s[0] = self.theta0;
        s[1] = 2.0 * self.k * self.omega0;
    }

    fn exact(&self, t: f64, y: &mut [f64]) -> bool {
        let u = self.quarter_k - self.omega0 * (t % self.period);
        let Ok((sn, cn, dn)) = self.param.sn_cn_dn(u) else {
            return false; // t not finite
        };
        y[0] = 2.0 * (self.k * sn).atan2(dn);
        y[1] = -2.0 * self.k * self.omega0 * cn;
        true
    }

    fn invariants(&self) -> &[Invariant] {
        &self.invariants
    }

    fn invariant_values(&self, _t: f64, y: &[f64], out: &mut [f64]) {
        out[0] = self.energy_of(y);
    }

    fn period(&self) -> Option<f64> {
        Some(self.period)
    }

    /// theta itself: it crosses zero upwards once per period, at 3T/4.
    fn crossing(&self, y: &[f64]) -> f64 {
        y[0]
    }

    fn accel(&self, _t: f64, q: &[f64], a: &mut [f64]) -> bool {
        a[0] = -self.omega0 * self.omega0 * q[0].sin();
        true
    }
}
