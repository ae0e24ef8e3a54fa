//! One `[[check]]` table, validated into a plan: its stepper and problem
//! names, their compatibility, the tag, the parameters of a built-in
//! problem, and the ladder or tolerances.

use std::collections::BTreeMap;
use std::ops::Range;

use toml::Spanned;

use super::errors::{Locator, SpecError};
use super::plan::{compatible, known_problem, stepper_kind};
use super::schema::RawCheck;
use super::settings::{positive, positive_budget, Overrides, Settings, DEFAULT_PERIODS};
use super::{Catalog, Plan, PlanProblem};
use crate::claims::Claims;
use crate::measure::ladder::grid;
use crate::measure::MethodKind;
use crate::problem::registry::{catalog, find, BuildError, BuiltinInfo};

/// A check as declared, with the position of its `[[check]]` header.
pub(super) struct Declared {
    pub plan: Plan,
    pub span: Range<usize>,
}

/// Validates one `[[check]]` (claims are attached later, from its
/// stepper's table).
pub(super) fn declared(
    loc: &Locator,
    cat: &Catalog,
    settings: &Settings,
    raw: Spanned<RawCheck>,
) -> Result<Declared, SpecError> {
    let span = raw.span();
    let raw = raw.into_inner();
    let kind = stepper_kind(loc, cat, &raw.stepper)?;
    known_problem(loc, cat, &raw.problem)?;
    let stepper = raw.stepper.get_ref();
    let problem_name = raw.problem.get_ref();
    let builtin = find(problem_name);
    let second_order = builtin.map_or_else(
        || {
            cat.user_problems
                .iter()
                .any(|(n, s)| n == problem_name && *s)
        },
        |info| info.second_order,
    );
    if !compatible(kind, second_order) {
        return Err(split_mismatch(loc, cat, &raw.problem, stepper));
    }
    let mut name = format!("{stepper}/{problem_name}");
    if let Some(tag) = &raw.tag {
        check_tag(loc, tag)?;
        name = format!("{name}:{}", tag.get_ref());
    }
    let problem = match builtin {
        Some(info) => PlanProblem::Builtin {
            info,
            params: params(loc, info, raw.params)?,
        },
        None => {
            if let Some(p) = &raw.params {
                return Err(loc.at(
                    &p.span(),
                    format!("`params` apply to built-in problems only; `{problem_name}` is a user problem"),
                    Some("set its parameters where you construct it in tests/drift.rs, and remove `params`".into()),
                ));
            }
            PlanProblem::User(problem_name.clone())
        }
    };
    let periods = match &raw.periods {
        Some(p) => Some(positive(
            loc,
            p,
            "periods",
            "a horizon in time units of the problem, e.g. 10.0",
        )?),
        None => None,
    };
    let budget = match &raw.budget {
        Some(b) => Some(positive_budget(loc, b)?),
        None => None,
    };
    let tolerances = match &raw.tolerances {
        Some(t) => Some(tolerances(loc, kind, stepper, t, raw.ladder.is_some())?),
        None => None,
    };
    let default_periods = builtin.map_or(DEFAULT_PERIODS, |info| info.periods_for(kind));
    let mut config = settings.config(
        kind,
        default_periods,
        Overrides {
            periods,
            ladder: None,
            tolerances,
            budget,
        },
    );
    if let Some(l) = &raw.ladder {
        let steps = ladder(loc, l, config.periods, settings.samples)?;
        config.ladder = crate::measure::Ladder::Steps(steps);
    }
    settings.check_auto(
        loc,
        &config,
        raw.periods.as_ref().map(|p| p.span()).as_ref(),
        &name,
    )?;
    Ok(Declared {
        plan: Plan {
            name,
            stepper: stepper.clone(),
            kind,
            problem,
            config,
            claims: Claims::default(),
        },
        span,
    })
}

/// A split stepper paired with a problem that has no second-order form.
fn split_mismatch(
    loc: &Locator,
    cat: &Catalog,
    problem: &Spanned<String>,
    stepper: &str,
) -> SpecError {
    let fits: Vec<&str> = catalog()
        .iter()
        .filter(|p| p.second_order)
        .map(|p| p.name)
        .chain(
            cat.user_problems
                .iter()
                .filter(|(_, s)| *s)
                .map(|(n, _)| n.as_str()),
        )
        .collect();
    loc.at(
        &problem.span(),
        format!(
            "split stepper `{stepper}` cannot run on `{}`: it has no second-order form q'' = a(t, q) (its force depends on the velocity, or it is not a mechanical system)",
            problem.get_ref()
        ),
        Some(format!(
            "pair it with a problem that has one ({}), or register the method as a Stepper",
            fits.join(", ")
        )),
    )
}

/// A tag: letters, digits, `_` and `-`.
fn check_tag(loc: &Locator, tag: &Spanned<String>) -> Result<(), SpecError> {
    let t = tag.get_ref();
    if !t.is_empty()
        && t.chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
    {
        return Ok(());
    }
    Err(loc.at(
        &tag.span(),
        format!("tag \"{t}\" must be non-empty and use only letters, digits, `_` and `-`"),
        Some("it becomes part of the check name `stepper/problem:tag`, e.g. \"eccentric\"".into()),
    ))
}

