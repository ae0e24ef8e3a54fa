//! The baseline file and the judging of checks: round trips, determinism,
//! rounding, error positions, atomic writes, and the verdict rules on
//! measurements built by hand (synthetic figures, no stepper runs; every
//! expected outcome follows from the rules in DEVELOPERS.md, "Baseline file
//! format", and the constants of `drift::claims`).

use std::collections::BTreeMap;
use std::fs;
use std::path::{Path, PathBuf};

use drift::baseline::{
    judge, Baseline, CheckRecord, DriftRecord, ErrorKind, Header, LadderRecord, RowStatus, Verdict,
};
use drift::claims::{Claims, EnergyClaim, Slack};
use drift::measure::{
    Basis, InvariantReport, LongRunReport, Measurement, MethodKind, PeriodReport, Resolution,
    RunAt, Rung,
};
use drift::metrics::{Best, DriftClass, DriftFit, FitStatus, OrderFit, RungClass, SeriesAnalysis};

const FILE: &str = "drift-baseline.toml";

/// Digits gained per doubling by a fourth-order method: 4 log10(2).
const PER_DOUBLING: f64 = 4.0 * std::f64::consts::LOG10_2;

fn drift(exponent: f64) -> DriftFit {
    DriftFit {
        exponent,
        class: DriftClass::of_exponent(exponent),
        max_error: 1e-6,
    }
}

/// A fourth-order stepper on an oscillator: six rungs 16..512 steps per unit,
/// the last near the floor; energy bounded; period, reversibility measured.
fn measurement() -> Measurement {
    let steps: Vec<u64> = (0..6).map(|k| 16u64 << k).collect();
    let digits: Vec<f64> = (0..6).map(|k| 2.0 + PER_DOUBLING * k as f64).collect();
    let rungs = steps
        .iter()
        .zip(&digits)
        .map(|(&n, &d)| Rung {
            resolution: Resolution::StepsPerUnit(n),
            steps: 10 * n,
            evals: 40 * n,
            rejected: 0,
            solution_digits: Some(d),
            invariant_digits: vec![d + 1.0],
            diverged_at: None,
        })
        .collect();
    let mut classes = vec![RungClass::Fitted; 6];
    classes[5] = RungClass::NearFloor;
    let series = |best: f64| SeriesAnalysis {
        classes: classes.clone(),
        fit: Some(OrderFit {
            order: 4.0,
            residual: 0.001,
            first: 0,
            last: 4,
            low: 3.98,
            high: 4.02,
            status: FitStatus::Asymptotic,
        }),
        best: Some(Best {
            digits: best,
            rung: 5,
            uncertainty: 0.3,
        }),
        floor_from: None,
        plateau_from: None,
    };
    Measurement {
        problem: "harmonic".into(),
        kind: MethodKind::Fixed,
        basis: Basis::Exact,
        rungs,
        solution: series(digits[5]),
        invariants: vec![InvariantReport {
            name: "energy".into(),
            analysis: series(digits[5] + 1.0),
            drift_forward: Some(drift(0.01)),
            drift_backward: Some(drift(0.02)),
        }],
        long_run: Some(LongRunReport {
            steps_per_unit: 16,
            periods: 1000.0,
            requested_periods: 1000.0,
            drift_forward: vec![Some(drift(0.01))],
            drift_backward: vec![Some(drift(0.02))],
            envelopes: vec![],
            period: Some(PeriodReport {
                measured: 1.0,
                exact: Some(1.0),
                digits: Some(9.5),
                crossings: 999,
            }),
            virial_digits: Some(8.25),
            diverged_at: None,
        }),
        reversibility_digits: Some(14.0),
        reversibility_run: Some(RunAt {
            steps_per_unit: 16,
            periods: 10.0,
        }),
        evals_per_step: 4.0,
        diverged: None,
        adaptive: None,
    }
}

