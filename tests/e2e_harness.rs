//! End-to-end: the demo crate `fixtures/crane` (a harbour crane's payload
//! swing, with its own RK4 and Verlet steppers) copied to a scratch
//! directory and tested with `cargo test` as its users would, with planted
//! bugs in its steppers and in its declarations.

mod common;

use std::path::Path;
use std::process::{Command, Output};

use common::fixture::{edit, scratch, shared_target, text, ONE_AT_A_TIME};

/// `cargo test --test drift` in `dir`, with a target directory shared by
/// all scenarios (each is then an incremental build of the fixture only).
///
/// Scenarios run one at a time, so that two cargo processes do not contend
/// for the shared target directory and their outputs stay apart in the log.
fn cargo_test(dir: &Path, envs: &[(&str, &str)]) -> Output {
    run_cargo(dir, envs, &[])
}

/// `cargo test --test drift ARGS...`.
fn cargo_test_with(dir: &Path, args: &[&str]) -> Output {
    run_cargo(dir, &[], args)
}

fn run_cargo(dir: &Path, envs: &[(&str, &str)], args: &[&str]) -> Output {
    let _turn = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".into());
    let mut cmd = Command::new(cargo);
    cmd.args(["test", "--offline", "--test", "drift"])
        .current_dir(dir)
        .env("CARGO_TARGET_DIR", shared_target())
        .env_remove("DRIFT_RECORD")
        .env_remove("DRIFT_MEASUREMENTS");
    cmd.args(args);
    for (k, v) in envs {
        cmd.env(k, v);
    }
    cmd.output().expect("cargo runs")
}

/// The failure block libtest-mimic prints for trial `name`.
fn failure_of<'a>(log: &'a str, name: &str) -> &'a str {
    let head = format!("---- {name} ----");
    let start = log
        .find(&head)
        .unwrap_or_else(|| panic!("no failure block for {name} in:\n{log}"));
    let rest = &log[start + head.len()..];
    &rest[..rest
        .find("\n---- ")
        .or_else(|| rest.find("\nfailures:"))
        .unwrap_or(rest.len())]
}

/// Whether libtest-mimic reported trial `name` as passed (names are padded).
fn passed(log: &str, name: &str) -> bool {
    log.lines().any(|l| {
        l.strip_prefix("test ")
            .is_some_and(|r| r.split_whitespace().next() == Some(name) && r.ends_with("... ok"))
    })
}

#[test]
fn recorded_baseline_passes() {
    let s = scratch("passes");
    let out = cargo_test(&s.0, &[]);
    let log = text(&out);
    assert!(out.status.success(), "{log}");
    for check in [
        "rk4/harmonic",
        "rk4/driven",
        "rk4/pendulum:wide-swing",
        "verlet/kepler",
        "verlet/payload_swing",
    ] {
        assert!(passed(&log, check), "{check} missing:\n{log}");
    }
    assert!(
        !log.contains("verlet/damped"),
        "a split stepper is not paired with a velocity-dependent force"
    );
}

#[test]
fn wrong_coefficient_violates_the_order_claim() {
    let s = scratch("coefficient");
    edit(
        &s.0.join("src/lib.rs"),
        "0.5 * h * self.k2[i]; // stage 3 coefficient",
        "0.49 * h * self.k2[i];",
    );
    let out = cargo_test(&s.0, &[]);
    let log = text(&out);
    assert!(!out.status.success(), "{log}");
    let block = failure_of(&log, "rk4/harmonic");
    assert!(block.contains("claim-violated"), "{block}");
    assert!(
        block
            .lines()
            .any(|l| l.starts_with("order") && l.trim_end().ends_with("worse")),
        "{block}"
    );
    assert!(block.contains("claim: order"), "{block}");
}

#[test]
fn wrong_stage_time_shows_only_on_non_autonomous_problems() {
    let s = scratch("stage-time");
    edit(
        &s.0.join("src/lib.rs"),
        "f.rhs(t + 0.5 * h, &self.stage, &mut self.k3); // stage 3 time",
        "f.rhs(t, &self.stage, &mut self.k3);",
    );
    let out = cargo_test(&s.0, &[]);
    let log = text(&out);
    assert!(!out.status.success(), "{log}");
    assert!(
        failure_of(&log, "rk4/driven").contains("claim-violated"),
        "{log}"
    );
    assert!(
        failure_of(&log, "rk4/payload_swing").contains("claim: order"),
        "{log}"
    );
    assert!(
        passed(&log, "rk4/harmonic"),
        "autonomous problems cannot see stage times:\n{log}"
    );
}

