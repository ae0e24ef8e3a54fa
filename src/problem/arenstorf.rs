//! The Arenstorf orbit of the restricted three-body problem ([`Arenstorf`]):
//! a published periodic orbit whose closure after one period is the check.

use super::{Invariant, Problem};
use crate::stepper::Rhs;

/// Mass ratio of the moon, `mu = 0.012277471` (HNW I, II.0, eq. (0.1)).
const MU: f64 = 0.012277471;
/// `mu' = 1 - mu`; in doubles `1.0 - MU` is the double nearest 0.987722529.
const MU1: f64 = 1.0 - MU;
/// `y2'(0) = -2.00158510637908252240537862224` (HNW I, II.0, eq. (0.2)).
const VY0: f64 = -2.001_585_106_379_082_5;
/// Period `T = 17.0652165601579625588917206249` (HNW I, II.0) as the
/// unevaluated sum of the nearest double and the rest, so that `t - k T`
/// is formed without the 1.4e-15 rounding of `T` (which, times the speed
/// near the moon, would cost about 4e-13 in the velocity).
const PERIOD: (f64, f64) = (17.065_216_560_157_964, -1.395_333_403_700_703_2e-15);
/// Largest `|t - k T|` at which the exact solution is offered: `1e-9 T`.
const WINDOW: f64 = 1e-9 * PERIOD.0;

/// The restricted three-body problem in the rotating frame, on the periodic
/// orbit found by Arenstorf, exactly as in Hairer, Norsett and Wanner,
/// Solving Ordinary Differential Equations I, 2nd ed. (1993), section II.0:
///
/// `y1'' = y1 + 2 y2' - mu' (y1 + mu)/D1 - mu (y1 - mu')/D2`,
/// `y2'' = y2 - 2 y1' - mu' y2/D1 - mu y2/D2`,
/// `D1 = ((y1 + mu)^2 + y2^2)^(3/2)`, `D2 = ((y1 - mu')^2 + y2^2)^(3/2)`,
///
/// with `mu = 0.012277471`, `y(0) = (0.994, 0)`, `y'(0) = (0, -2.00158510637908252240537862224)`
/// and period `T = 17.0652165601579625588917206249`. State `[y1, y2, y1', y2']`.
///
/// The Coriolis terms put the velocity into the force, so there is no split
/// form. The exact solution is known only at whole periods, where it is the
/// initial state: [`Problem::exact`] answers when `|t - k T| <= 1e-9 T` for an
/// integer `k`, advancing the initial state by the small offset
/// `dt = t - k T` with one Heun step `y0 + dt/2 (f(y0) + f(y0 + dt f(y0)))`,
/// whose error `O(dt^3)` is below 1e-16 in this window (checked in the
/// tests against a classical Runge-Kutta step; the first-order `y0 + dt f(y0)`
/// would be off by 1.4e-11 at the edge); elsewhere it returns false.
/// How closely the double-precision data (rounded `mu`, `y2'(0)`) close the
/// orbit is measured in the tests.
///
/// Invariant: the Jacobi constant `C = 2 Omega - (y1'^2 + y2'^2)` with
/// `Omega = (y1^2 + y2^2)/2 + mu'/r1 + mu/r2`, `r1 = D1^(1/3)`, `r2 = D2^(1/3)`
/// (Murray and Dermott, Solar System Dynamics (1999), 3.3, from memory, in
/// the same normalisation; the equations read `y1'' - 2 y2' = dOmega/dy1`,
/// `y2'' + 2 y1' = dOmega/dy2`, so `d/dt (v^2/2) = dOmega/dt`).
///
/// ```
/// use drift::Problem;
/// use drift::problem::arenstorf::Arenstorf;
/// let a = Arenstorf::new();
/// let (mut y0, mut y) = ([0.0; 4], [0.0; 4]);
/// a.initial(&mut y0);
/// assert!(a.exact(2.0 * a.period().unwrap(), &mut y));
/// assert!((y[0] - y0[0]).abs() < 1e-13);
/// assert!(!a.exact(1.0, &mut y));
/// ```
#[derive(Clone, Debug, PartialEq)]
pub struct Arenstorf {
    invariants: [Invariant; 1],
}