/// An adaptive integrator on a tolerance ladder, self-convergence basis,
/// no invariants, the finest rung without a figure.
fn tolerance_measurement() -> Measurement {
    let tols = [1e-4, 1e-6, 1.5e-8];
    let digits = [Some(3.5), Some(5.25), None];
    let rungs = tols
        .iter()
        .zip(digits)
        .map(|(&t, d)| Rung {
            resolution: Resolution::Tolerance(t),
            steps: 100,
            evals: 700,
            rejected: 3,
            solution_digits: d,
            invariant_digits: vec![],
            diverged_at: None,
        })
        .collect();
    Measurement {
        problem: "kepler".into(),
        kind: MethodKind::Whole,
        basis: Basis::SelfConvergence,
        rungs,
        solution: SeriesAnalysis {
            classes: vec![RungClass::Fitted, RungClass::Fitted, RungClass::Missing],
            fit: Some(OrderFit {
                order: 5.0,
                residual: 0.0,
                first: 0,
                last: 1,
                low: 4.9,
                high: 5.1,
                status: FitStatus::Converging,
            }),
            best: Some(Best {
                digits: 5.25,
                rung: 1,
                uncertainty: 0.0,
            }),
            floor_from: None,
            plateau_from: None,
        },
        invariants: vec![],
        long_run: None,
        reversibility_digits: None,
        reversibility_run: None,
        evals_per_step: 7.0,
        diverged: None,
        adaptive: None,
    }
}

fn baseline_of(entries: &[(&str, &Measurement)]) -> Baseline {
    let checks = entries
        .iter()
        .map(|(k, m)| (k.to_string(), CheckRecord::from_measurement(m)))
        .collect();
    Baseline {
        header: Header::current(),
        checks,
    }
}

fn path() -> &'static Path {
    Path::new(FILE)
}

#[test]
fn round_trip_gives_an_equal_baseline() {
    let b = baseline_of(&[
        ("rk4/harmonic", &measurement()),
        ("dopri/kepler", &tolerance_measurement()),
    ]);
    let text = b.to_toml();
    let back = Baseline::parse(&text, path()).unwrap();
    assert_eq!(back, b, "{text}");
    // The tolerance ladder survives as exact values and the missing figure
    // as a missing figure.
    let k = &back.checks["dopri/kepler"];
    assert_eq!(k.ladder, LadderRecord::Tolerances(vec![1e-4, 1e-6, 1.5e-8]));
    assert_eq!(k.digits[2], None);
    assert!(
        text.contains(r#"tolerances = ["1e-4", "1e-6", "1.5e-8"]"#),
        "{text}"
    );
    assert!(text.contains("digits = [3.5, 5.25, -1.0]"), "{text}");
}

#[test]
fn output_is_deterministic_and_sorted() {
    let (m, t) = (measurement(), tolerance_measurement());
    let one = baseline_of(&[("rk4/harmonic", &m), ("dopri/kepler", &t)]).to_toml();
    let two = baseline_of(&[("dopri/kepler", &t), ("rk4/harmonic", &m)]).to_toml();
    assert_eq!(one.as_bytes(), two.as_bytes());
    assert!(one.starts_with("[header]\nformat = 2\n"), "{one}");
    let dopri = one.find("[check.\"dopri/kepler\"]").unwrap();
    let rk4 = one.find("[check.\"rk4/harmonic\"]").unwrap();
    let energy = one
        .find("[check.\"rk4/harmonic\".invariant.energy]")
        .unwrap();
    assert!(dopri < rk4 && rk4 < energy, "{one}");
}

#[test]
fn figures_are_rounded_to_three_decimals() {
    let mut m = measurement();
    m.rungs[0].solution_digits = Some(7.123_456);
    m.reversibility_digits = Some(13.999_96);
    let r = CheckRecord::from_measurement(&m);
    assert_eq!(r.digits[0], Some(7.123));
    assert_eq!(r.reversibility_digits, Some(14.0));
    let text = baseline_of(&[("rk4/harmonic", &m)]).to_toml();
    assert!(text.contains("digits = [7.123, "), "{text}");
    assert!(!text.contains("7.1234"), "{text}");
    // 2 + 4 log10(2) = 3.20411...
    assert!(text.contains("3.204, "), "{text}");
}

/// 1-based line number of the first line of `text` that starts with `prefix`.
fn line_of(text: &str, prefix: &str) -> usize {
    text.lines().position(|l| l.starts_with(prefix)).unwrap() + 1
}

#[test]
fn malformed_files_name_file_line_and_column() {
    let text = baseline_of(&[("rk4/harmonic", &measurement())]).to_toml();

    // A value of the wrong type: points at the value.
    let bad = text.replacen("order = 4.0", "order = \"four\"", 1);
    let line = line_of(&bad, "order = ");
    let e = Baseline::parse(&bad, path()).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Malformed);
    assert_eq!(e.position, Some((line, 9)), "{e}");
    let shown = e.to_string();
    assert!(shown.starts_with(&format!("{FILE}:{line}:9: ")), "{shown}");
    assert!(shown.contains("DRIFT_RECORD=1 cargo test"), "{shown}");

    // Broken TOML syntax.
    let bad = text.replacen("[check.\"rk4/harmonic\"]", "[check.\"rk4/harmonic\"", 1);
    let line = line_of(&bad, "[check.");
    let e = Baseline::parse(&bad, path()).unwrap_err();
    assert_eq!(e.position.map(|p| p.0), Some(line), "{e}");

    // Consistent TOML, inconsistent content: points at the check's table.
    let bad = text.replace("classes = [\"fit\", ", "classes = [");
    let e = Baseline::parse(&bad, path()).unwrap_err();
    assert_eq!(e.position, Some((line_of(&bad, "[check."), 1)), "{e}");
    assert!(
        e.message.contains("rk4/harmonic") && e.message.contains("classes"),
        "{e}"
    );

    // An unknown key.
    let bad = text.replace("evals_per_step = 4.0", "evals_per_step = 4.0\nspeed = 1");
    let e = Baseline::parse(&bad, path()).unwrap_err();
    assert_eq!(e.position, Some((line_of(&bad, "speed"), 1)), "{e}");
}

