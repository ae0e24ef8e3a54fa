//! From the parsed file to plans: the settings with their defaults, the
//! configuration of a check, the standard battery, and the validation of
//! every key whose meaning the types do not fix (ranges, names, ladders,
//! claims that a configuration cannot measure). Each check declared in
//! `[[check]]` is validated in [`super::check`].

use std::collections::BTreeMap;
use std::ops::Range;
use std::path::{Path, PathBuf};

use toml::Spanned;

use super::check::{self, Declared};
use super::errors::{unknown_name_help, Locator, SpecError};
use super::schema::{RawFile, RawSettings, RawStepper};
use super::{Catalog, Plan, PlanProblem, Spec};
use crate::claims::{Claims, Slack};
use crate::measure::ladder::grid;
use crate::measure::{Config, Ladder, LongRun, MethodKind};
use crate::metrics::MAX_DIGITS;
use crate::problem::registry::{catalog, BuiltinInfo};

/// Default horizon when neither the file nor the problem gives one.
const DEFAULT_PERIODS: f64 = 10.0;
/// Default step budget of an automatic ladder.
const DEFAULT_BUDGET: u64 = 4_000_000;
/// Least steps per time unit of the first rung of an automatic ladder.
const AUTO_START: u64 = 16;
/// Most rungs of an automatic ladder.
const AUTO_MAX_RUNGS: usize = 20;