const Y0: [f64; 4] = [0.994, 0.0, 0.0, VY0];

/// The Jacobi constant at state `y`.
fn jacobi(y: &[f64]) -> f64 {
    let r1 = (y[0] + MU).hypot(y[1]);
    let r2 = (y[0] - MU1).hypot(y[1]);
    let omega = 0.5 * (y[0] * y[0] + y[1] * y[1]) + MU1 / r1 + MU / r2;
    2.0 * omega - (y[2] * y[2] + y[3] * y[3])
}

impl Arenstorf {
    /// The orbit of HNW I, II.0; it has no parameters.
    ///
    /// ```
    /// use drift::Problem;
    /// let a = drift::problem::arenstorf::Arenstorf::new();
    /// assert_eq!(a.name(), "arenstorf");
    /// ```
    pub fn new() -> Self {
        Arenstorf {
            invariants: [Invariant {
                name: "jacobi",
                scale: jacobi(&Y0).abs(),
            }],
        }
    }
}

impl Default for Arenstorf {
    /// Same as [`Arenstorf::new`].
    fn default() -> Self {
        Arenstorf::new()
    }
}

impl Rhs for Arenstorf {
    fn dim(&self) -> usize {
        4
    }
    fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) {
        let (y1, y2, v1, v2) = (y[0], y[1], y[2], y[3]);
        let r1 = (y1 + MU).hypot(y2);
        let r2 = (y1 - MU1).hypot(y2);
        let d1 = r1 * r1 * r1;
        let d2 = r2 * r2 * r2;
        dydt[0] = v1;
        dydt[1] = v2;
        dydt[2] = y1 + 2.0 * v2 - MU1 * (y1 + MU) / d1 - MU * (y1 - MU1) / d2;
        dydt[3] = y2 - 2.0 * v1 - MU1 * y2 / d1 - MU * y2 / d2;
    }
}

impl Problem for Arenstorf {
    fn name(&self) -> &str {
        "arenstorf"
    }
    fn initial(&self, y0: &mut [f64]) {
        y0.copy_from_slice(&Y0);
    }
    /// The period `T`.
    fn time_unit(&self) -> f64 {
        PERIOD.0
    }
    /// All ones: lengths in units of the Earth-Moon distance and velocities
    /// in that distance per unit time (the frame turns at rate 1).
    fn scales(&self, s: &mut [f64]) {
        s.fill(1.0);
    }
    fn exact(&self, t: f64, y: &mut [f64]) -> bool {
        let k = (t / PERIOD.0).round();
        let dt = (-k).mul_add(PERIOD.0, t) - k * PERIOD.1;
        if dt.is_nan() || dt.abs() > WINDOW {
            return false;
        }
        let (mut f0, mut f1) = ([0.0; 4], [0.0; 4]);
        self.rhs(t, &Y0, &mut f0);
        let euler: [f64; 4] = std::array::from_fn(|i| Y0[i] + dt * f0[i]);
        self.rhs(t, &euler, &mut f1);
        for (i, yi) in y.iter_mut().enumerate().take(4) {
            *yi = Y0[i] + 0.5 * dt * (f0[i] + f1[i]);
        }
        true
    }
    fn invariants(&self) -> &[Invariant] {
        &self.invariants
    }
    fn invariant_values(&self, _t: f64, y: &[f64], out: &mut [f64]) {
        out[0] = jacobi(y);
    }
    fn period(&self) -> Option<f64> {
        Some(PERIOD.0)
    }
    /// `0.1 - r2`, `r2` the distance from the moon: it crosses upward once
    /// per period, when the orbit enters the disc of radius 0.1 about the
    /// moon on its way to the close approach at `t = k T`.
    fn crossing(&self, y: &[f64]) -> f64 {
        0.1 - (y[0] - MU1).hypot(y[1])
    }
}