/// The long run's and the reversibility run's resolution and horizon are
/// stored (the asked horizon only when the budget shortened the run), read
/// back, and validated; a file written before these keys still loads, with
/// no stored runs (later runs then choose automatically).
#[test]
fn long_run_resolution_and_horizon_round_trip() {
    let mut m = measurement();
    let lr = m.long_run.as_mut().unwrap();
    (lr.steps_per_unit, lr.periods, lr.requested_periods) = (16384, 61.0, 1000.0);
    let text = baseline_of(&[("heun/kepler", &m)]).to_toml();
    for key in [
        "long_run_steps_per_unit = 16384\n",
        "long_run_periods = 61.0\n",
        "long_run_requested_periods = 1000.0\n",
        "reversibility_steps_per_unit = 16\n",
        "reversibility_periods = 10.0\n",
    ] {
        assert!(text.contains(key), "{key} in {text}");
    }
    let back = Baseline::parse(&text, path()).unwrap();
    let runs = back.checks["heun/kepler"].runs;
    assert_eq!(runs.shortened(), Some((61.0, 1000.0)));
    assert_eq!(
        runs.reversibility,
        Some(RunAt {
            steps_per_unit: 16,
            periods: 10.0
        })
    );

    // Not shortened: no asked horizon is written.
    let whole = baseline_of(&[("rk4/harmonic", &measurement())]).to_toml();
    assert!(!whole.contains("long_run_requested_periods"), "{whole}");
    assert_eq!(
        Baseline::parse(&whole, path()).unwrap().checks["rk4/harmonic"]
            .runs
            .long_run_asked(),
        Some(1000.0)
    );

    // An older file without the keys loads.
    let old: String = whole
        .lines()
        .filter(|l| {
            !l.starts_with("long_run_")
                && !l.starts_with("reversibility_steps")
                && !l.starts_with("reversibility_periods")
        })
        .map(|l| format!("{l}\n"))
        .collect();
    let loaded = Baseline::parse(&old, path()).unwrap();
    assert_eq!(loaded.checks["rk4/harmonic"].runs, Default::default());

    // Keys that go together, and an asked horizon that is not longer.
    let lone = whole.replace("long_run_periods = 1000.0\n", "");
    let e = Baseline::parse(&lone, path()).unwrap_err();
    assert!(e.message.contains("long_run_steps_per_unit"), "{e}");
    let not_longer = text.replace(
        "long_run_requested_periods = 1000.0",
        "long_run_requested_periods = 61.0",
    );
    let e = Baseline::parse(&not_longer, path()).unwrap_err();
    assert!(e.message.contains("long_run_requested_periods"), "{e}");
}