#[test]
fn single_precision_update_regresses_the_floor() {
    let s = scratch("f32");
    edit(
        &s.0.join("src/lib.rs"),
        "y[i] += h / 6.0 * (self.k1[i] + 2.0 * self.k2[i] + 2.0 * self.k3[i] + self.k4[i]);",
        "y[i] = (y[i] + h / 6.0 * (self.k1[i] + 2.0 * self.k2[i] + 2.0 * self.k3[i] + self.k4[i])) as f32 as f64;",
    );
    let out = cargo_test(&s.0, &[]);
    let log = text(&out);
    assert!(!out.status.success(), "{log}");
    let block = failure_of(&log, "rk4/harmonic");
    assert!(
        block.contains("regressed") || block.contains("claim-violated"),
        "{block}"
    );
    assert!(
        block
            .lines()
            .any(|l| l.starts_with("best digits") && l.trim_end().ends_with("worse")),
        "{block}"
    );
}

#[test]
fn without_a_baseline_every_check_is_new_and_passes() {
    let s = scratch("new");
    std::fs::remove_file(s.0.join("drift-baseline.toml")).unwrap();
    let out = cargo_test(&s.0, &[]);
    assert!(out.status.success(), "{}", text(&out));
}

#[test]
fn violated_claim_fails_even_with_a_matching_baseline() {
    let s = scratch("claim");
    edit(
        &s.0.join("drift.toml"),
        "order = 2\nenergy = \"bounded\"",
        "order = 3\nenergy = \"bounded\"",
    );
    let out = cargo_test(&s.0, &[]);
    let log = text(&out);
    assert!(!out.status.success(), "{log}");
    assert!(
        failure_of(&log, "verlet/harmonic").contains("claim-violated"),
        "{log}"
    );
}

#[test]
fn record_then_measure_as_json() {
    let s = scratch("record");
    std::fs::remove_file(s.0.join("drift-baseline.toml")).unwrap();
    let out = cargo_test(&s.0, &[("DRIFT_RECORD", "1")]);
    assert!(out.status.success(), "{}", text(&out));
    let written = std::fs::read_to_string(s.0.join("drift-baseline.toml")).unwrap();
    assert!(written.contains("[check.\"rk4/harmonic\"]"), "{written}");
    let json_path = s.0.join("measurements.json");
    let out = cargo_test(&s.0, &[("DRIFT_MEASUREMENTS", json_path.to_str().unwrap())]);
    assert!(out.status.success(), "{}", text(&out));
    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json_path).unwrap()).unwrap();
    assert_eq!(doc["format"], 1);
    let checks = doc["checks"].as_array().unwrap();
    let rk4 = checks.iter().find(|c| c["name"] == "rk4/harmonic").unwrap();
    assert_eq!(rk4["verdict"], "pass");
    assert!((rk4["figures"]["order"].as_f64().unwrap() - 4.0).abs() < 0.1);
    // Re-recording with nothing changed rewrites the file byte for byte.
    let out = cargo_test(&s.0, &[("DRIFT_RECORD", "1")]);
    assert!(out.status.success(), "{}", text(&out));
    assert_eq!(
        std::fs::read_to_string(s.0.join("drift-baseline.toml")).unwrap(),
        written
    );
}

#[test]
fn broken_declaration_names_file_line_and_column() {
    let s = scratch("broken");
    edit(
        &s.0.join("drift.toml"),
        "problem = \"pendulum\"",
        "problem = \"pendulim\"",
    );
    let out = cargo_test(&s.0, &[]);
    let log = text(&out);
    assert!(!out.status.success(), "{log}");
    assert!(log.contains("drift.toml:"), "{log}");
    assert!(
        log.contains("pendulum"),
        "suggests the nearest name:\n{log}"
    );
}

/// A refactor that changes results only in the last bits (the final update
/// summed in another order) must not fail: default slack is far above
/// rounding-level movement.
#[test]
fn last_bit_refactor_passes() {
    let s = scratch("last-bit");
    edit(
        &s.0.join("src/lib.rs"),
        "y[i] += h / 6.0 * (self.k1[i] + 2.0 * self.k2[i] + 2.0 * self.k3[i] + self.k4[i]);",
        "y[i] += (h / 6.0) * ((self.k1[i] + self.k4[i]) + 2.0 * (self.k2[i] + self.k3[i]));",
    );
    let out = cargo_test(&s.0, &[]);
    assert!(out.status.success(), "{}", text(&out));
}

/// The harness takes libtest's flags: `--list`, a filter with `--exact`,
/// `--test-threads`.
#[test]
fn libtest_flags_select_checks() {
    let s = scratch("flags");
    let out = cargo_test_with(&s.0, &["--", "--list"]);
    let log = String::from_utf8_lossy(&out.stdout).to_string();
    assert!(
        out.status.success()
            && log.contains("rk4/harmonic: test")
            && log.contains("verlet/kepler: test"),
        "{log}"
    );
    let out = cargo_test_with(
        &s.0,
        &["--", "--exact", "rk4/harmonic", "--test-threads", "1"],
    );
    let log = text(&out);
    assert!(
        out.status.success() && passed(&log, "rk4/harmonic"),
        "{log}"
    );
    assert!(
        log.contains("1 passed") && log.contains("16 filtered out"),
        "{log}"
    );
}
