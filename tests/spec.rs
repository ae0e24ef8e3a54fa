//! `drift.toml`: a full file parsed into plans, the battery, the precedence
//! of horizons, and every error with its exact line, column and help. The
//! expected plans follow the schema in DEVELOPERS.md (section `drift.toml`);
//! the positions are counted by hand in the inputs written here.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use drift::claims::{EnergyClaim, Slack};
use drift::measure::{Ladder, LongRun, MethodKind};
use drift::spec::{Catalog, Plan, PlanProblem, Spec, SpecError};

/// Three steppers of the three kinds and two user problems, one of them
/// with a second-order form.
fn catalog() -> Catalog {
    Catalog {
        steppers: vec![
            ("rk4".into(), MethodKind::Fixed),
            ("leapfrog".into(), MethodKind::Split),
            ("dopri".into(), MethodKind::Whole),
        ],
        user_problems: vec![("beam".into(), true), ("chem".into(), false)],
    }
}

fn parse(text: &str) -> Result<Spec, SpecError> {
    Spec::parse(text, Path::new("drift.toml"), &catalog())
}

fn err(text: &str) -> SpecError {
    match parse(text) {
        Ok(_) => panic!("expected an error for:\n{text}"),
        Err(e) => e,
    }
}

/// Asserts the position of `e` and that its help contains every piece.
fn assert_at(e: &SpecError, line: usize, column: usize, help: &[&str]) {
    assert_eq!((e.line, e.column), (line, column), "{e}");
    let h = e.help.as_deref().unwrap_or_else(|| panic!("no help: {e}"));
    for piece in help {
        assert!(h.contains(piece), "help lacks {piece:?}: {e}");
    }
}

fn names(plans: &[Plan]) -> Vec<&str> {
    plans.iter().map(|p| p.name.as_str()).collect()
}

fn plan<'a>(plans: &'a [Plan], name: &str) -> &'a Plan {
    plans
        .iter()
        .find(|p| p.name == name)
        .unwrap_or_else(|| panic!("no plan {name} in {:?}", names(plans)))
}

/// Built-in problems with a second-order form (registry: harmonic,
/// power_law, pendulum, kepler, driven) and all nine.
const SECOND_ORDER: [&str; 5] = ["driven", "harmonic", "kepler", "pendulum", "power_law"];
const BUILTINS: [&str; 9] = [
    "arenstorf",
    "damped",
    "driven",
    "harmonic",
    "kepler",
    "linear",
    "lotka_volterra",
    "pendulum",
    "power_law",
];

const FULL: &str = r#"[settings]
baseline = "ci/drift-baseline.toml"
periods = 8.0
samples_per_period = 4
budget = 100000
long_periods = 500.0
reversibility = true

[settings.slack]
order = 0.2

[stepper.rk4]
order = 4
energy = "linear"
floor = 12.0

[stepper.leapfrog]
order = 2
energy = "bounded"
reversible = true
skip = ["pendulum", "beam"]

[stepper.dopri]
order = 5
battery = true

[[check]]
stepper = "rk4"
problem = "kepler"
tag = "eccentric"
params = { e = 0.9 }
periods = 5.0
ladder = [64, 128, 256]

[[check]]
stepper = "rk4"
problem = "arenstorf"
budget = 2000000

[[check]]
stepper = "dopri"
problem = "kepler"
tag = "tight"
tolerances = [1e-4, 1e-6]
"#;