#[test]
fn a_newer_format_is_a_clear_error() {
    let text = baseline_of(&[])
        .to_toml()
        .replace("format = 2", "format = 3");
    let e = Baseline::parse(&text, path()).unwrap_err();
    assert_eq!(e.kind, ErrorKind::NewerFormat);
    assert_eq!(e.position, Some((2, 10)), "{e}");
    assert!(e.message.contains("newer"), "{e}");
    assert!(e.hint.contains("upgrade"), "{e}");
    // Fields of the newer format do not hide the version problem.
    let text = text.replace("[header]\n", "[header]\nschema = \"x\"\n");
    let e = Baseline::parse(&text, path()).unwrap_err();
    assert_eq!(e.kind, ErrorKind::NewerFormat);
}

/// A fresh empty directory for one test.
fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("drift-baseline-{name}-{}", std::process::id()));
    let _ = fs::remove_dir_all(&dir);
    fs::create_dir_all(&dir).unwrap();
    dir
}

fn names_in(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

#[test]
fn write_atomic_replaces_the_file_and_leaves_no_temporary() {
    let dir = scratch("replace");
    let file = dir.join(FILE);
    let old = baseline_of(&[("rk4/harmonic", &measurement())]);
    old.write_atomic(&file).unwrap();
    let new = baseline_of(&[("dopri/kepler", &tolerance_measurement())]);
    new.write_atomic(&file).unwrap();
    assert_eq!(fs::read_to_string(&file).unwrap(), new.to_toml());
    assert_eq!(Baseline::load(&file).unwrap(), Some(new));
    assert_eq!(names_in(&dir), vec![FILE.to_string()]);
    assert_eq!(Baseline::load(&dir.join("absent.toml")).unwrap(), None);
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn a_failed_write_leaves_the_old_file_untouched() {
    let dir = scratch("fail");
    let file = dir.join(FILE);
    let old = baseline_of(&[("rk4/harmonic", &measurement())]);
    old.write_atomic(&file).unwrap();
    let before = fs::read(&file).unwrap();
    let new = baseline_of(&[("dopri/kepler", &tolerance_measurement())]);

    // The temporary file cannot be created: its documented name
    // `.<name>.<pid>.tmp` is taken by a directory.
    let blocker = dir.join(format!(".{FILE}.{}.tmp", std::process::id()));
    fs::create_dir(&blocker).unwrap();
    let e = new.write_atomic(&file).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Io);
    assert_eq!(fs::read(&file).unwrap(), before);
    fs::remove_dir(&blocker).unwrap();

    // The rename fails (the target is a non-empty directory): the temporary
    // file is cleaned up.
    let target = dir.join("occupied");
    fs::create_dir(&target).unwrap();
    fs::write(target.join("x"), "x").unwrap();
    assert!(new.write_atomic(&target).is_err());
    assert_eq!(
        names_in(&dir),
        vec![FILE.to_string(), "occupied".to_string()]
    );

    // A directory without write permission (not enforced for root, who can
    // write anyway; then the two cases above carry the test).
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        fs::set_permissions(&dir, fs::Permissions::from_mode(0o555)).unwrap();
        let enforced = fs::write(dir.join("probe"), "").is_err();
        if enforced {
            assert!(new.write_atomic(&file).is_err());
            assert_eq!(fs::read(&file).unwrap(), before);
        } else {
            eprintln!("directory permissions are not enforced for this user; skipped that case");
        }
        fs::set_permissions(&dir, fs::Permissions::from_mode(0o755)).unwrap();
    }
    fs::remove_dir_all(&dir).unwrap();
}

fn record() -> CheckRecord {
    CheckRecord::from_measurement(&measurement())
}

fn judge_default(
    now: &CheckRecord,
    base: Option<&CheckRecord>,
    claims: &Claims,
) -> drift::baseline::Judgement {
    judge(now, base, claims, &Slack::default())
}

