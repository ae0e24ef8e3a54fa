//! Running a built harness: in the package root with the environment cargo
//! would give it, in one of the harness's modes, under a time limit; its
//! JSON document read back, or how it failed.

use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use super::discover::Found;
use super::model::{HarnessReport, PackageOutcome};
use super::progress::Progress;
use crate::harness::{ENV_FILE, ENV_MEASUREMENTS, ENV_PLAN, ENV_RECORD};

/// Which harness mode to run.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Mode {
    /// Measure and judge.
    Run,
    /// Measure and write the baseline.
    Record,
    /// Write the plan only.
    Plan,
}

/// How to run the harness.
pub struct Invocation<'a> {
    /// The package.
    pub pkg: &'a Found,
    /// The harness executable.
    pub exe: &'a Path,
    /// The mode.
    pub mode: Mode,
    /// Check-name filter and whether it is exact.
    pub filter: Option<(&'a str, bool)>,
    /// Parallel checks.
    pub jobs: Option<usize>,
    /// Time limit.
    pub timeout: Duration,
}

/// What came back.
pub struct Ran {
    /// The harness's JSON document, when it wrote one.
    pub json: Option<String>,
    /// How it ended, when not with a document.
    pub failure: Option<PackageOutcome>,
}

fn scratch_file(pkg: &Found, what: &str) -> PathBuf {
    std::env::temp_dir().join(format!(
        "cargo-drift-{}-{}-{what}.json",
        std::process::id(),
        pkg.name
    ))
}

fn drain(mut r: impl Read + Send + 'static) -> std::thread::JoinHandle<String> {
    std::thread::spawn(move || {
        let mut s = String::new();
        let _ = r.read_to_string(&mut s);
        s
    })
}

/// Waits for `child` until `timeout`, ticking `progress`; `None` on timeout
/// (the child is killed).
fn wait(
    child: &mut Child,
    timeout: Duration,
    progress: &mut Progress,
) -> Option<std::process::ExitStatus> {
    let start = Instant::now();
    loop {
        match child.try_wait() {
            Ok(Some(status)) => return Some(status),
            Ok(None) if start.elapsed() >= timeout => {
                let _ = child.kill();
                let _ = child.wait();
                return None;
            }
            Ok(None) => {
                progress.tick(start.elapsed());
                std::thread::sleep(Duration::from_millis(50));
            }
            Err(_) => return None,
        }
    }
}

/// The last lines of a harness's output, for a failure message.
fn tail(text: &str, lines: usize) -> String {
    let all: Vec<&str> = text.lines().collect();
    all[all.len().saturating_sub(lines)..].join("\n")
}

/// Runs the harness once.
pub fn run(inv: &Invocation, progress: &mut Progress) -> Ran {
    let out = scratch_file(
        inv.pkg,
        if inv.mode == Mode::Plan {
            "plan"
        } else {
            "measurements"
        },
    );
    let _ = std::fs::remove_file(&out);
    let mut cmd = Command::new(inv.exe);
    cmd.current_dir(&inv.pkg.root)
        .env("CARGO_MANIFEST_DIR", &inv.pkg.root)
        .env(ENV_FILE, &inv.pkg.file)
        .env_remove(ENV_RECORD)
        .env_remove(ENV_PLAN)
        .env_remove(ENV_MEASUREMENTS)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    match inv.mode {
        Mode::Plan => cmd.env(ENV_PLAN, &out),
        Mode::Record => cmd.env(ENV_RECORD, "1").env(ENV_MEASUREMENTS, &out),
        Mode::Run => cmd.env(ENV_MEASUREMENTS, &out),
    };
    if let Some((f, exact)) = inv.filter {
        cmd.arg(f);
        if exact {
            cmd.arg("--exact");
        }
    }
    if let Some(j) = inv.jobs {
        cmd.args(["--test-threads", &j.max(1).to_string()]);
    }
    let mut child = match cmd.spawn() {
        Ok(c) => c,
        Err(e) => {
            let msg = format!("cannot start {}: {e}", inv.exe.display());
            return Ran {
                json: None,
                failure: Some(PackageOutcome::Crashed(msg)),
            };
        }
    };
    let stdout = child.stdout.take().map(drain);
    let stderr = child.stderr.take().map(drain);
    let status = wait(&mut child, inv.timeout, progress);
    progress.clear();
    let join = |h: Option<std::thread::JoinHandle<String>>| {
        h.and_then(|h| h.join().ok()).unwrap_or_default()
    };
    let (out_text, err_text) = (join(stdout), join(stderr));
    let json = std::fs::read_to_string(&out).ok();
    let _ = std::fs::remove_file(&out);
    let failure = match status {
        None => Some(PackageOutcome::TimedOut(inv.timeout.as_secs())),
        Some(s) if s.code() == Some(2) => Some(PackageOutcome::ConfigError(tail(&err_text, 20))),
        Some(s) if json.is_some() && (s.success() || s.code() == Some(101)) => None,
        Some(s) => Some(PackageOutcome::Crashed(format!(
            "the harness exited with {s} without a report; its last output:\n{}",
            tail(&format!("{out_text}{err_text}"), 20)
        ))),
    };
    if inv.mode == Mode::Record {
        // The harness's summary of what it recorded.
        for line in err_text
            .lines()
            .filter(|l| l.starts_with("drift: recorded"))
        {
            eprintln!("{line}");
        }
    }
    Ran { json, failure }
}

/// Reads a harness report, or says why it cannot be read.
pub fn parse_report(json: &str) -> Result<HarnessReport, String> {
    serde_json::from_str(json)
        .map_err(|e| format!("the harness wrote a report this cargo-drift cannot read: {e}"))
}