#[test]
fn a_full_file_gives_the_declared_checks_and_batteries() {
    let spec = parse(FULL).unwrap();
    let plans = spec.plans();

    // rk4 has checks and no `battery` key: its battery is off. leapfrog has
    // no check: its battery runs on the second-order problems minus skip.
    // dopri has checks and `battery = true`: everything, plus its check.
    let mut expected: Vec<String> = vec![
        "rk4/arenstorf".into(),
        "rk4/kepler:eccentric".into(),
        "dopri/kepler:tight".into(),
        "dopri/beam".into(),
        "dopri/chem".into(),
    ];
    expected.extend(BUILTINS.iter().map(|p| format!("dopri/{p}")));
    expected.extend(
        SECOND_ORDER
            .iter()
            .filter(|p| **p != "pendulum")
            .map(|p| format!("leapfrog/{p}")),
    );
    expected.sort();
    assert_eq!(names(&plans), expected);

    let eccentric = plan(&plans, "rk4/kepler:eccentric");
    assert_eq!(eccentric.stepper, "rk4");
    assert_eq!(eccentric.kind, MethodKind::Fixed);
    match &eccentric.problem {
        PlanProblem::Builtin { info, params } => {
            assert_eq!(info.name, "kepler");
            assert_eq!(params, &BTreeMap::from([("e".to_string(), 0.9)]));
        }
        other => panic!("{other:?}"),
    }
    assert_eq!(eccentric.config.ladder, Ladder::Steps(vec![64, 128, 256]));
    assert_eq!(eccentric.config.periods, 5.0);
    assert_eq!(eccentric.config.samples_per_unit, 4);
    assert_eq!(
        eccentric.config.long_run,
        Some(LongRun {
            periods: 500.0,
            steps_per_unit: None,
            max_steps: 100_000 / 4,
            repeat: None,
        })
    );
    assert!(eccentric.config.reversibility);
    assert_eq!(eccentric.claims.order, Some(4.0));
    assert_eq!(eccentric.claims.energy, Some(EnergyClaim::Linear));
    assert_eq!(eccentric.claims.floor, Some(12.0));
    assert_eq!(eccentric.claims.reversible, None);

    // The file's horizon beats Arenstorf's own default of one period; the
    // check's budget beats the file's, in the ladder and the long run.
    let arenstorf = plan(&plans, "rk4/arenstorf");
    assert_eq!(arenstorf.config.periods, 8.0);
    assert_eq!(
        arenstorf.config.ladder,
        Ladder::Auto {
            start: 16,
            max_rungs: 20,
            budget: 2_000_000
        }
    );
    assert_eq!(
        arenstorf.config.long_run.as_ref().unwrap().max_steps,
        500_000
    );

    let tight = plan(&plans, "dopri/kepler:tight");
    assert_eq!(tight.config.ladder, Ladder::Tolerances(vec![1e-4, 1e-6]));
    assert_eq!(tight.claims.order, Some(5.0));
    assert!(matches!(
        plan(&plans, "dopri/harmonic").config.ladder,
        Ladder::AutoTolerances { .. }
    ));
    assert!(matches!(&plan(&plans, "dopri/beam").problem, PlanProblem::User(n) if n == "beam"));

    let leap = plan(&plans, "leapfrog/kepler");
    assert_eq!(leap.claims.reversible, Some(true));
    assert_eq!(leap.claims.energy, Some(EnergyClaim::Bounded));
    assert!(matches!(&leap.problem, PlanProblem::Builtin { params, .. } if params.is_empty()));
    assert!(matches!(
        leap.config.ladder,
        Ladder::Auto {
            budget: 100_000,
            ..
        }
    ));

    assert_eq!(
        spec.baseline_path(Path::new("/pkg")),
        PathBuf::from("/pkg/ci/drift-baseline.toml")
    );
    assert_eq!(
        spec.slack(),
        &Slack {
            order: 0.2,
            ..Slack::default()
        }
    );
}

#[test]
fn horizon_precedence_check_then_file_then_problem_then_ten() {
    let text = "[stepper.rk4]\nbattery = true\n\n[[check]]\nstepper = \"rk4\"\nproblem = \"harmonic\"\ntag = \"short\"\nperiods = 2.0\n";
    let plans = parse(text).unwrap().plans();
    assert_eq!(plan(&plans, "rk4/harmonic:short").config.periods, 2.0);
    // No settings.periods: the problem's own default (Arenstorf: one
    // period), else 10 (built-ins default to 10, user problems too).
    assert_eq!(plan(&plans, "rk4/arenstorf").config.periods, 1.0);
    assert_eq!(plan(&plans, "rk4/harmonic").config.periods, 10.0);
    assert_eq!(plan(&plans, "rk4/beam").config.periods, 10.0);
    let with_file = parse("[settings]\nperiods = 3.0\n").unwrap().plans();
    assert_eq!(plan(&with_file, "rk4/arenstorf").config.periods, 3.0);
    assert_eq!(plan(&with_file, "dopri/beam").config.periods, 3.0);
}

