//! The driven oscillator `x'' + omega0^2 x = F cos(W t)` ([`Driven`]): a
//! non-autonomous reference whose closed form holds off, near and at
//! resonance.

use super::harmonic::{turn, two_sum};
use super::{check_param, ParamError, Problem};
use crate::stepper::Rhs;

/// The driven (undamped) oscillator `x'' + omega0^2 x = F cos(W t)`, state
/// `[x, v]`.
///
/// The force depends on `t`, so a stepper that evaluates its stages at the
/// wrong times loses order here while it may pass every autonomous problem.
/// The force does not depend on the velocity: [`Problem::accel`] is provided.
///
/// Exact solution (Taylor, Classical Mechanics, 5.5, with no damping;
/// REFERENCES.md):
/// `x = x0 cos(omega0 t) + (v0/omega0) sin(omega0 t) + F P(t)` with the
/// response from rest
/// `P = (cos(W t) - cos(omega0 t)) / (omega0^2 - W^2)`, which at resonance
/// becomes `t sin(omega0 t) / (2 omega0)`. Both the quotient and its
/// derivative cancel badly as `W -> omega0`, so they are evaluated through
/// `cos a - cos b = -2 sin((a+b)/2) sin((a-b)/2)` as
/// `P = S(sigma) S(delta) / 2`, `P' = (cos(sigma t) S(delta) + S(sigma) cos(delta t)) / 2`,
/// with `sigma = (omega0 + W)/2`, `delta = (omega0 - W)/2` and
/// `S(r) = sin(r t)/r = t sinc(r t)`: one formula, accurate to a few ulp
/// off resonance, at resonance and anywhere between.
///
/// ```
/// use drift::Problem;
/// use drift::problem::driven::Driven;
/// // At resonance from rest: x = F t sin(omega0 t) / (2 omega0).
/// let d = Driven::new(1.0, 1.0, 1.0, 0.0, 0.0).unwrap();
/// let mut y = [0.0; 2];
/// d.exact(3.0, &mut y);
/// assert!((y[0] - 1.5 * 3.0f64.sin()).abs() < 1e-15);
/// ```
#[derive(Clone, Debug, PartialEq)]
pub struct Driven {
    omega0: f64,
    omega_drive: f64,
    force: f64,
    x0: f64,
    v0: f64,
    /// `(omega0 + W)/2` in two doubles.
    sigma: (f64, f64),
    /// `(omega0 - W)/2` in two doubles.
    delta: (f64, f64),
    scales: [f64; 2],
}

impl Driven {
    /// Natural frequency `omega0 > 0`, drive frequency `omega_drive >= 0`,
    /// drive amplitude `force` (force per unit mass), initial position `x0`
    /// and velocity `v0`; all finite, and `x0`, `v0`, `force` not all zero.
    ///
    /// ```
    /// use drift::problem::driven::Driven;
    /// assert_eq!(Driven::new(1.0, f64::NAN, 1.0, 1.0, 0.0).unwrap_err().parameter, "omega_drive");
    /// ```
    pub fn new(
        omega0: f64,
        omega_drive: f64,
        force: f64,
        x0: f64,
        v0: f64,
    ) -> Result<Self, ParamError> {
        const P: &str = "driven";
        check_param(P, "omega0", omega0, omega0 > 0.0, "0 < omega0 < inf")?;
        check_param(
            P,
            "omega_drive",
            omega_drive,
            omega_drive >= 0.0,
            "0 <= omega_drive < inf",
        )?;
        check_param(P, "force", force, true, "finite")?;
        check_param(P, "x0", x0, true, "finite")?;
        check_param(P, "v0", v0, true, "finite")?;
        let nonzero = x0 != 0.0 || v0 != 0.0 || force != 0.0;
        check_param(P, "force", force, nonzero, "x0, v0 and force not all 0")?;
        // Halving is exact, so the two-double sums stay exact.
        let (s, se) = two_sum(omega0, omega_drive);
        let (d, de) = two_sum(omega0, -omega_drive);
        let sigma = (0.5 * s, 0.5 * se);
        let delta = (0.5 * d, 0.5 * de);
        // Bounds of the response from rest over the first period T:
        // |S(r)| <= min(t, 1/|r|), and 1/sigma <= 2/omega0 < T.
        let period = std::f64::consts::TAU / omega0;
        let beat = if delta.0.abs() * period > 1.0 {
            1.0 / delta.0.abs()
        } else {
            period
        };
        let env_x = force.abs() * beat / (2.0 * sigma.0);
        let env_v = force.abs() * (beat + 1.0 / sigma.0) / 2.0;
        let scales = [
            x0.abs().max(v0.abs() / omega0).max(env_x),
            v0.abs().max(omega0 * x0.abs()).max(env_v),
        ];
        check_param(
            P,
            "force",
            force,
            scales.iter().all(|s| s.is_finite()),
            "scales finite",
        )?;
        Ok(Driven {
            omega0,
            omega_drive,
            force,
            x0,
            v0,
            sigma,
            delta,
            scales,
        })
    }

    fn force_at(&self, t: f64) -> f64 {
        self.force * (self.omega_drive * t).cos()
    }
}

impl Default for Driven {
    /// Off resonance: `omega0 = 1`, `omega_drive = 2`, `force = 1`, `x0 = 1`, `v0 = 0`.
    fn default() -> Self {
        Driven::new(1.0, 2.0, 1.0, 1.0, 0.0).expect("valid default")
    }
}

impl Rhs for Driven {
    fn dim(&self) -> usize {
        2
    }
    fn rhs(&self, t: f64, y: &[f64], dydt: &mut [f64]) {
        dydt[0] = y[1];
        dydt[1] = self.force_at(t) - self.omega0 * self.omega0 * y[0];
    }
}

impl Problem for Driven {
    fn name(&self) -> &str {
        "driven"
    }
    fn initial(&self, y0: &mut [f64]) {
        y0[0] = self.x0;
        y0[1] = self.v0;
    }
    /// The free period `2 pi / omega0`.
    fn time_unit(&self) -> f64 {
        std::f64::consts::TAU / self.omega0
    }
    /// A bound of each component over the first free period `T`:
    /// `max(|x0|, |v0|/omega0, |F| min(T, 1/|delta|)/(2 sigma))` for `x` and
    /// `max(|v0|, omega0 |x0|, |F| (min(T, 1/|delta|) + 1/sigma)/2)` for `v`
    /// (free motion plus the largest the response from rest can reach in
    /// that period). Fixed scales keep digits comparable between runs; at
    /// resonance the solution keeps growing like `F t/(2 omega0)`, so after
    /// `N` periods the figures read about `log10(N)` digits below the error
    /// relative to the current amplitude.
    fn scales(&self, s: &mut [f64]) {
        s.copy_from_slice(&self.scales);
    }
    fn exact(&self, t: f64, y: &mut [f64]) -> bool {
        let free = turn((self.omega0, 0.0), t);
        let sum = turn(self.sigma, t);
        let diff = turn(self.delta, t);
        let p = 0.5 * sum.sin_over_rate * diff.sin_over_rate;
        let dp = 0.5 * (sum.cos * diff.sin_over_rate + sum.sin_over_rate * diff.cos);
        y[0] = self.x0 * free.cos + self.v0 * free.sin_over_rate + self.force * p;
        y[1] = self.v0 * free.cos - self.omega0 * self.x0 * free.sin + self.force * dp;
        true
    }
    fn accel(&self, t: f64, q: &[f64], a: &mut [f64]) -> bool {
        a[0] = self.force_at(t) - self.omega0 * self.omega0 * q[0];
        true
    }
}
