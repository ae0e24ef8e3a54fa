//! The layout of `drift.toml` as serde reads it: one struct per table, every
//! key optional except a check's `stepper` and `problem`, unknown keys
//! rejected everywhere. Fields whose position an error may need are
//! [`Spanned`]. Nothing here is validated beyond its type; that is
//! [`super::plan`]'s job.

use std::collections::BTreeMap;

use serde::Deserialize;
use toml::Spanned;

use crate::claims::{EnergyClaim, Slack};

/// The whole file.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawFile {
    /// `[settings]`: defaults for every check of the package.
    #[serde(default)]
    pub settings: RawSettings,
    /// `[stepper.<name>]`: claims and battery choice per registered stepper.
    #[serde(default)]
    pub stepper: BTreeMap<Spanned<String>, Spanned<RawStepper>>,
    /// `[[check]]`: checks declared one by one.
    #[serde(default)]
    pub check: Vec<Spanned<RawCheck>>,
}

/// `[settings]`.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawSettings {
    /// Path of the baseline file, relative to the package root
    /// (default `drift-baseline.toml`).
    pub baseline: Option<Spanned<String>>,
    /// Horizon of each check in time units of its problem (default: the
    /// built-in problem's own default horizon, else 10).
    pub periods: Option<Spanned<f64>>,
    /// Samples per time unit at which errors are read (default 4); every
    /// ladder rung must be a multiple of it.
    pub samples_per_period: Option<Spanned<u64>>,
    /// Most steps of an automatic ladder per check (default 4 000 000); a
    /// quarter of it caps each direction of the long run.
    pub budget: Option<Spanned<u64>>,
    /// Length of the long run in time units, a whole number (default 1000);
    /// 0 disables the long run (no drift, period or virial figures).
    pub long_periods: Option<Spanned<f64>>,
    /// Whether to measure forward-then-backward reversibility (default true).
    pub reversibility: Option<bool>,
    /// `[settings.slack]`: how far each figure may move against the
    /// baseline ([`Slack`]; keys `order`, `digits`, `invariant_digits`,
    /// `period_digits`, `reversibility_digits`).
    pub slack: Option<Spanned<Slack>>,
}

/// `[stepper.<name>]`.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawStepper {
    /// Claim: order of convergence (against steps; against evaluations for
    /// integrators).
    pub order: Option<Spanned<f64>>,
    /// Claim: long-run class of the energy error (`"bounded"`,
    /// `"random-walk"`, `"linear"`).
    pub energy: Option<Spanned<EnergyClaim>>,
    /// Claim: forward-then-backward stepping returns to the start.
    pub reversible: Option<Spanned<bool>>,
    /// Claim: least best digits on every check with an exact solution.
    pub floor: Option<Spanned<f64>>,
    /// Whether to run the standard battery (default: true when the stepper
    /// has no `[[check]]`, false otherwise).
    pub battery: Option<Spanned<bool>>,
    /// Problems left out of the battery.
    pub skip: Option<Spanned<Vec<Spanned<String>>>>,
}

/// One `[[check]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawCheck {
    /// A stepper registered with the harness.
    pub stepper: Spanned<String>,
    /// A built-in problem or a user problem registered with the harness.
    pub problem: Spanned<String>,
    /// Distinguishes several checks of one stepper on one problem; the
    /// check is named `stepper/problem:tag`.
    pub tag: Option<Spanned<String>>,
    /// Parameters of a built-in problem (missing ones take their defaults).
    pub params: Option<Spanned<BTreeMap<Spanned<String>, Spanned<f64>>>>,
    /// Horizon in time units (overrides `settings.periods`).
    pub periods: Option<Spanned<f64>>,
    /// Fixed ladder: steps per time unit, strictly increasing, each a
    /// multiple of `samples_per_period`. Omitted: an automatic ladder
    /// (steppers) or a tolerance ladder (integrators).
    pub ladder: Option<Spanned<Vec<Spanned<u64>>>>,
    /// Integrators only: tolerances, strictly decreasing, in (0, 1).
    pub tolerances: Option<Spanned<Vec<Spanned<f64>>>>,
    /// Most steps of the automatic ladder (overrides `settings.budget`).
    pub budget: Option<Spanned<u64>>,
}
