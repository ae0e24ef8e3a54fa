//! End-to-end tests of the `cargo drift` binary on scratch copies of the
//! demo crate: a two-package workspace, record then run, a planted
//! regression (exit 1, JSON and JUnit content), a broken declaration file
//! (exit 2 with file, line and column), a harness that does not compile
//! (exit 3), `init` on a fresh crate followed by `record` and `run`, and a
//! snapshot of `--help`.

mod common;

use std::path::PathBuf;
use std::process::Command;

use common::fixture::{cargo_drift as drift, code, copy_dir, edit, ours, scratch, text, Scratch};

/// A workspace of two copies of the demo crate (`crane-a`, `crane-b`).
fn workspace(name: &str) -> Scratch {
    let root = ours().join("target").join("e2e").join(name);
    let _ = std::fs::remove_dir_all(&root);
    for member in ["crane-a", "crane-b"] {
        let dir = root.join(member);
        copy_dir(&ours().join("fixtures/crane"), &dir);
        let manifest = dir.join("Cargo.toml");
        edit(
            &manifest,
            "name = \"harbour-crane\"",
            &format!("name = \"{name}-{member}\""),
        );
        edit(
            &manifest,
            "path = \"../..\"",
            &format!("path = {:?}", ours().display().to_string()),
        );
        edit(
            &manifest,
            "# A crate of its own, not a member of the cargo-drift package.\n[workspace]\n",
            "",
        );
        // Profiles belong to the workspace root.
        edit(&manifest, "[profile.test]\nopt-level = 3\n", "");
    }
    std::fs::write(
        root.join("Cargo.toml"),
        "[workspace]\nmembers = [\"crane-a\", \"crane-b\"]\nresolver = \"2\"\n\n[profile.test]\nopt-level = 3\n",
    )
    .unwrap();
    std::fs::copy(ours().join("Cargo.lock"), root.join("Cargo.lock")).unwrap();
    Scratch(root)
}

#[test]
fn workspace_record_then_run_passes_and_a_regression_fails() {
    let ws = workspace("cli-ws");
    let out = drift(&ws.0, &["record", "--workspace"]);
    assert_eq!(code(&out), 0, "{}", text(&out));
    assert!(ws.0.join("crane-b/drift-baseline.toml").is_file());

    let out = drift(&ws.0, &["--workspace"]);
    assert_eq!(code(&out), 0, "{}", text(&out));
    let log = text(&out);
    assert!(
        log.contains("cli-ws-crane-a") && log.contains("cli-ws-crane-b"),
        "{log}"
    );

    edit(
        &ws.0.join("crane-b/src/lib.rs"),
        "0.5 * h * self.k2[i]; // stage 3 coefficient",
        "0.49 * h * self.k2[i];",
    );
    let junit = ws.0.join("report.xml");
    let out = drift(
        &ws.0,
        &[
            "run",
            "--workspace",
            "--format",
            "json",
            "--junit",
            junit.to_str().unwrap(),
        ],
    );
    assert_eq!(code(&out), 1, "{}", text(&out));
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).expect("JSON on stdout");
    assert_eq!(doc["format"], 1);
    assert_eq!(doc["exit_code"], 1);
    let pkgs = doc["packages"].as_array().unwrap();
    let b = pkgs.iter().find(|p| p["name"] == "cli-ws-crane-b").unwrap();
    let rk4 = b["checks"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == "rk4/harmonic")
        .unwrap();
    assert_eq!(rk4["verdict"], "claim-violated");
    let a = pkgs.iter().find(|p| p["name"] == "cli-ws-crane-a").unwrap();
    assert!(a["checks"]
        .as_array()
        .unwrap()
        .iter()
        .all(|c| c["verdict"] == "pass"));
    let xml = std::fs::read_to_string(&junit).unwrap();
    assert!(
        xml.contains("<testcase") && xml.contains("rk4/harmonic") && xml.contains("<failure"),
        "{xml}"
    );
}

#[test]
fn broken_declaration_exits_2_with_its_position() {
    let s = scratch("cli-broken");
    edit(
        &s.0.join("drift.toml"),
        "problem = \"pendulum\"",
        "problem = \"pendulim\"",
    );
    let out = drift(&s.0, &[]);
    assert_eq!(code(&out), 2, "{}", text(&out));
    let log = text(&out);
    assert!(log.contains("drift.toml:19:11"), "{log}");
}

#[test]
fn harness_that_does_not_compile_exits_3() {
    let s = scratch("cli-nocompile");
    edit(&s.0.join("tests/drift.rs"), ".main();", ".main() +;");
    let out = drift(&s.0, &[]);
    assert_eq!(code(&out), 3, "{}", text(&out));
    assert!(text(&out).contains("did not build"), "{}", text(&out));
}