fn status_of(j: &drift::baseline::Judgement, metric: &str) -> Option<RowStatus> {
    j.rows.iter().find(|r| r.metric == metric).map(|r| r.status)
}

#[test]
fn identical_figures_pass() {
    let r = record();
    let claims = Claims {
        order: Some(4.0),
        energy: Some(EnergyClaim::Bounded),
        reversible: Some(true),
        floor: Some(7.0),
    };
    let j = judge_default(&r, Some(&r), &claims);
    assert_eq!(j.verdict, Verdict::Pass, "{}", j.table());
    // Only the always-shown rows remain.
    let metrics: Vec<&str> = j.rows.iter().map(|r| r.metric.as_str()).collect();
    assert_eq!(metrics, vec!["order", "best digits"]);
}

/// Sets the order reading of `r` to `order` with uncertainty `u`.
fn set_order(r: &mut CheckRecord, order: f64, u: f64, status: FitStatus) {
    let f = r.fit.as_mut().unwrap();
    (f.order, f.low, f.high, f.status) = (order, order - u, order + u, status);
}

#[test]
fn lower_order_regresses() {
    let base = record();
    let mut now = base.clone();
    set_order(&mut now, 3.7, 0.02, FitStatus::Asymptotic);
    let j = judge_default(&now, Some(&base), &Claims::default());
    assert_eq!(j.verdict, Verdict::Regressed);
    assert_eq!(status_of(&j, "order"), Some(RowStatus::Worse));
    let row = &j.rows[0];
    assert_eq!((row.baseline, row.now), (Some(4.0), Some(3.7)));
    // slack 0.1 plus the two uncertainties of 0.02 added in quadrature.
    assert_eq!(row.allowed, ">= 3.87");
    let table = j.table();
    assert!(table.contains("4.00") && table.contains("3.70") && table.contains("worse"));
}

#[test]
fn an_order_moves_only_beyond_its_uncertainty() {
    let base = record();
    let mut now = base.clone();
    // 0.15 lower, but each reading is uncertain by 0.1: within slack 0.1
    // plus 0.14.
    set_order(&mut now, 3.85, 0.1, FitStatus::Asymptotic);
    let mut base_wide = base.clone();
    set_order(&mut base_wide, 4.0, 0.1, FitStatus::Asymptotic);
    let j = judge_default(&now, Some(&base_wide), &Claims::default());
    assert_eq!(j.verdict, Verdict::Pass, "{}", j.table());
    // With tight readings the same move regresses.
    set_order(&mut now, 3.85, 0.01, FitStatus::Asymptotic);
    let j = judge_default(&now, Some(&base), &Claims::default());
    assert_eq!(j.verdict, Verdict::Regressed, "{}", j.table());
}

#[test]
fn a_converging_order_is_shown_but_not_gated() {
    let base = record();
    let mut now = base.clone();
    set_order(&mut now, 3.0, 0.2, FitStatus::Converging);
    let j = judge_default(&now, Some(&base), &Claims::default());
    assert_eq!(j.verdict, Verdict::Pass, "{}", j.table());
    let row = &j.rows[0];
    assert_eq!(row.now, Some(3.0));
    assert!(row.allowed.contains("not gated"), "{}", row.allowed);
    // The digits of its rungs are still judged.
    now.digits[2] = now.digits[2].map(|d| d - 1.0);
    let j = judge_default(&now, Some(&base), &Claims::default());
    assert_eq!(j.verdict, Verdict::Regressed, "{}", j.table());
}

#[test]
fn fewer_best_digits_regress() {
    let base = record();
    let mut now = base.clone();
    now.best.as_mut().unwrap().digits -= 1.0;
    let j = judge_default(&now, Some(&base), &Claims::default());
    assert_eq!(j.verdict, Verdict::Regressed);
    assert_eq!(status_of(&j, "best digits"), Some(RowStatus::Worse));
    // 0.6 digits is inside slack 0.5 plus the floor noise of the two
    // readings (0.3 each, in quadrature: 0.42).
    now.best.as_mut().unwrap().digits += 0.4;
    assert_eq!(
        judge_default(&now, Some(&base), &Claims::default()).verdict,
        Verdict::Pass
    );
    // Best digits read off truncation error carry no floor noise.
    let mut base = base;
    base.best.as_mut().unwrap().uncertainty = 0.0;
    now.best.as_mut().unwrap().uncertainty = 0.0;
    assert_eq!(
        judge_default(&now, Some(&base), &Claims::default()).verdict,
        Verdict::Regressed
    );
}

