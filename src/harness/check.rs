//! Running one planned check inside its trial: build the problem, repeat the
//! baseline's ladder, measure, record, judge, and turn a failing verdict into
//! the trial's failure message.

use std::sync::{Arc, Mutex};

use libtest_mimic::Failed;

use crate::baseline::{
    claim_rows, judge, Baseline, CheckRecord, Judgement, LadderRecord, MetricRow, Verdict,
};
use crate::claims::{Claims, Slack};
use crate::measure::{Config, Ladder};
use crate::problem::Problem;
use crate::spec::{Plan, PlanProblem};

use super::detail::Detail;
use super::{Registered, Target};

/// What every trial shares.
pub(crate) struct Shared {
    pub methods: Vec<Registered>,
    pub problems: Vec<Arc<dyn Problem>>,
    pub baseline: Option<Baseline>,
    pub slack: Slack,
    pub record: bool,
    pub outcomes: Mutex<Vec<CheckOutcome>>,
}

/// The result of one check.
#[derive(Clone, Debug)]
pub struct CheckOutcome {
    /// Check name, e.g. `rk4/harmonic`.
    pub name: String,
    /// The stepper's name.
    pub stepper: String,
    /// The problem's name.
    pub problem: String,
    /// Its figures (none when the measurement failed).
    pub record: Option<CheckRecord>,
    /// Verdict and the rows worth showing.
    pub judgement: Judgement,
    /// What the stepper's author claims.
    pub claimed: Claims,
    /// Every claim of the stepper against this check, holding or not.
    pub claims: Vec<MetricRow>,
    /// The measurement behind the figures (none when it failed).
    pub detail: Option<Detail>,
}

/// The configuration a check runs: the plan's, with what the baseline
/// stored repeated where the plan leaves the choice to the tool, so every
/// later run repeats exactly the recorded rungs (an automatic ladder), the
/// recorded long run (an automatic long run over the same asked horizon)
/// and the recorded reversibility run (over the same ladder horizon). An
/// automatic tolerance ladder may have recorded steps: the integrator
/// supported fixed steps only.
///
/// ```
/// use drift::baseline::CheckRecord;
/// use drift::harness::check::ladder_for;
/// use drift::measure::{Ladder, MethodKind, RunAt};
/// use drift::spec::{Catalog, Spec};
/// let catalog = Catalog { steppers: vec![("rk4".into(), MethodKind::Fixed)], user_problems: vec![] };
/// let plans = Spec::default_for(&catalog).plans();
/// let plan = plans.iter().find(|p| p.name == "rk4/harmonic").unwrap();
/// assert_eq!(ladder_for(plan, None), plan.config);
/// let recorded: CheckRecord = serde_json::from_str(r#"{ "kind": "stepper", "basis": "exact",
///     "steps_per_unit": [16, 32], "digits": [1.9, 3.1], "classes": ["fit", "fit"],
///     "evals_per_step": 4.0, "long_run_steps_per_unit": 32, "long_run_periods": 1000.0,
///     "reversibility_steps_per_unit": 32, "reversibility_periods": 10.0 }"#).unwrap();
/// let config = ladder_for(plan, Some(&recorded));
/// assert_eq!(config.ladder, Ladder::Steps(vec![16, 32]));
/// let at = RunAt { steps_per_unit: 32, periods: 1000.0 };
/// assert_eq!(config.long_run.unwrap().repeat, Some(at));
/// assert_eq!(config.reversibility_at, Some(RunAt { periods: 10.0, ..at }));
/// ```
pub fn ladder_for(plan: &Plan, recorded: Option<&CheckRecord>) -> Config {
    let mut config = plan.config.clone();
    let Some(recorded) = recorded else {
        return config;
    };
    match (&config.ladder, &recorded.ladder) {
        (Ladder::Auto { .. } | Ladder::AutoTolerances { .. }, LadderRecord::Steps(steps)) => {
            config.ladder = Ladder::Steps(steps.clone());
        }
        (Ladder::AutoTolerances { .. }, LadderRecord::Tolerances(tols)) => {
            config.ladder = Ladder::Tolerances(tols.clone());
        }
        _ => {}
    }
    if let (Some(lr), Some(at)) = (config.long_run.as_mut(), recorded.runs.long_run) {
        if lr.steps_per_unit.is_none() && recorded.runs.long_run_asked() == Some(lr.periods) {
            lr.repeat = Some(at);
        }
    }
    if let Some(at) = recorded.runs.reversibility {
        if config.reversibility && at.periods == config.periods {
            config.reversibility_at = Some(at);
        }
    }
    config
}