#[test]
fn an_empty_file_runs_every_stepper_on_its_battery() {
    let spec = parse("").unwrap();
    let plans = spec.plans();
    let mut expected: Vec<String> = Vec::new();
    for stepper in ["rk4", "dopri"] {
        expected.extend(BUILTINS.iter().map(|p| format!("{stepper}/{p}")));
        expected.push(format!("{stepper}/beam"));
        expected.push(format!("{stepper}/chem"));
    }
    // Split steppers only where a second-order form exists.
    expected.extend(SECOND_ORDER.iter().map(|p| format!("leapfrog/{p}")));
    expected.push("leapfrog/beam".into());
    expected.sort();
    assert_eq!(names(&plans), expected);

    let rk4 = plan(&plans, "rk4/kepler");
    assert_eq!(
        rk4.config.ladder,
        Ladder::Auto {
            start: 16,
            max_rungs: 20,
            budget: 4_000_000
        }
    );
    assert_eq!(rk4.config.samples_per_unit, 4);
    assert_eq!(
        rk4.config.long_run,
        Some(LongRun {
            periods: 1000.0,
            steps_per_unit: None,
            max_steps: 1_000_000,
            repeat: None,
        })
    );
    assert!(rk4.config.reversibility);
    assert_eq!(rk4.claims, Default::default());
    assert_eq!(
        spec.baseline_path(Path::new("p")),
        Path::new("p/drift-baseline.toml")
    );

    let defaults = Spec::default_for(&catalog()).plans();
    assert_eq!(names(&defaults), names(&plans));
}

#[test]
fn a_disabled_long_run_and_more_samples() {
    let text = "[settings]\nlong_periods = 0\nsamples_per_period = 10\nreversibility = false\n";
    let plans = parse(text).unwrap().plans();
    let p = plan(&plans, "rk4/harmonic");
    assert_eq!(p.config.long_run, None);
    assert!(!p.config.reversibility);
    assert_eq!(p.config.samples_per_unit, 10);
    // The automatic ladder starts at the least multiple of 10 from 16.
    assert!(matches!(p.config.ladder, Ladder::Auto { start: 20, .. }));
}

