//! What a stepper's author declares about it (claims), and how much a figure
//! may move against the baseline before it counts as a regression (slack).
//! Both are read from `drift.toml` and used when judging a measurement.

use serde::{Deserialize, Serialize};

/// The drift class claimed for a stepper's energy (or any invariant named
/// `energy`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum EnergyClaim {
    /// Bounded energy error (symplectic methods).
    Bounded,
    /// Energy error no worse than a random walk.
    RandomWalk,
    /// Energy error no worse than linear growth.
    Linear,
}

/// Declared properties of a stepper, each checked on every check of it.
///
/// ```
/// let c: drift::claims::Claims = toml::from_str("order = 4\nenergy = \"linear\"").unwrap();
/// assert_eq!(c.order, Some(4.0));
/// assert_eq!(c.energy, Some(drift::claims::EnergyClaim::Linear));
/// ```
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Claims {
    /// Order of convergence (against steps for steppers, against
    /// evaluations for integrators).
    pub order: Option<f64>,
    /// Long-run behaviour of the energy error.
    pub energy: Option<EnergyClaim>,
    /// Forward-then-backward stepping returns to the start to roundoff.
    pub reversible: Option<bool>,
    /// Least best digits on every check with an exact solution.
    pub floor: Option<f64>,
}

/// How far a claimed order may be from the measured one (common practice, no
/// source: well inside half an order, well outside fit noise).
pub const ORDER_CLAIM_BAND: f64 = 0.2;

/// Digits of reversibility that count as "reversible to roundoff" (common
/// practice, no source: a symmetric method returns to within about
/// sqrt(steps) rounding errors, far more than 10 digits).
pub const REVERSIBLE_DIGITS: f64 = 10.0;

/// How much each figure may get worse against the baseline before the check
/// regresses (and better before it counts as improved).
///
/// The defaults are chosen so that re-running, rebuilding in debug or release
/// and last-bit changes never fail, while a lost order or a lost digit does.
///
/// ```
/// let s = drift::claims::Slack::default();
/// assert!(s.order > 0.0 && s.digits > 0.0);
/// ```
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Slack {
    /// Order of convergence.
    pub order: f64,
    /// Solution digits: best digits, and the digits of each fitted rung.
    pub digits: f64,
    /// Best digits of each invariant.
    pub invariant_digits: f64,
    /// Digits of the period and of the virial residual.
    pub period_digits: f64,
    /// Digits of reversibility.
    pub reversibility_digits: f64,
    /// Drift exponent of an invariant: a worse drift class counts only
    /// when the exponent also rose by more than this.
    pub drift_exponent: f64,
}

impl Default for Slack {
    fn default() -> Self {
        Slack {
            order: 0.1,
            digits: 0.5,
            invariant_digits: 0.5,
            period_digits: 0.5,
            reversibility_digits: 1.0,
            // Rounding moves the exponent of an invariant conserved to
            // roundoff (a random walk, 0.5) by about 0.2 between equivalent
            // orderings; broken symplecticity moves it by 1 (common
            // practice, no source).
            drift_exponent: 0.3,
        }
    }
}