#[test]
fn a_digit_gained_everywhere_is_improved() {
    let base_m = measurement();
    let mut m = base_m.clone();
    for r in &mut m.rungs {
        r.solution_digits = r.solution_digits.map(|d| d + 1.0);
    }
    m.solution.best.as_mut().unwrap().digits += 1.0;
    let (base, now) = (
        CheckRecord::from_measurement(&base_m),
        CheckRecord::from_measurement(&m),
    );
    let j = judge_default(&now, Some(&base), &Claims::default());
    assert_eq!(j.verdict, Verdict::Improved, "{}", j.table());
    assert_eq!(status_of(&j, "best digits"), Some(RowStatus::Better));
    assert_eq!(status_of(&j, "digits @ 64/unit"), Some(RowStatus::Better));
    assert!(!j.verdict.fails());
}

#[test]
fn no_baseline_is_new() {
    let r = record();
    let j = judge_default(
        &r,
        None,
        &Claims {
            order: Some(4.0),
            ..Claims::default()
        },
    );
    assert_eq!(j.verdict, Verdict::New);
    assert_eq!(j.rows[0].now, Some(4.0));
}

#[test]
fn order_claim_is_checked_without_a_baseline() {
    let mut r = record();
    set_order(&mut r, 1.0, 0.01, FitStatus::Asymptotic);
    let claims = Claims {
        order: Some(4.0),
        ..Claims::default()
    };
    let j = judge_default(&r, None, &claims);
    assert_eq!(j.verdict, Verdict::ClaimViolated);
    assert_eq!(status_of(&j, "claim: order"), Some(RowStatus::Violated));
    // Within ORDER_CLAIM_BAND (0.2) of the claim it holds.
    set_order(&mut r, 3.85, 0.01, FitStatus::Asymptotic);
    assert_eq!(judge_default(&r, None, &claims).verdict, Verdict::New);
    // A converging reading wholly below the band violates it; one that
    // straddles it cannot be judged here, and says so.
    set_order(&mut r, 3.2, 0.1, FitStatus::Converging);
    assert_eq!(
        judge_default(&r, None, &claims).verdict,
        Verdict::ClaimViolated
    );
    set_order(&mut r, 3.8, 0.3, FitStatus::Converging);
    let j = judge_default(&r, None, &claims);
    assert_eq!(j.verdict, Verdict::New, "{}", j.table());
    assert_eq!(status_of(&j, "claim: order"), Some(RowStatus::Unmeasured));
    assert!(j.table().contains("not measurable here"), "{}", j.table());
    // No fit at all: not measurable on this problem, not a violation.
    r.fit = None;
    let j = judge_default(&r, None, &claims);
    assert_eq!(j.verdict, Verdict::New);
    assert_eq!(status_of(&j, "claim: order"), Some(RowStatus::Unmeasured));
}

#[test]
fn energy_claim_against_linear_drift_is_violated() {
    let mut m = measurement();
    m.invariants[0].drift_forward = Some(drift(1.0));
    let r = CheckRecord::from_measurement(&m);
    let bounded = Claims {
        energy: Some(EnergyClaim::Bounded),
        ..Claims::default()
    };
    let j = judge_default(&r, None, &bounded);
    assert_eq!(j.verdict, Verdict::ClaimViolated, "{}", j.table());
    let linear = Claims {
        energy: Some(EnergyClaim::Linear),
        ..Claims::default()
    };
    assert_eq!(judge_default(&r, None, &linear).verdict, Verdict::New);
    // Against the baseline the drift class got worse too.
    let j = judge_default(&r, Some(&record()), &linear);
    assert_eq!(j.verdict, Verdict::Regressed);
    assert_eq!(
        status_of(&j, "energy drift exponent fwd"),
        Some(RowStatus::Worse)
    );
    // A problem with no energy invariant: the claim does not apply.
    let mut m = measurement();
    m.invariants[0].name = "angular momentum".into();
    m.invariants[0].drift_forward = Some(drift(1.0));
    let j = judge_default(&CheckRecord::from_measurement(&m), None, &bounded);
    assert_eq!(j.verdict, Verdict::New);
    assert!(j.rows.iter().all(|r| !r.metric.contains("energy")));
}