#[test]
fn a_missing_file_means_the_defaults_and_a_directory_is_an_error() {
    let dir = std::env::temp_dir().join(format!("drift-spec-test-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let missing = dir.join("drift.toml");
    let spec = Spec::load(&missing, &catalog()).unwrap();
    assert_eq!(
        names(&spec.plans()),
        names(&Spec::default_for(&catalog()).plans())
    );

    std::fs::write(&missing, "[stepper.rk4]\nskip = [\"kepler\"]\n").unwrap();
    let spec = Spec::load(&missing, &catalog()).unwrap();
    assert!(!names(&spec.plans()).contains(&"rk4/kepler"));
    assert!(names(&spec.plans()).contains(&"rk4/harmonic"));

    // Reading a directory fails with an error other than "not found".
    let e = Spec::load(&dir, &catalog()).unwrap_err();
    assert_eq!(e.line, 0);
    assert!(
        e.to_string().starts_with(&format!("{}: ", dir.display())),
        "{e}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn display_is_path_line_column_message_then_help() {
    let e = err("[settings]\nsamples_per_period = \"four\"\n");
    assert_at(&e, 2, 22, &[]);
    let shown = e.to_string();
    let (first, help) = shown.split_once('\n').unwrap();
    assert!(first.starts_with("drift.toml:2:22: "), "{shown}");
    assert!(help.starts_with("  help: "), "{shown}");
}

#[test]
fn toml_syntax_errors_point_at_the_fault() {
    // The header is not closed: the fault is at the end of line 1.
    let e = err("[settings\nperiods = 1.0\n");
    assert_at(&e, 1, 10, &["TOML syntax"]);
    // A value is missing after `=` on line 3: the fault is after the `=`.
    let e = err("[settings]\nperiods = 1.0\nbudget =\n");
    assert_at(&e, 3, 9, &["TOML syntax"]);
}

#[test]
fn type_errors_point_at_the_value() {
    assert_at(&err("[settings]\nbudget = -5\n"), 2, 10, &["whole number"]);
    assert_at(
        &err("[[check]]\nstepper = \"rk4\"\nproblem = \"kepler\"\nladder = [64, 12.5]\n"),
        4,
        15,
        &[],
    );
    // A check without a problem: at its header.
    assert_at(
        &err("\n[[check]]\nstepper = \"rk4\"\n"),
        2,
        1,
        &["add the key"],
    );
}

#[test]
fn unknown_keys_list_the_valid_ones_and_suggest_the_nearest() {
    let e = err("[settings]\nbudgett = 5\n");
    assert_at(
        &e,
        2,
        1,
        &[
            "did you mean `budget`?",
            "baseline, periods, samples_per_period, budget, long_periods, reversibility, slack",
        ],
    );
    assert_eq!(e.message, "unknown key `budgett`");
    assert_at(
        &err("[[check]]\nstepper = \"rk4\"\nproblem = \"kepler\"\nladdr = [64]\n"),
        4,
        1,
        &["did you mean `ladder`?", "tolerances"],
    );
    assert_at(
        &err("[settings.slack]\norder = 0.1\norders = 0.1\n"),
        3,
        1,
        &["did you mean `order`?", "reversibility_digits"],
    );
    assert_at(
        &err("[stepper.rk4]\norder = 4\ncolour = \"red\"\n"),
        3,
        1,
        &[
            "remove it",
            "order, energy, reversible, floor, battery, skip",
        ],
    );
    assert_at(&err("top = 1\n"), 1, 1, &["settings, stepper, check"]);
}

#[test]
fn unknown_steppers_suggest_the_nearest_registered_one() {
    let e = err("[settings]\nperiods = 1.0\n\n[stepper.rk5]\norder = 4\n");
    assert_at(&e, 4, 10, &["did you mean `rk4`?", "rk4, leapfrog, dopri"]);
    let e = err("[[check]]\nstepper = \"leapfrg\"\nproblem = \"kepler\"\n");
    assert_at(&e, 2, 11, &["did you mean `leapfrog`?"]);
    assert!(e.message.contains("`leapfrg`"), "{e}");
}

#[test]
fn unknown_problems_suggest_the_nearest_known_one() {
    let e = err("[[check]]\nstepper = \"rk4\"\nproblem = \"keplr\"\n");
    assert_at(
        &e,
        3,
        11,
        &["did you mean `kepler`?", "lotka_volterra", "beam", "chem"],
    );
    let e = err("[[check]]\nstepper = \"rk4\"\nproblem = \"xyzzy\"\n");
    assert_at(&e, 3, 11, &["harmonic"]);
    assert!(!e.help.unwrap().contains("did you mean"));
    // In a skip list too, at the entry.
    let e = err("[stepper.rk4]\nskip = [\"kepler\", \"pendulm\"]\n");
    assert_at(&e, 2, 19, &["did you mean `pendulum`?"]);
}

#[test]
fn bad_parameters_point_into_params() {
    let check = "[[check]]\nstepper = \"rk4\"\nproblem = \"kepler\"\n";
    // Unknown key: at the key.
    let e = err(&format!(
        "{check}params = {{ a = 2.0, eccentricity = 0.9 }}\n"
    ));
    assert_at(&e, 4, 21, &["mu", "a", "e"]);
    assert!(e.message.contains("`eccentricity`"), "{e}");
    let e = err(&format!("{check}params = {{ ee = 0.9 }}\n"));
    assert_at(&e, 4, 12, &["did you mean `e`?"]);
    // Out of range (Kepler: 0 <= e < 1): at the value.
    let e = err(&format!("{check}params = {{ e = 1.5 }}\n"));
    assert_at(&e, 4, 16, &["give `e` a value with"]);
    assert!(e.message.contains("`e`"), "{e}");
    // A problem without parameters.
    let e = err("[[check]]\nstepper = \"rk4\"\nproblem = \"arenstorf\"\nparams = { x = 1.0 }\n");
    assert_at(&e, 4, 12, &["takes no parameters"]);
    // User problems take none from the file.
    let e = err("[[check]]\nstepper = \"rk4\"\nproblem = \"beam\"\nparams = { x = 1.0 }\n");
    assert_at(&e, 4, 10, &["tests/drift.rs"]);
}

#[test]
fn a_split_stepper_on_a_first_order_problem_is_an_error_at_the_check() {
    let e = err("[[check]]\nstepper = \"leapfrog\"\nproblem = \"damped\"\n");
    assert_at(&e, 3, 11, &["harmonic", "beam", "Stepper"]);
    assert!(
        e.message
            .starts_with("split stepper `leapfrog` cannot run on `damped`: "),
        "{e}"
    );
    assert!(!e.help.unwrap().contains("chem"));
    let e = err("[[check]]\nstepper = \"leapfrog\"\nproblem = \"chem\"\n");
    assert_at(&e, 3, 11, &[]);
    // With a second-order form it is fine.
    assert!(parse("[[check]]\nstepper = \"leapfrog\"\nproblem = \"beam\"\n").is_ok());
}

#[test]
fn ladder_and_tolerance_errors_point_at_the_key_or_rung() {
    let check = "[[check]]\nstepper = \"rk4\"\nproblem = \"kepler\"\n";
    let e = err(&format!("{check}tolerances = [1e-4]\n"));
    assert_at(&e, 4, 14, &["ladder"]);
    assert!(e.message.contains("integrators only"), "{e}");
    // Not strictly increasing: at the rung.
    let e = err(&format!("{check}ladder = [64, 128, 128]\n"));
    assert_at(&e, 4, 20, &["coarse to fine"]);
    // Not a multiple of samples_per_period (4): at the rung.
    let e = err(&format!("{check}ladder = [64, 66]\n"));
    assert_at(&e, 4, 15, &["multiples of 4", "68"]);
    assert_at(&err(&format!("{check}ladder = [0, 64]\n")), 4, 11, &[]);
    assert_at(
        &err(&format!("{check}ladder = []\n")),
        4,
        10,
        &["automatic"],
    );
    // 4 steps per unit over 0.1 units is not a whole number of steps.
    let e = err(&format!("{check}periods = 0.1\nladder = [4, 8]\n"));
    assert_at(&e, 5, 11, &["whole number"]);
    // An automatic ladder that cannot start: at the horizon.
    let e = err(&format!("{check}periods = 0.1\n"));
    assert_at(&e, 4, 11, &["16"]);

    let integ = "[[check]]\nstepper = \"dopri\"\nproblem = \"kepler\"\n";
    let e = err(&format!("{integ}tolerances = [1e-4, 1e-3]\n"));
    assert_at(&e, 4, 21, &["coarse to fine"]);
    let e = err(&format!("{integ}tolerances = [2.0]\n"));
    assert_at(&e, 4, 15, &[]);
    let e = err(&format!("{integ}ladder = [64]\ntolerances = [1e-4]\n"));
    assert_at(&e, 5, 14, &["`ladder` for fixed steps"]);
    assert!(e.message.contains("either"), "{e}");
    // A fixed ladder on an integrator is allowed.
    let spec = parse(&format!("{integ}ladder = [64, 128]\n")).unwrap();
    assert_eq!(spec.plans()[0].config.ladder, Ladder::Steps(vec![64, 128]));
}

#[test]
fn non_positive_horizons_and_budgets_are_errors() {
    let check = "[[check]]\nstepper = \"rk4\"\nproblem = \"kepler\"\n";
    assert_at(
        &err(&format!("{check}periods = 0.0\n")),
        4,
        11,
        &["horizon"],
    );
    assert_at(&err(&format!("{check}periods = -2\n")), 4, 11, &[]);
    assert_at(&err(&format!("{check}budget = 0\n")), 4, 10, &["4000000"]);
    assert_at(&err("[settings]\nbudget = 0\n"), 2, 10, &[]);
    assert_at(&err("[settings]\nperiods = nan\n"), 2, 11, &[]);
    assert_at(&err("[settings]\nsamples_per_period = 0\n"), 2, 22, &[]);
    assert_at(
        &err("[settings]\nlong_periods = 2.5\n"),
        2,
        16,
        &["0 disables"],
    );
    assert_at(
        &err("[settings]\nbaseline = \"\"\n"),
        2,
        12,
        &["drift-baseline.toml"],
    );
    assert_at(&err("[settings.slack]\norder = -0.1\n"), 1, 1, &[]);
    assert_at(&err("[stepper.rk4]\norder = 0\n"), 2, 9, &[]);
    assert_at(&err("[stepper.rk4]\nfloor = 20.0\n"), 2, 9, &[]);
}

#[test]
fn duplicate_check_names_name_both_lines() {
    let one = "[[check]]\nstepper = \"rk4\"\nproblem = \"kepler\"\n";
    let text = format!("{one}\n{one}");
    let e = err(&text);
    assert_at(&e, 5, 1, &["tag"]);
    assert!(e.message.contains("lines 1 and 5"), "{e}");
    assert!(e.message.contains("`rk4/kepler`"), "{e}");
    // Different tags make different checks.
    let tagged = format!("{one}tag = \"a\"\n{one}tag = \"b\"\n");
    let plans = parse(&tagged).unwrap().plans();
    let rk4: Vec<&str> = names(&plans)
        .into_iter()
        .filter(|n| n.starts_with("rk4/"))
        .collect();
    assert_eq!(rk4, ["rk4/kepler:a", "rk4/kepler:b"]);
}

#[test]
fn a_check_that_repeats_a_battery_check_is_an_error() {
    let text =
        "[stepper.rk4]\nbattery = true\n\n[[check]]\nstepper = \"rk4\"\nproblem = \"kepler\"\n";
    assert_at(&err(text), 4, 1, &["tag", "skip"]);
    let skipped = "[stepper.rk4]\nbattery = true\nskip = [\"kepler\"]\n\n[[check]]\nstepper = \"rk4\"\nproblem = \"kepler\"\nperiods = 3.0\n";
    let plans = parse(skipped).unwrap().plans();
    assert_eq!(plan(&plans, "rk4/kepler").config.periods, 3.0);
    assert!(names(&plans).contains(&"rk4/harmonic"));
}

#[test]
fn skip_without_a_battery_is_an_error() {
    let text = "[stepper.rk4]\nskip = [\"kepler\"]\n\n[[check]]\nstepper = \"rk4\"\nproblem = \"harmonic\"\n";
    assert_at(&err(text), 2, 8, &["battery = true"]);
}

#[test]
fn claims_that_the_configuration_cannot_measure_are_errors() {
    // An integrator's battery runs on tolerance ladders: no long run.
    assert_at(
        &err("[stepper.dopri]\nenergy = \"bounded\"\n"),
        2,
        10,
        &["ladder"],
    );
    // No long run at all.
    let e = err("[settings]\nlong_periods = 0\n\n[stepper.leapfrog]\nenergy = \"bounded\"\n");
    assert_at(&e, 5, 10, &[]);
    assert!(e.message.contains("long_periods"), "{e}");
    let e = err("[settings]\nreversibility = false\n\n[stepper.leapfrog]\nreversible = true\n");
    assert_at(&e, 5, 14, &[]);
    // An integrator with energy claims on fixed ladders only is fine.
    let ok = "[stepper.dopri]\nenergy = \"linear\"\n\n[[check]]\nstepper = \"dopri\"\nproblem = \"kepler\"\nladder = [64, 128]\n";
    assert!(parse(ok).is_ok());
}

#[test]
fn tags_are_restricted_to_name_characters() {
    let e = err("[[check]]\nstepper = \"rk4\"\nproblem = \"kepler\"\ntag = \"a/b\"\n");
    assert_at(&e, 4, 7, &["stepper/problem:tag"]);
}

/// Recorded checks that the file no longer plans are named with why: a
/// `skip` entry (with its line), a battery that is off (declared, or off
/// because the stepper has checks), a stepper that is no longer registered,
/// and a check that is no longer declared. Planned checks are not named.
#[test]
fn recorded_checks_no_longer_planned_say_why() {
    let text = "[stepper.rk4]\nskip = [\"kepler\", \"pendulum\"]\n\n[stepper.leapfrog]\nbattery = false\n\n[[check]]\nstepper = \"leapfrog\"\nproblem = \"harmonic\"\ntag = \"short\"\n\n[[check]]\nstepper = \"dopri\"\nproblem = \"kepler\"\n";
    let spec = parse(text).unwrap();
    let recorded = [
        "rk4/harmonic",
        "rk4/kepler",
        "rk4/pendulum",
        "leapfrog/kepler",
        "leapfrog/harmonic:short",
        "leapfrog/harmonic:long",
        "dopri/harmonic",
        "gone/harmonic",
    ];
    let gone = spec.unplanned(recorded);
    let why: BTreeMap<&str, &str> = gone
        .iter()
        .map(|u| (u.name.as_str(), u.reason.as_str()))
        .collect();
    assert_eq!(
        why.keys().copied().collect::<Vec<_>>(),
        [
            "dopri/harmonic",
            "gone/harmonic",
            "leapfrog/harmonic:long",
            "leapfrog/kepler",
            "rk4/kepler",
            "rk4/pendulum"
        ]
    );
    assert_eq!(
        why["rk4/kepler"],
        "left out by `skip` in [stepper.rk4] at drift.toml:2"
    );
    assert_eq!(why["rk4/pendulum"], why["rk4/kepler"]);
    assert_eq!(
        why["leapfrog/kepler"],
        "the battery of `leapfrog` is off (`battery = false` at drift.toml:5)"
    );
    assert!(
        why["dopri/harmonic"].contains("battery of `dopri` is off: it has `[[check]]`"),
        "{}",
        why["dopri/harmonic"]
    );
    assert!(why["gone/harmonic"].contains("no stepper `gone`"));
    assert_eq!(
        why["leapfrog/harmonic:long"],
        "drift.toml no longer declares it"
    );
    // A check declared under a skipped problem's name is planned after all.
    let declared = parse("[stepper.rk4]\nbattery = true\nskip = [\"kepler\"]\n\n[[check]]\nstepper = \"rk4\"\nproblem = \"kepler\"\n").unwrap();
    assert!(declared.unplanned(["rk4/kepler"]).is_empty());
}
