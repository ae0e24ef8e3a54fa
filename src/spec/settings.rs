//! `[settings]`: its keys read with their defaults and range checks, and
//! the configuration ([`Config`]) of a check built from the settings and
//! the check's own keys.

use std::ops::Range;
use std::path::PathBuf;

use toml::Spanned;

use super::errors::{Locator, SpecError};
use super::schema::RawSettings;
use crate::claims::Slack;
use crate::measure::ladder::grid;
use crate::measure::{Config, Ladder, LongRun, MethodKind};

/// Default horizon when neither the file nor the problem gives one.
pub(super) const DEFAULT_PERIODS: f64 = 10.0;
/// Default step budget of an automatic ladder.
const DEFAULT_BUDGET: u64 = 4_000_000;
/// Least steps per time unit of the first rung of an automatic ladder.
const AUTO_START: u64 = 16;
/// Most rungs of an automatic ladder.
const AUTO_MAX_RUNGS: usize = 20;

/// `[settings]` with defaults filled in, and where each key was written.
pub(super) struct Settings {
    pub baseline: PathBuf,
    periods: Option<Spanned<f64>>,
    pub samples: u64,
    samples_span: Option<Range<usize>>,
    budget: u64,
    long_periods: f64,
    reversibility: bool,
    pub slack: Slack,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            baseline: PathBuf::from(crate::baseline::FILE_NAME),
            periods: None,
            samples: 4,
            samples_span: None,
            budget: DEFAULT_BUDGET,
            long_periods: 1000.0,
            reversibility: true,
            slack: Slack::default(),
        }
    }
}

/// What a check may set over the settings.
#[derive(Default)]
pub(super) struct Overrides {
    pub periods: Option<f64>,
    pub ladder: Option<Vec<u64>>,
    pub tolerances: Option<Vec<f64>>,
    pub budget: Option<u64>,
}

impl Settings {
    /// The horizon of a check: its own, else the file's, else the problem's.
    fn periods(&self, own: Option<f64>, problem_default: f64) -> f64 {
        own.or(self.periods.as_ref().map(|p| *p.get_ref()))
            .unwrap_or(problem_default)
    }

    /// The configuration of a check of a `kind` stepper on a problem whose
    /// default horizon is `problem_default`.
    pub fn config(&self, kind: MethodKind, problem_default: f64, own: Overrides) -> Config {
        let budget = own.budget.unwrap_or(self.budget);
        let ladder = match (own.ladder, own.tolerances, kind) {
            (Some(steps), _, _) => Ladder::Steps(steps),
            (None, Some(tols), _) => Ladder::Tolerances(tols),
            (None, None, MethodKind::Whole) => Ladder::AutoTolerances {
                budget,
                start: auto_start(self.samples),
                max_rungs: AUTO_MAX_RUNGS,
            },
            (None, None, _) => Ladder::Auto {
                start: auto_start(self.samples),
                max_rungs: AUTO_MAX_RUNGS,
                budget,
            },
        };
        Config {
            ladder,
            periods: self.periods(own.periods, problem_default),
            samples_per_unit: self.samples,
            long_run: (self.long_periods > 0.0).then(|| LongRun {
                periods: self.long_periods,
                steps_per_unit: None,
                max_steps: (budget / 4).max(1),
                repeat: None,
            }),
            reversibility: self.reversibility,
            reversibility_at: None,
        }
    }

    /// Checks that the first rung of an automatic ladder fits the horizon
    /// (the doubling rungs then fit too). The error points at the horizon
    /// key in effect (`own`, else `settings.periods`), else at
    /// `samples_per_period`.
    pub fn check_auto(
        &self,
        loc: &Locator,
        config: &Config,
        own: Option<&Range<usize>>,
        name: &str,
    ) -> Result<(), SpecError> {
        let Ladder::Auto { start, .. } = config.ladder else {
            return Ok(());
        };
        grid(start, config.periods, config.samples_per_unit).map(|_| ()).map_err(|reason| {
            let span = own
                .cloned()
                .or_else(|| self.periods.as_ref().map(|p| p.span()))
                .or_else(|| self.samples_span.clone())
                .unwrap_or(0..0);
            loc.at(
                &span,
                format!("check `{name}`: the automatic ladder cannot start here: {reason}"),
                Some(format!(
                    "its first rung has {start} steps per unit; choose `periods` so that {start} x periods is a whole number of samples"
                )),
            )
        })
    }
}