#[test]
fn list_shows_checks_and_their_records() {
    let s = scratch("cli-list");
    let out = drift(&s.0, &["list"]);
    assert_eq!(code(&out), 0, "{}", text(&out));
    let log = String::from_utf8_lossy(&out.stdout).to_string();
    let line = log
        .lines()
        .find(|l| l.trim_start().starts_with("rk4/harmonic"))
        .unwrap_or_else(|| panic!("{log}"));
    assert!(
        line.contains("stepper") && line.contains("yes") && line.contains("recorded"),
        "{line}"
    );
}

#[test]
fn nothing_to_check_points_to_init() {
    let dir = ours().join("target").join("e2e").join("cli-empty");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(dir.join("src")).unwrap();
    std::fs::write(
        dir.join("Cargo.toml"),
        "[package]\nname = \"empty\"\nversion = \"0.1.0\"\nedition = \"2021\"\n[workspace]\n",
    )
    .unwrap();
    std::fs::write(dir.join("src/lib.rs"), "").unwrap();
    let _s = Scratch(dir.clone());
    let out = drift(&dir, &[]);
    assert_eq!(code(&out), 2, "{}", text(&out));
    assert!(text(&out).contains("cargo drift init"), "{}", text(&out));
}

#[test]
fn init_then_record_then_run_on_a_fresh_crate() {
    let dir: PathBuf = ours().join("target").join("e2e").join("cli-fresh");
    let _ = std::fs::remove_dir_all(&dir);
    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".into());
    let made = Command::new(cargo)
        .args(["new", "--lib", "--vcs", "none", "--name", "fresh-sim"])
        .arg(&dir)
        .output()
        .unwrap();
    assert!(made.status.success(), "{}", text(&made));
    // A standalone crate, not a member of any workspace above it.
    let manifest = dir.join("Cargo.toml");
    let mut m = std::fs::read_to_string(&manifest).unwrap();
    m.push_str("\n[workspace]\n");
    std::fs::write(&manifest, m).unwrap();
    std::fs::copy(ours().join("Cargo.lock"), dir.join("Cargo.lock")).unwrap();
    let _s = Scratch(dir.clone());
    let out = drift(&dir, &["init", "--drift-path", ours().to_str().unwrap()]);
    assert_eq!(code(&out), 0, "{}", text(&out));
    assert!(dir.join("tests/drift.rs").is_file() && dir.join("drift.toml").is_file());
    let out = drift(&dir, &["init", "--drift-path", ours().to_str().unwrap()]);
    assert_eq!(code(&out), 2, "init refuses to overwrite: {}", text(&out));
    let out = drift(&dir, &["record"]);
    assert_eq!(code(&out), 0, "{}", text(&out));
    assert!(dir.join("drift-baseline.toml").is_file());
    let out = drift(&dir, &[]);
    assert_eq!(code(&out), 0, "{}", text(&out));
}

/// `cargo drift --help` as committed in tests/snapshots/help.txt; after a
/// deliberate change, regenerate it with `DRIFT_UPDATE_SNAPSHOTS=1`.
#[test]
fn help_snapshot() {
    let out = Command::new(env!("CARGO_BIN_EXE_cargo-drift"))
        .args(["drift", "--help"])
        .env("NO_COLOR", "1")
        .output()
        .unwrap();
    assert_eq!(code(&out), 0);
    let help = String::from_utf8_lossy(&out.stdout).to_string();
    let path = ours().join("tests/snapshots/help.txt");
    if std::env::var_os("DRIFT_UPDATE_SNAPSHOTS").is_some() {
        std::fs::write(&path, &help).unwrap();
    }
    let expected = std::fs::read_to_string(&path).expect("tests/snapshots/help.txt");
    assert_eq!(
        help, expected,
        "--help changed; review and regenerate the snapshot"
    );
    for word in [
        "run",
        "record",
        "list",
        "init",
        "--manifest-path",
        "--workspace",
        "--junit",
        "Exit codes",
    ] {
        assert!(help.contains(word), "{word} missing from --help");
    }
}

#[test]
fn usage_error_exits_2() {
    let out = Command::new(env!("CARGO_BIN_EXE_cargo-drift"))
        .args(["drift", "--no-such-flag"])
        .output()
        .unwrap();
    assert_eq!(code(&out), 2);
}

#[test]
fn hung_harness_is_stopped_at_the_time_limit_and_exits_3() {
    let s = scratch("cli-hang");
    edit(
        &s.0.join("tests/drift.rs"),
        "fn main() {",
        "fn main() {\n    std::thread::sleep(std::time::Duration::from_secs(600));",
    );
    let started = std::time::Instant::now();
    let out = drift(&s.0, &["--timeout", "3"]);
    assert_eq!(code(&out), 3, "{}", text(&out));
    assert!(text(&out).contains("timed-out"), "{}", text(&out));
    assert!(started.elapsed().as_secs() < 300, "the limit stopped it");
}
