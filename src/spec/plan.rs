//! From the parsed file to plans: the `[stepper.<name>]` tables, stepper
//! and problem names, the standard battery, duplicate names, and claims
//! that a configuration cannot measure. `[settings]` is read in
//! `super::settings`, each `[[check]]` in `super::check`.

use std::collections::BTreeMap;
use std::ops::Range;
use std::path::Path;

use toml::Spanned;

use super::check::{self, Declared};
use super::errors::{unknown_name_help, Locator, SpecError};
use super::schema::{RawFile, RawStepper};
use super::settings::{self, positive, Overrides, Settings, DEFAULT_PERIODS};
use super::{Catalog, Plan, PlanProblem, Spec};
use crate::claims::Claims;
use crate::measure::{Ladder, MethodKind};
use crate::metrics::MAX_DIGITS;
use crate::problem::registry::{catalog, BuiltinInfo};

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
                info.periods_for(kind),
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
    let plans = cat
        .steppers
        .iter()
        .flat_map(|(name, kind)| battery(&settings, cat, name, *kind, &decl))
        .collect();
    finish(settings, cat, plans, BTreeMap::new())
}

/// The spec of `plans` sorted by name. Names are unique by validation,
/// except when the harness registered one stepper name twice; then the
/// first registration's plans are kept. `left_out` names the battery checks
/// the file leaves out, with why.
fn finish(
    settings: Settings,
    cat: &Catalog,
    mut plans: Vec<Plan>,
    left_out: BTreeMap<String, String>,
) -> Spec {
    plans.sort_by(|a, b| a.name.cmp(&b.name));
    plans.dedup_by(|a, b| a.name == b.name);
    Spec {
        baseline: settings.baseline,
        slack: settings.slack,
        plans,
        left_out,
        steppers: cat.steppers.iter().map(|(n, _)| n.clone()).collect(),
        problems: problem_names(cat).into_iter().map(String::from).collect(),
    }
}

/// Why the battery checks of `stepper` that the file leaves out are not
/// planned: each problem in `skip` (the battery on), or the whole battery
/// (off). Names only; a name the baseline does not hold is never asked for.
fn left_out_of(
    loc: &Locator,
    settings: &Settings,
    cat: &Catalog,
    (stepper, kind): (&str, MethodKind),
    decl: &StepperDecl,
    on: bool,
) -> Vec<(String, String)> {
    let file = loc.path.display();
    if on {
        return decl
            .skip
            .iter()
            .map(|s| {
                (
                    format!("{stepper}/{}", s.get_ref()),
                    format!(
                        "left out by `skip` in [stepper.{stepper}] at {file}:{}",
                        loc.line(s.span().start)
                    ),
                )
            })
            .collect();
    }
    let why = match &decl.battery {
        Some(b) => format!(
            "the battery of `{stepper}` is off (`battery = false` at {file}:{})",
            loc.line(b.span().start)
        ),
        None => format!(
            "the battery of `{stepper}` is off: it has `[[check]]` tables and no `battery = true`"
        ),
    };
    let all = StepperDecl::default();
    battery(settings, cat, stepper, kind, &all)
        .into_iter()
        .map(|p| (p.name, why.clone()))
        .collect()
}

/// Parses and validates a whole file.
pub(super) fn parse(text: &str, path: &Path, cat: &Catalog) -> Result<Spec, SpecError> {
    let loc = Locator { text, path };
    let raw: RawFile = toml::from_str(text).map_err(|e| loc.toml_error(&e))?;
    let settings = settings::read(&loc, raw.settings)?;

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
    let mut left_out = BTreeMap::new();
    for (stepper, kind) in &cat.steppers {
        let decl = decls.get(stepper).unwrap_or(&empty);
        let has_checks = declared.iter().any(|d| &d.plan.stepper == stepper);
        let on = battery_on(decl, has_checks);
        left_out.extend(left_out_of(
            &loc,
            &settings,
            cat,
            (stepper, *kind),
            decl,
            on,
        ));
        if !on {
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
    // A declared check may take a name the battery leaves out (a tagless
    // check of a skipped problem): it is planned after all.
    for plan in &plans {
        left_out.remove(&plan.name);
    }
    Ok(finish(settings, cat, plans, left_out))
}

/// Checks that the configuration of `plan` measures what its claims need:
/// an energy claim needs the long run, a reversibility claim the
/// reversibility run; neither runs on a tolerance ladder.
fn measurable(loc: &Locator, decl: &StepperDecl, plan: &Plan) -> Result<(), SpecError> {
    let tolerances = matches!(
        plan.config.ladder,
        Ladder::Tolerances(_) | Ladder::AutoTolerances { .. }
    );
    let why = |missing: bool, what: &str| {
        if tolerances {
            Some("it runs on a tolerance ladder, where neither a long run nor a reversibility run is made".to_string())
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