/// The parameters of a built-in problem, checked by building it.
fn params(
    loc: &Locator,
    info: &'static BuiltinInfo,
    raw: Option<Spanned<BTreeMap<Spanned<String>, Spanned<f64>>>>,
) -> Result<BTreeMap<String, f64>, SpecError> {
    let Some(raw) = raw else {
        return Ok(BTreeMap::new());
    };
    let plain: BTreeMap<String, f64> = raw
        .get_ref()
        .iter()
        .map(|(k, v)| (k.get_ref().clone(), *v.get_ref()))
        .collect();
    let Err(e) = info.build(&plain) else {
        return Ok(plain);
    };
    let entry = |key: &str| raw.get_ref().iter().find(|(k, _)| k.get_ref() == key);
    let known = || {
        let list: Vec<String> = info
            .params
            .iter()
            .map(|p| format!("{} ({}; default {})", p.name, p.doc, p.default))
            .collect();
        list.join(", ")
    };
    Err(match &e {
        BuildError::UnknownParam { key, .. } => {
            let near = entry(key)
                .map(|(k, _)| k.span())
                .unwrap_or_else(|| raw.span());
            let names: Vec<&str> = info.params.iter().map(|p| p.name).collect();
            let help = match super::errors::nearest(key, &names) {
                Some(n) => format!("did you mean `{n}`? the parameters are: {}", known()),
                None if names.is_empty() => {
                    format!("`{}` takes no parameters; remove `params`", info.name)
                }
                None => format!("the parameters are: {}", known()),
            };
            loc.at(&near, e.to_string(), Some(help))
        }
        BuildError::Param(p) => {
            let at = entry(p.parameter)
                .map(|(_, v)| v.span())
                .unwrap_or_else(|| raw.span());
            loc.at(
                &at,
                e.to_string(),
                Some(format!("give `{}` a value with {}", p.parameter, p.allowed)),
            )
        }
    })
}

/// A fixed ladder: positive, strictly increasing, multiples of
/// `samples_per_period`, fitting the horizon.
fn ladder(
    loc: &Locator,
    raw: &Spanned<Vec<Spanned<u64>>>,
    periods: f64,
    samples: u64,
) -> Result<Vec<u64>, SpecError> {
    let rungs = raw.get_ref();
    if rungs.is_empty() {
        return Err(loc.at(
            &raw.span(),
            "`ladder` is empty".into(),
            Some("give steps per period, coarse to fine, e.g. [64, 128, 256], or remove it for an automatic ladder".into()),
        ));
    }
    let mut prev = 0;
    for rung in rungs {
        let n = *rung.get_ref();
        let fault = if n == 0 {
            Some((
                "a rung of `ladder` is 0".to_string(),
                "steps per period must be positive".to_string(),
            ))
        } else if n <= prev {
            Some((
                format!("`ladder` is not strictly increasing: {n} follows {prev}"),
                "list steps per period coarse to fine, each larger than the one before".to_string(),
            ))
        } else if n % samples != 0 {
            Some((
                format!("{n} steps per period is not a multiple of samples_per_period = {samples}"),
                format!(
                    "use multiples of {samples}, e.g. {}",
                    n.div_ceil(samples) * samples
                ),
            ))
        } else {
            grid(n, periods, samples).err().map(|reason| {
                (reason, "choose `periods` and the ladder so that steps x periods is a whole number of samples".to_string())
            })
        };
        if let Some((message, help)) = fault {
            return Err(loc.at(&rung.span(), message, Some(help)));
        }
        prev = n;
    }
    Ok(rungs.iter().map(|r| *r.get_ref()).collect())
}

/// A tolerance ladder: integrators only, not with `ladder`, strictly
/// decreasing within (0, 1).
fn tolerances(
    loc: &Locator,
    kind: MethodKind,
    stepper: &str,
    raw: &Spanned<Vec<Spanned<f64>>>,
    with_ladder: bool,
) -> Result<Vec<f64>, SpecError> {
    if kind != MethodKind::Whole {
        return Err(loc.at(
            &raw.span(),
            format!(
                "`tolerances` apply to integrators only; `{stepper}` is a {}",
                kind.name()
            ),
            Some(
                "remove `tolerances`; use `ladder` (steps per period) for a fixed-step method"
                    .into(),
            ),
        ));
    }
    if with_ladder {
        return Err(loc.at(
            &raw.span(),
            "a check has either `ladder` or `tolerances`, not both".into(),
            Some("keep `ladder` for fixed steps or `tolerances` for adaptive runs".into()),
        ));
    }
    let tols = raw.get_ref();
    if tols.is_empty() {
        return Err(loc.at(
            &raw.span(),
            "`tolerances` is empty".into(),
            Some("give tolerances coarse to fine, e.g. [1e-4, 1e-6, 1e-8], or remove the key for the default".into()),
        ));
    }
    let mut prev = 1.0;
    for t in tols {
        let v = *t.get_ref();
        let fault = if !(v.is_finite() && v > 0.0 && v < 1.0) {
            Some(format!("tolerance {v} must lie in (0, 1)"))
        } else if v >= prev {
            Some(format!(
                "`tolerances` is not strictly decreasing: {v} follows {prev}"
            ))
        } else {
            None
        };
        if let Some(message) = fault {
            return Err(loc.at(
                &t.span(),
                message,
                Some("list tolerances coarse to fine, each smaller than the one before, e.g. [1e-4, 1e-6]".into()),
            ));
        }
        prev = v;
    }
    Ok(tols.iter().map(|t| *t.get_ref()).collect())
}