/// `[settings]` with defaults filled in, and where each key was written.
pub(super) struct Settings {
    baseline: PathBuf,
    periods: Option<Spanned<f64>>,
    pub samples: u64,
    samples_span: Option<Range<usize>>,
    budget: u64,
    long_periods: f64,
    reversibility: bool,
    slack: Slack,
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
            (None, None, MethodKind::Whole) => Ladder::default_tolerances(),
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
            }),
            reversibility: self.reversibility,
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
fn settings(loc: &Locator, raw: RawSettings) -> Result<Settings, SpecError> {
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

/// A `[stepper.<name>]` table, checked, with the positions its validation
/// of plans needs.
#[derive(Default)]
pub(super) struct StepperDecl {
    pub claims: Claims,
    energy_span: Option<Range<usize>>,
    reversible_span: Option<Range<usize>>,
    battery: Option<Spanned<bool>>,
    skip: Vec<Spanned<String>>,
    skip_span: Option<Range<usize>>,
}

/// Every problem name a check may use: built-ins, then user problems not
/// shadowed by a built-in.
pub(super) fn problem_names(cat: &Catalog) -> Vec<&str> {
    let mut names: Vec<&str> = catalog().iter().map(|p| p.name).collect();
    for (name, _) in &cat.user_problems {
        if !names.contains(&name.as_str()) {
            names.push(name);
        }
    }
    names
}

/// The registered stepper called `name` (its kind), or an error at `span`.
pub(super) fn stepper_kind(
    loc: &Locator,
    cat: &Catalog,
    name: &Spanned<String>,
) -> Result<MethodKind, SpecError> {
    if let Some((_, kind)) = cat.steppers.iter().find(|(n, _)| n == name.get_ref()) {
        return Ok(*kind);
    }
    let valid: Vec<&str> = cat.steppers.iter().map(|(n, _)| n.as_str()).collect();
    Err(loc.at(
        &name.span(),
        format!(
            "no stepper `{}` is registered with the harness",
            name.get_ref()
        ),
        Some(unknown_name_help(name.get_ref(), "stepper", &valid)),
    ))
}

/// Checks a problem name, or an error at its position.
pub(super) fn known_problem(
    loc: &Locator,
    cat: &Catalog,
    name: &Spanned<String>,
) -> Result<(), SpecError> {
    let valid = problem_names(cat);
    if valid.contains(&name.get_ref().as_str()) {
        return Ok(());
    }
    Err(loc.at(
        &name.span(),
        format!(
            "no problem `{}`: it is neither built in nor registered with the harness",
            name.get_ref()
        ),
        Some(unknown_name_help(name.get_ref(), "problem", &valid)),
    ))
}

/// Reads one `[stepper.<name>]` table.
fn stepper_decl(loc: &Locator, cat: &Catalog, raw: RawStepper) -> Result<StepperDecl, SpecError> {
    if let Some(order) = &raw.order {
        positive(
            loc,
            order,
            "order",
            "the claimed order of convergence, e.g. 4",
        )?;
    }
    if let Some(floor) = &raw.floor {
        let v = *floor.get_ref();
        if !(v.is_finite() && v > 0.0 && v <= MAX_DIGITS) {
            return Err(loc.at(
                &floor.span(),
                format!("`floor` = {v} must lie in (0, {MAX_DIGITS}] digits"),
                Some("it is the least best digits claimed on every check with an exact solution, e.g. 12".into()),
            ));
        }
    }
    let skip_span = raw.skip.as_ref().map(|s| s.span());
    let skip = raw.skip.map(Spanned::into_inner).unwrap_or_default();
    for name in &skip {
        known_problem(loc, cat, name)?;
    }
    Ok(StepperDecl {
        claims: Claims {
            order: raw.order.map(Spanned::into_inner),
            energy: raw.energy.as_ref().map(|e| *e.get_ref()),
            reversible: raw.reversible.as_ref().map(|r| *r.get_ref()),
            floor: raw.floor.map(Spanned::into_inner),
        },
        energy_span: raw.energy.map(|e| e.span()),
        reversible_span: raw.reversible.map(|r| r.span()),
        battery: raw.battery,
        skip,
        skip_span,
    })
}

/// Whether a `kind` stepper can run on a problem with (`true`) or without a
/// second-order form.
pub(super) fn compatible(kind: MethodKind, second_order: bool) -> bool {
    kind != MethodKind::Split || second_order
}

/// The battery of one stepper: every compatible problem not in `skip`, at
/// default parameters.
fn battery(
    settings: &Settings,
    cat: &Catalog,
    stepper: &str,
    kind: MethodKind,
    decl: &StepperDecl,
) -> Vec<Plan> {
    let skipped = |name: &str| decl.skip.iter().any(|s| s.get_ref() == name);
    let builtins = catalog()
        .iter()
        .filter(|info| compatible(kind, info.second_order) && !skipped(info.name))
        .map(|info: &'static BuiltinInfo| {
            (
                PlanProblem::Builtin {
                    info,
                    params: BTreeMap::new(),
                },
                info.periods,
            )
        });
    let users = cat
        .user_problems
        .iter()
        .filter(|(name, second)| {
            compatible(kind, *second)
                && !skipped(name)
                && crate::problem::registry::find(name).is_none()
        })
        .map(|(name, _)| (PlanProblem::User(name.clone()), DEFAULT_PERIODS));
    builtins
        .chain(users)
        .map(|(problem, default)| Plan {
            name: format!("{stepper}/{}", problem.name()),
            stepper: stepper.to_string(),
            kind,
            config: settings.config(kind, default, Overrides::default()),
            problem,
            claims: decl.claims.clone(),
        })
        .collect()
}

/// Whether a stepper runs its battery: as declared, else when it has no
/// `[[check]]`.
fn battery_on(decl: &StepperDecl, has_checks: bool) -> bool {
    decl.battery.as_ref().map_or(!has_checks, |b| *b.get_ref())
}

/// The spec of a missing or empty file.
pub(super) fn defaults(cat: &Catalog) -> Spec {
    let settings = Settings::default();
    let decl = StepperDecl::default();
    let mut plans: Vec<Plan> = cat
        .steppers
        .iter()
        .flat_map(|(name, kind)| battery(&settings, cat, name, *kind, &decl))
        .collect();
    plans.sort_by(|a, b| a.name.cmp(&b.name));
    plans.dedup_by(|a, b| a.name == b.name);
    Spec {
        baseline: settings.baseline,
        slack: settings.slack,
        plans,
    }
}