/// The first rung of an automatic ladder: the least multiple of
/// `samples` that is at least [`AUTO_START`].
fn auto_start(samples: u64) -> u64 {
    let s = samples.max(1);
    AUTO_START.div_ceil(s) * s
}

/// Reads `[settings]`, checking every range.
pub(super) fn read(loc: &Locator, raw: RawSettings) -> Result<Settings, SpecError> {
    let mut s = Settings::default();
    if let Some(b) = raw.baseline {
        if b.get_ref().trim().is_empty() {
            return Err(loc.at(
                &b.span(),
                "`baseline` is empty".into(),
                Some(format!(
                    "give a path relative to the package root, e.g. \"{}\"",
                    crate::baseline::FILE_NAME
                )),
            ));
        }
        s.baseline = PathBuf::from(b.into_inner());
    }
    if let Some(p) = &raw.periods {
        positive(
            loc,
            p,
            "periods",
            "a horizon in time units of the problem, e.g. 10.0",
        )?;
    }
    s.periods = raw.periods;
    if let Some(n) = raw.samples_per_period {
        if *n.get_ref() == 0 {
            return Err(loc.at(
                &n.span(),
                "`samples_per_period` must be at least 1".into(),
                Some("errors are read this many times per time unit; 4 is the default".into()),
            ));
        }
        s.samples = *n.get_ref();
        s.samples_span = Some(n.span());
    }
    if let Some(b) = &raw.budget {
        s.budget = positive_budget(loc, b)?;
    }
    if let Some(lp) = raw.long_periods {
        let v = *lp.get_ref();
        if !(v.is_finite() && v >= 0.0 && v.fract() == 0.0) {
            return Err(loc.at(
                &lp.span(),
                format!("`long_periods` = {v} must be a whole number of time units, at least 0"),
                Some("e.g. 1000.0; 0 disables the long run".into()),
            ));
        }
        s.long_periods = v;
    }
    if let Some(r) = raw.reversibility {
        s.reversibility = r;
    }
    if let Some(slack) = raw.slack {
        let v = slack.get_ref();
        let fields = [
            ("order", v.order),
            ("digits", v.digits),
            ("invariant_digits", v.invariant_digits),
            ("period_digits", v.period_digits),
            ("reversibility_digits", v.reversibility_digits),
        ];
        if let Some((key, x)) = fields.iter().find(|(_, x)| !(x.is_finite() && *x >= 0.0)) {
            return Err(loc.at(
                &slack.span(),
                format!("slack `{key}` = {x} must be finite and at least 0"),
                Some("slack is how much a figure may get worse before the check regresses".into()),
            ));
        }
        s.slack = slack.into_inner();
    }
    Ok(s)
}

/// Checks that `value` is positive and finite; `example` says what to give.
pub(super) fn positive(
    loc: &Locator,
    value: &Spanned<f64>,
    key: &str,
    example: &str,
) -> Result<f64, SpecError> {
    let v = *value.get_ref();
    if v.is_finite() && v > 0.0 {
        Ok(v)
    } else {
        Err(loc.at(
            &value.span(),
            format!("`{key}` = {v} must be positive and finite"),
            Some(format!("give {example}")),
        ))
    }
}

/// Checks that a step budget is at least 1.
pub(super) fn positive_budget(loc: &Locator, value: &Spanned<u64>) -> Result<u64, SpecError> {
    if *value.get_ref() == 0 {
        Err(loc.at(
            &value.span(),
            "`budget` must be at least 1".into(),
            Some(format!(
                "it is the most steps of an automatic ladder, e.g. {DEFAULT_BUDGET}"
            )),
        ))
    } else {
        Ok(*value.get_ref())
    }
}