#[test]
fn reversible_claim_needs_ten_digits() {
    let mut r = record();
    let claims = Claims {
        reversible: Some(true),
        ..Claims::default()
    };
    assert_eq!(judge_default(&r, None, &claims).verdict, Verdict::New);
    r.reversibility_digits = Some(6.0);
    let j = judge_default(&r, None, &claims);
    assert_eq!(j.verdict, Verdict::ClaimViolated);
    assert_eq!(
        status_of(&j, "claim: reversible"),
        Some(RowStatus::Violated)
    );
    // A claim of non-reversibility asks nothing.
    let none = Claims {
        reversible: Some(false),
        ..Claims::default()
    };
    assert_eq!(judge_default(&r, None, &none).verdict, Verdict::New);
}

#[test]
fn floor_claim_applies_to_exact_solutions() {
    let mut r = record();
    let best = r.best.unwrap().digits; // 2 + 5 * 4 log10(2) = 8.02
    let claims = |floor: f64| Claims {
        floor: Some(floor),
        ..Claims::default()
    };
    assert_eq!(
        judge_default(&r, None, &claims(best - 0.5)).verdict,
        Verdict::New
    );
    let j = judge_default(&r, None, &claims(best + 0.5));
    assert_eq!(j.verdict, Verdict::ClaimViolated);
    assert_eq!(status_of(&j, "claim: floor"), Some(RowStatus::Violated));
    r.basis = Basis::SelfConvergence;
    assert_eq!(
        judge_default(&r, None, &claims(best + 0.5)).verdict,
        Verdict::New
    );
}

#[test]
fn a_new_plateau_regresses() {
    let base = record();
    let mut now = base.clone();
    now.plateau_from = Some(3);
    now.classes[3] = RungClass::Plateau;
    let j = judge_default(&now, Some(&base), &Claims::default());
    assert_eq!(j.verdict, Verdict::Regressed);
    assert_eq!(status_of(&j, "plateau"), Some(RowStatus::Worse));
    // With an order claim, the plateau violates it even at the right slope.
    let j = judge_default(
        &now,
        None,
        &Claims {
            order: Some(4.0),
            ..Claims::default()
        },
    );
    assert_eq!(j.verdict, Verdict::ClaimViolated);
}

#[test]
fn plateau_and_drift_rows_show_figures_not_indices_or_class_names() {
    // Before, the plateau row printed a 0-based rung index as a decimal
    // (`- 5.00`) and drift rows put exponents against a class name
    // (`1.00 0.00 <= linear`).
    let base = record();
    let mut now = base.clone();
    now.plateau_from = Some(3);
    now.classes[3] = RungClass::Plateau;
    let energy = now.invariants.get_mut("energy").unwrap();
    energy.drift_forward = Some(DriftRecord {
        class: DriftClass::Linear,
        exponent: 1.0,
        digits: Some(6.0),
    });
    let j = judge_default(&now, Some(&base), &Claims::default());
    let row = |name: &str| j.rows.iter().find(|r| r.metric == name).unwrap().clone();
    let plateau = row("plateau");
    assert_eq!((plateau.baseline, plateau.now), (None, None));
    assert_eq!(plateau.allowed, "none (now from 128/unit)");
    let drift = row("energy drift exponent fwd");
    assert_eq!(drift.status, RowStatus::Worse);
    assert_eq!(drift.now, Some(1.0));
    // The limit is an exponent: the recorded class's upper bound (bounded:
    // 0.25) or the recorded exponent (0.01) plus the slack (0.3), whichever
    // is larger.
    assert!(drift.allowed.starts_with("<= 0.31 "), "{}", drift.allowed);
}