fn target(shared: &Shared, plan: &Plan) -> Result<Target, String> {
    match &plan.problem {
        PlanProblem::Builtin { info, params } => info
            .build(params)
            .map(Target::Builtin)
            .map_err(|e| e.to_string()),
        PlanProblem::User(name) => shared
            .problems
            .iter()
            .find(|p| p.name() == name)
            .map(|p| Target::User(Arc::clone(p)))
            .ok_or_else(|| format!("no problem `{name}` is registered")),
    }
}

/// Measures and judges one plan.
pub(crate) fn run_plan(shared: &Shared, plan: &Plan) -> CheckOutcome {
    let recorded = shared
        .baseline
        .as_ref()
        .and_then(|b| b.checks.get(&plan.name));
    let measured = shared
        .methods
        .iter()
        .find(|m| m.name == plan.stepper)
        .ok_or_else(|| format!("no stepper `{}` is registered", plan.stepper))
        .and_then(|method| {
            let target = target(shared, plan)?;
            let config = ladder_for(plan, recorded);
            let m = method
                .measure(&target, &config)
                .map_err(|e| e.to_string())?;
            let problem = target.problem();
            let detail = Detail::of(
                &m,
                config.periods,
                problem.time_unit(),
                problem.period().is_some(),
            );
            Ok((m, detail))
        });
    let (record, judgement, claims, detail) = match measured {
        Ok((m, detail)) => {
            let record = CheckRecord::from_measurement(&m);
            let judgement = judge(&record, recorded, &plan.claims, &shared.slack);
            let claims = claim_rows(&record, &plan.claims);
            (Some(record), judgement, claims, Some(detail))
        }
        Err(e) => (
            None,
            Judgement {
                verdict: Verdict::Error(e),
                rows: Vec::new(),
            },
            Vec::new(),
            None,
        ),
    };
    CheckOutcome {
        name: plan.name.clone(),
        stepper: plan.stepper.clone(),
        problem: plan.problem.name().to_string(),
        record,
        judgement,
        claimed: plan.claims.clone(),
        claims,
        detail,
    }
}

/// The failure message of a trial: the verdict, then the table of figures.
pub fn failure_message(outcome: &CheckOutcome) -> String {
    let verdict = &outcome.judgement.verdict;
    let mut msg = match verdict {
        Verdict::Error(e) => format!("{}: error: {e}", outcome.name),
        v => format!("{}: {}", outcome.name, v.name()),
    };
    if !outcome.judgement.rows.is_empty() {
        msg.push('\n');
        msg.push_str(&outcome.judgement.table());
    }
    msg
}

/// The body of one trial. In record mode only an error fails (it is not
/// recorded); otherwise every failing verdict does.
pub(crate) fn run_trial(shared: &Shared, plan: &Plan) -> Result<(), Failed> {
    let outcome = run_plan(shared, plan);
    let verdict = &outcome.judgement.verdict;
    let fails = if shared.record {
        matches!(verdict, Verdict::Error(_))
    } else {
        verdict.fails()
    };
    let result = if fails {
        Err(Failed::from(failure_message(&outcome)))
    } else {
        Ok(())
    };
    shared
        .outcomes
        .lock()
        .unwrap_or_else(|e| e.into_inner())
        .push(outcome);
    result
}
