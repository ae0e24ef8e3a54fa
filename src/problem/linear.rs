//! The linear test equation `y' = lambda y` with a complex eigenvalue
//! ([`Linear`]), as a real system of two components.

use super::harmonic::{exp_phase, turn};
use super::{check_param, Invariant, ParamError, Problem};
use crate::stepper::Rhs;

/// The linear test equation `y' = lambda y`, `lambda = re + i im`, written
/// for the state `[Re y, Im y]`:
/// `(Re y)' = re Re y - im Im y`, `(Im y)' = im Re y + re Im y`
/// (Dahlquist's test equation, BIT 3 (1963) 27; Hairer and Wanner, Solving
/// Ordinary Differential Equations II, IV.2).
///
/// Exact solution `y = exp(lambda t) y0`: `exp(re t) (cos(im t) + i sin(im t)) y0`,
/// exponent and phase carried in two doubles. Time unit `2 pi / |lambda|`
/// (the period of the rotation when `re = 0`, the e-folding time times
/// `2 pi` when `im = 0`). When `re == 0` the modulus is conserved: the
/// problem then has the invariant `modulus2 = |y|^2` and the period
/// `2 pi / |im|`; otherwise neither. Scales: `|y0|` for both components
/// (for `re > 0` the solution grows like `exp(re t)` and so do the errors
/// measured against this fixed scale). No second-order form.
///
/// ```
/// use drift::Problem;
/// use drift::problem::linear::Linear;
/// let l = Linear::new(-1.0, 0.0).unwrap();
/// let mut y = [0.0; 2];
/// l.exact(1.0, &mut y);
/// assert!((y[0] - (-1.0f64).exp()).abs() < 1e-16 && y[1] == 0.0);
/// assert!(l.invariants().is_empty());
/// ```
#[derive(Clone, Debug, PartialEq)]
pub struct Linear {
    re: f64,
    im: f64,
    y0: [f64; 2],
    modulus0: f64,
    invariants: [Invariant; 1],
}

impl Linear {
    /// `lambda = re + i im` (finite, not both zero), `y(0) = 1`.
    ///
    /// ```
    /// use drift::problem::linear::Linear;
    /// assert_eq!(Linear::new(0.0, 0.0).unwrap_err().parameter, "im");
    /// ```
    pub fn new(re: f64, im: f64) -> Result<Self, ParamError> {
        Linear::with_initial(re, im, 1.0, 0.0)
    }

    /// `lambda = re + i im` (finite, not both zero), `y(0) = y0_re + i y0_im`
    /// (finite, not zero).
    ///
    /// ```
    /// use drift::Problem;
    /// use drift::problem::linear::Linear;
    /// let l = Linear::with_initial(0.0, 2.0, 0.0, 3.0).unwrap();
    /// assert_eq!(l.invariants()[0].name, "modulus2");
    /// assert_eq!(l.period(), Some(std::f64::consts::PI));
    /// ```
    pub fn with_initial(re: f64, im: f64, y0_re: f64, y0_im: f64) -> Result<Self, ParamError> {
        const P: &str = "linear";
        check_param(P, "re", re, true, "finite")?;
        check_param(P, "im", im, true, "finite")?;
        check_param(P, "im", im, re != 0.0 || im != 0.0, "re and im not both 0")?;
        check_param(P, "y0_re", y0_re, true, "finite")?;
        check_param(P, "y0_im", y0_im, true, "finite")?;
        let modulus0 = y0_re.hypot(y0_im);
        check_param(
            P,
            "y0_im",
            y0_im,
            modulus0 > 0.0,
            "y0_re and y0_im not both 0",
        )?;
        check_param(P, "y0_re", y0_re, modulus0.is_finite(), "|y0| finite")?;
        check_param(P, "re", re, re.hypot(im).is_finite(), "|lambda| finite")?;
        Ok(Linear {
            re,
            im,
            y0: [y0_re, y0_im],
            modulus0,
            invariants: [Invariant {
                name: "modulus2",
                scale: modulus0 * modulus0,
            }],
        })
    }
}

impl Default for Linear {
    /// A slowly decaying rotation: `lambda = -0.1 + i`, `y(0) = 1`.
    fn default() -> Self {
        Linear::new(-0.1, 1.0).expect("valid default")
    }
}

impl Rhs for Linear {
    fn dim(&self) -> usize {
        2
    }
    fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) {
        dydt[0] = self.re * y[0] - self.im * y[1];
        dydt[1] = self.im * y[0] + self.re * y[1];
    }
}

impl Problem for Linear {
    fn name(&self) -> &str {
        "linear"
    }
    fn initial(&self, y0: &mut [f64]) {
        y0.copy_from_slice(&self.y0);
    }
    /// `2 pi / |lambda|`.
    fn time_unit(&self) -> f64 {
        std::f64::consts::TAU / self.re.hypot(self.im)
    }
    /// `|y0|` for both components.
    fn scales(&self, s: &mut [f64]) {
        s.fill(self.modulus0);
    }
    fn exact(&self, t: f64, y: &mut [f64]) -> bool {
        let growth = exp_phase((self.re, 0.0), t);
        let w = turn((self.im, 0.0), t);
        let [a, b] = self.y0;
        y[0] = growth * (a * w.cos - b * w.sin);
        y[1] = growth * (a * w.sin + b * w.cos);
        true
    }
    fn invariants(&self) -> &[Invariant] {
        if self.re == 0.0 {
            &self.invariants
        } else {
            &[]
        }
    }
    fn invariant_values(&self, _t: f64, y: &[f64], out: &mut [f64]) {
        if self.re == 0.0 {
            out[0] = y[0] * y[0] + y[1] * y[1];
        }
    }
    fn period(&self) -> Option<f64> {
        (self.re == 0.0).then(|| std::f64::consts::TAU / self.im.abs())
    }
}