#[test]
fn a_last_bit_change_passes() {
    let base_m = measurement();
    let mut m = base_m.clone();
    let nudge = |d: &mut f64| *d += 1e-4;
    m.rungs
        .iter_mut()
        .filter_map(|r| r.solution_digits.as_mut())
        .for_each(nudge);
    let figures = [
        m.solution.fit.as_mut().map(|f| &mut f.order),
        m.solution.best.as_mut().map(|b| &mut b.digits),
        m.invariants[0]
            .analysis
            .best
            .as_mut()
            .map(|b| &mut b.digits),
        m.reversibility_digits.as_mut(),
    ];
    figures.into_iter().flatten().for_each(nudge);
    let (base, now) = (
        CheckRecord::from_measurement(&base_m),
        CheckRecord::from_measurement(&m),
    );
    let j = judge_default(
        &now,
        Some(&base),
        &Claims {
            order: Some(4.0),
            ..Claims::default()
        },
    );
    assert_eq!(j.verdict, Verdict::Pass, "{}", j.table());
}

#[test]
fn a_changed_ladder_is_reported_and_compared_on_order_and_best_only() {
    let base = record();
    let mut now = base.clone();
    now.ladder = LadderRecord::Steps(vec![32, 64, 128, 256, 512, 1024]);
    // Figures that would regress on a matching ladder are not compared.
    now.period_digits = Some(1.0);
    let j = judge_default(&now, Some(&base), &Claims::default());
    assert_eq!(j.verdict, Verdict::Pass, "{}", j.table());
    assert!(j.rows.iter().any(|r| r.metric.starts_with("ladder")));
    now.best.as_mut().unwrap().digits -= 1.0;
    assert_eq!(
        judge_default(&now, Some(&base), &Claims::default()).verdict,
        Verdict::Regressed
    );
}

#[test]
fn divergence_is_an_error() {
    let mut m = measurement();
    m.diverged = Some(drift::measure::Divergence {
        rung: Some(5),
        t: 2.5,
    });
    let r = CheckRecord::from_measurement(&m);
    let j = judge_default(&r, Some(&record()), &Claims::default());
    assert!(
        matches!(j.verdict, Verdict::Error(ref s) if s.contains("2.5")),
        "{:?}",
        j.verdict
    );
    assert_eq!(j.verdict.to_string(), "error");
}

#[test]
fn verdicts_display_in_lower_case() {
    let names: Vec<String> = [
        Verdict::Pass,
        Verdict::Improved,
        Verdict::New,
        Verdict::Regressed,
        Verdict::ClaimViolated,
        Verdict::Error("x".into()),
    ]
    .iter()
    .map(|v| v.to_string())
    .collect();
    assert_eq!(
        names,
        [
            "pass",
            "improved",
            "new",
            "regressed",
            "claim-violated",
            "error"
        ]
    );
}

#[test]
fn an_empty_checks_map_round_trips() {
    let b = Baseline {
        header: Header::current(),
        checks: BTreeMap::new(),
    };
    assert_eq!(Baseline::parse(&b.to_toml(), path()).unwrap(), b);
}

/// Record mode keeps the record of a check the file no longer plans and
/// names it, with why, in its summary.
#[test]
fn record_summary_names_checks_no_longer_planned() {
    let dir = scratch("unplanned");
    let file = dir.join(FILE);
    let old = baseline_of(&[
        ("rk4/harmonic", &measurement()),
        ("rk4/kepler", &measurement()),
    ]);
    let gone = [drift::spec::Unplanned {
        name: "rk4/kepler".into(),
        reason: "left out by `skip` in [stepper.rk4] at drift.toml:2".into(),
    }];
    let summary = drift::harness::output::record(&file, Some(&old), &[], &gone).unwrap();
    assert!(
        summary.contains("rk4/kepler (left out by `skip` in [stepper.rk4] at drift.toml:2)"),
        "{summary}"
    );
    let written = Baseline::load(&file).unwrap().unwrap();
    assert!(written.checks.contains_key("rk4/kepler"));
    fs::remove_dir_all(&dir).unwrap();
}
