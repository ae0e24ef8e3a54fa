//! `cargo drift init` as a library function: the manifest keeps its
//! comments and layout, nothing is overwritten, conflicts are errors and
//! change nothing.

mod common;

use std::path::{Path, PathBuf};

use common::fixture::{ours, Scratch};
use drift::cli::init::{init, DependencySpec, InitError, InitOptions};

fn package(name: &str, manifest: &str) -> Scratch {
    let dir: PathBuf = ours()
        .join("target")
        .join("e2e")
        .join(format!("init-{name}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("Cargo.toml"), manifest).unwrap();
    Scratch(dir)
}

fn options() -> InitOptions {
    InitOptions {
        stepper: "rk4".into(),
        dependency: DependencySpec::Version("0.1.0".into()),
    }
}

fn read(p: &Path) -> String {
    std::fs::read_to_string(p).unwrap()
}

const MANIFEST: &str = "# The crane simulator.\n[package]\nname = \"crane-sim\"   # keep this comment\nversion = \"0.3.0\"\nedition = \"2021\"\n\n[profile.release]\n# ship it fast\nlto = true\n\n[dev-dependencies]\nproptest = \"1\"\n";

#[test]
fn manifest_keeps_its_lines_and_gains_the_entries() {
    let s = package("layout", MANIFEST);
    let report = init(&s.0, &options()).unwrap();
    let after = read(&s.0.join("Cargo.toml"));
    for line in MANIFEST.lines() {
        assert!(after.lines().any(|l| l == line), "lost {line:?}:\n{after}");
    }
    let parsed: toml::Table = after.parse().unwrap();
    assert_eq!(
        parsed["dev-dependencies"]["cargo-drift"].as_str(),
        Some("0.1.0")
    );
    assert_eq!(parsed["test"][0]["name"].as_str(), Some("drift"));
    assert_eq!(parsed["test"][0]["harness"].as_bool(), Some(false));
    assert_eq!(parsed["profile"]["test"]["opt-level"].as_integer(), Some(3));
    assert_eq!(report.created.len(), 2);
    assert!(read(&s.0.join("tests/drift.rs")).contains(".stepper(\"rk4\", Euler::default)"));
    let declarations: toml::Table = read(&s.0.join("drift.toml"))
        .parse()
        .expect("drift.toml template is valid TOML");
    assert!(declarations["stepper"].get("rk4").is_some());
}

#[test]
fn second_run_refuses_and_changes_nothing() {
    let s = package("twice", MANIFEST);
    init(&s.0, &options()).unwrap();
    let before: Vec<String> = ["Cargo.toml", "drift.toml", "tests/drift.rs"]
        .iter()
        .map(|f| read(&s.0.join(f)))
        .collect();
    let err = init(&s.0, &options()).unwrap_err();
    assert!(matches!(err, InitError::Exists(_)), "{err}");
    let after: Vec<String> = ["Cargo.toml", "drift.toml", "tests/drift.rs"]
        .iter()
        .map(|f| read(&s.0.join(f)))
        .collect();
    assert_eq!(before, after);
}

#[test]
fn standard_harness_entry_is_a_conflict() {
    let m = format!("{MANIFEST}\n[[test]]\nname = \"drift\"\n");
    let s = package("conflict", &m);
    let err = init(&s.0, &options()).unwrap_err();
    assert!(matches!(err, InitError::HarnessTrue(_)), "{err}");
    assert!(err.to_string().contains("harness = false"));
    assert_eq!(read(&s.0.join("Cargo.toml")), m);
    assert!(!s.0.join("drift.toml").exists());
}

#[test]
fn virtual_workspace_is_refused() {
    let s = package("virtual", "[workspace]\nmembers = [\"a\"]\n");
    let err = init(&s.0, &options()).unwrap_err();
    assert!(matches!(err, InitError::Virtual(_)), "{err}");
}

#[test]
fn existing_test_profile_is_kept() {
    let m = format!("{MANIFEST}\n[profile.test]\nopt-level = 1\n");
    let s = package("profile", &m);
    init(&s.0, &options()).unwrap();
    let parsed: toml::Table = read(&s.0.join("Cargo.toml")).parse().unwrap();
    assert_eq!(parsed["profile"]["test"]["opt-level"].as_integer(), Some(1));
}
