//! Scratch copies of the demo crate `fixtures/crane` for end-to-end tests:
//! copied under `target/e2e/`, pointed at this checkout, pinned to our
//! `Cargo.lock` so no network is needed, removed on drop.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// A scratch copy of the fixture, removed on drop.
pub struct Scratch(pub PathBuf);

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

pub fn ours() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

pub fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for entry in std::fs::read_dir(from).unwrap() {
        let entry = entry.unwrap();
        let dest = to.join(entry.file_name());
        if entry.file_type().unwrap().is_dir() {
            if entry.file_name() != "target" {
                copy_dir(&entry.path(), &dest);
            }
        } else {
            std::fs::copy(entry.path(), &dest).unwrap();
        }
    }
}

/// Copies the fixture to `target/e2e/<name>`, points its dependency at this
/// checkout and pins the dependency versions to ours (no network needed).
pub fn scratch(name: &str) -> Scratch {
    let dir = ours().join("target").join("e2e").join(name);
    let _ = std::fs::remove_dir_all(&dir);
    copy_dir(&ours().join("fixtures/crane"), &dir);
    // A package name of its own per scenario gives each its own build
    // artefacts in the shared target directory.
    let package = format!("name = \"harbour-crane-{name}\"");
    edit(
        &dir.join("Cargo.toml"),
        "name = \"harbour-crane\"",
        &package,
    );
    edit(
        &dir.join("Cargo.toml"),
        "path = \"../..\"",
        &format!("path = {:?}", ours().display().to_string()),
    );
    std::fs::copy(ours().join("Cargo.lock"), dir.join("Cargo.lock")).unwrap();
    Scratch(dir)
}

/// Replaces `from` (which must occur) by `to` in the file.
pub fn edit(file: &Path, from: &str, to: &str) {
    let text = std::fs::read_to_string(file).unwrap();
    assert!(
        text.contains(from),
        "{} does not contain {from:?}",
        file.display()
    );
    std::fs::write(file, text.replacen(from, to, 1)).unwrap();
}

/// Standard output and standard error of a finished command, together.
pub fn text(out: &Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    )
}

/// A mutex that end-to-end scenarios hold while they run cargo, so that two
/// cargo processes do not contend for the shared target directory and each
/// log is its own.
pub static ONE_AT_A_TIME: std::sync::Mutex<()> = std::sync::Mutex::new(());

/// The target directory all end-to-end builds share.
pub fn shared_target() -> PathBuf {
    ours().join("target").join("e2e-target")
}

/// `cargo-drift drift ARGS...` (as cargo runs it) in `dir`.
/// Unless `args` choose a profile, the harnesses are built in the test
/// profile, as the harness scenarios build them, so that every end-to-end
/// test shares one build of the dependencies in the shared target directory.
pub fn cargo_drift(dir: &Path, args: &[&str]) -> Output {
    let _turn = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
    let profile: &[&str] = if args.contains(&"--profile") {
        &[]
    } else {
        &["--profile", "test"]
    };
    Command::new(env!("CARGO_BIN_EXE_cargo-drift"))
        .arg("drift")
        .args(args)
        .args(profile)
        .current_dir(dir)
        .env("CARGO_TARGET_DIR", shared_target())
        .env("CARGO_NET_OFFLINE", "true")
        .env_remove("DRIFT_RECORD")
        .env_remove("DRIFT_MEASUREMENTS")
        .env("NO_COLOR", "1")
        .output()
        .expect("cargo-drift runs")
}

/// The exit code of a finished command (-1 when killed by a signal).
pub fn code(out: &Output) -> i32 {
    out.status.code().unwrap_or(-1)
}