/// Parses and validates a whole file.
pub(super) fn parse(text: &str, path: &Path, cat: &Catalog) -> Result<Spec, SpecError> {
    let loc = Locator { text, path };
    let raw: RawFile = toml::from_str(text).map_err(|e| loc.toml_error(&e))?;
    let settings = settings(&loc, raw.settings)?;

    let mut decls: BTreeMap<String, StepperDecl> = BTreeMap::new();
    for (name, table) in raw.stepper {
        stepper_kind(&loc, cat, &name)?;
        decls.insert(
            name.into_inner(),
            stepper_decl(&loc, cat, table.into_inner())?,
        );
    }

    let mut declared: Vec<Declared> = Vec::new();
    for raw_check in raw.check {
        let d = check::declared(&loc, cat, &settings, raw_check)?;
        if let Some(first) = declared.iter().find(|c| c.plan.name == d.plan.name) {
            return Err(loc.at(
                &d.span,
                format!(
                    "check `{}` is declared twice, at lines {} and {}",
                    d.plan.name,
                    loc.line(first.span.start),
                    loc.line(d.span.start)
                ),
                Some(
                    "give one of them a `tag`; the check is then named `stepper/problem:tag`"
                        .into(),
                ),
            ));
        }
        declared.push(d);
    }

    let empty = StepperDecl::default();
    let mut plans: Vec<Plan> = Vec::new();
    for (stepper, kind) in &cat.steppers {
        let decl = decls.get(stepper).unwrap_or(&empty);
        let has_checks = declared.iter().any(|d| &d.plan.stepper == stepper);
        if !battery_on(decl, has_checks) {
            if let Some(span) = &decl.skip_span {
                return Err(loc.at(
                    span,
                    format!("`skip` has no effect: the battery of `{stepper}` is off"),
                    Some("set `battery = true` in this table, or remove `skip`".into()),
                ));
            }
            continue;
        }
        for plan in battery(&settings, cat, stepper, *kind, decl) {
            if let Some(d) = declared.iter().find(|d| d.plan.name == plan.name) {
                return Err(loc.at(
                    &d.span,
                    format!(
                        "check `{}` is also in the standard battery of `{stepper}`",
                        plan.name
                    ),
                    Some(format!(
                        "give this check a `tag`, or add \"{}\" to `skip` in [stepper.{stepper}]",
                        plan.problem.name()
                    )),
                ));
            }
            settings.check_auto(&loc, &plan.config, None, &plan.name)?;
            plans.push(plan);
        }
    }
    for d in declared {
        let mut plan = d.plan;
        plan.claims = decls.get(&plan.stepper).unwrap_or(&empty).claims.clone();
        plans.push(plan);
    }
    for plan in &plans {
        measurable(&loc, decls.get(&plan.stepper).unwrap_or(&empty), plan)?;
    }
    plans.sort_by(|a, b| a.name.cmp(&b.name));
    Ok(Spec {
        baseline: settings.baseline,
        slack: settings.slack,
        plans,
    })
}

/// Checks that the configuration of `plan` measures what its claims need:
/// an energy claim needs the long run, a reversibility claim the
/// reversibility run; neither runs on a tolerance ladder.
fn measurable(loc: &Locator, decl: &StepperDecl, plan: &Plan) -> Result<(), SpecError> {
    let tolerances = matches!(plan.config.ladder, Ladder::Tolerances(_));
    let why = |missing: bool, what: &str| {
        if tolerances {
            Some("it runs on a tolerance ladder, which has no fixed steps to run it on".to_string())
        } else if missing {
            Some(format!("{what} is disabled in [settings]"))
        } else {
            None
        }
    };
    let checks = [
        (
            plan.claims.energy.is_some(),
            &decl.energy_span,
            "energy",
            why(
                plan.config.long_run.is_none(),
                "the long run (`long_periods`)",
            ),
        ),
        (
            plan.claims.reversible == Some(true),
            &decl.reversible_span,
            "reversible",
            why(!plan.config.reversibility, "`reversibility`"),
        ),
    ];
    for (claimed, span, claim, reason) in checks {
        if let (true, Some(span), Some(reason)) = (claimed, span, reason) {
            return Err(loc.at(
                span,
                format!("claim `{claim}` cannot be checked on `{}`: {reason}", plan.name),
                Some("give its checks a fixed `ladder` and keep the long run and reversibility on, or remove the claim".into()),
            ));
        }
    }
    Ok(())
}
