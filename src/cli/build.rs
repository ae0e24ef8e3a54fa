//! Building a package's harness through cargo: `cargo test --no-run` with
//! JSON messages, keeping the executable of the `drift` test target; cargo's
//! own diagnostics go to the terminal as cargo renders them.

use std::io::BufReader;
use std::path::PathBuf;
use std::process::{Command, Stdio};

use cargo_metadata::Message;

use super::discover::{Found, HARNESS_TARGET};

/// Builds the harness of `pkg` with `profile`; the executable, or why not.
pub fn build(pkg: &Found, profile: &str) -> Result<PathBuf, String> {
    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".into());
    let mut child = Command::new(&cargo)
        .args([
            "test",
            "--no-run",
            "--message-format=json-render-diagnostics",
            "--test",
            HARNESS_TARGET,
        ])
        .arg("--manifest-path")
        .arg(&pkg.manifest)
        .args(["--package", &pkg.name, "--profile", profile])
        .stdout(Stdio::piped())
        .stderr(Stdio::inherit())
        .spawn()
        .map_err(|e| format!("cannot run {cargo}: {e}"))?;
    let stdout = child.stdout.take().ok_or("cargo gave no output")?;
    let mut exe = None;
    for message in Message::parse_stream(BufReader::new(stdout)).flatten() {
        if let Message::CompilerArtifact(a) = message {
            let is_harness =
                a.target.name == HARNESS_TARGET && a.target.is_test() && a.profile.test;
            if let (true, Some(path)) = (is_harness, a.executable) {
                exe = Some(path.into_std_path_buf());
            }
        }
    }
    let status = child
        .wait()
        .map_err(|e| format!("cargo did not finish: {e}"))?;
    match (status.success(), exe) {
        (true, Some(path)) => Ok(path),
        (true, None) => Err(format!(
            "cargo built no `{HARNESS_TARGET}` test executable for `{}`",
            pkg.name
        )),
        (false, _) => Err(format!(
            "the harness of `{}` did not build ({status}); cargo's messages are above",
            pkg.name
        )),
    }
}
