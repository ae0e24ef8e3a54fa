//! What the subcommand knows after running harnesses: the harness's JSON
//! document read back as types ([`HarnessReport`]), one [`PackageRun`] per
//! package with how it ended, and the exit code of the whole run.

use std::path::PathBuf;

use serde::{Deserialize, Serialize};

use crate::baseline::Header;
use crate::claims::Claims;
use crate::harness::detail::Detail;

/// One row of a check's table, as the harness wrote it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Row {
    /// The figure, e.g. `order`.
    pub metric: String,
    /// Recorded value.
    pub baseline: Option<f64>,
    /// Measured value.
    pub now: Option<f64>,
    /// The limit in words.
    pub allowed: String,
    /// `ok`, `better`, `worse` or `violated`.
    pub status: String,
}

/// One check as the harness reported it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CheckResult {
    /// `stepper/problem[:tag]`.
    pub name: String,
    /// The stepper.
    pub stepper: String,
    /// The problem.
    pub problem: String,
    /// `pass`, `improved`, `new`, `regressed`, `claim-violated` or `error`.
    pub verdict: String,
    /// The error message when the verdict is `error`.
    pub error: Option<String>,
    /// The rows worth showing.
    pub rows: Vec<Row>,
    /// Every figure (the baseline record's keys), when measured.
    pub figures: Option<serde_json::Value>,
    /// The stepper's claims from drift.toml.
    #[serde(default)]
    pub claimed: Claims,
    /// Every claim row, holding or not.
    #[serde(default)]
    pub claims: Vec<Row>,
    /// The measurement behind the figures (read from the harness for
    /// reports; left out of `--format json`, where it would dwarf the rest).
    #[serde(default, skip_serializing)]
    pub detail: Option<Detail>,
}

impl CheckResult {
    /// Whether the verdict fails the run.
    ///
    /// ```
    /// let mut c = drift::cli::model::CheckResult { name: "a/b".into(), stepper: "a".into(),
    ///     problem: "b".into(), verdict: "new".into(), error: None, rows: vec![], figures: None,
    ///     claimed: Default::default(), claims: vec![], detail: None };
    /// assert!(!c.fails());
    /// c.verdict = "regressed".into();
    /// assert!(c.fails());
    /// ```
    pub fn fails(&self) -> bool {
        matches!(
            self.verdict.as_str(),
            "regressed" | "claim-violated" | "error"
        )
    }
}

/// The harness's JSON document (format 1).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct HarnessReport {
    /// Layout version.
    pub format: u32,
    /// cargo-drift version of the harness.
    pub tool: String,
    /// Where it was measured.
    pub environment: Header,
    /// The baseline file it judged against (absent from harnesses older
    /// than `DRIFT_BASELINE`).
    #[serde(default)]
    pub baseline: Option<PathBuf>,
    /// The checks that ran.
    pub checks: Vec<CheckResult>,
}

/// How one package's run ended.
#[derive(Clone, Debug, PartialEq)]
pub enum PackageOutcome {
    /// The harness ran and reported.
    Checked(Box<HarnessReport>),
    /// Its harness did not build (cargo's diagnostics were shown).
    BuildFailed(String),
    /// Its harness crashed or produced no report.
    Crashed(String),
    /// Its harness ran past the time limit and was stopped.
    TimedOut(u64),
    /// Its `drift.toml` or baseline is invalid (the message says where).
    ConfigError(String),
}

impl PackageOutcome {
    /// Short status word: `checked`, `build-failed`, `crashed`, `timed-out`,
    /// `config-error`.
    pub fn status(&self) -> &'static str {
        match self {
            PackageOutcome::Checked(_) => "checked",
            PackageOutcome::BuildFailed(_) => "build-failed",
            PackageOutcome::Crashed(_) => "crashed",
            PackageOutcome::TimedOut(_) => "timed-out",
            PackageOutcome::ConfigError(_) => "config-error",
        }
    }

    /// The message of a package that did not report.
    pub fn message(&self) -> Option<String> {
        match self {
            PackageOutcome::Checked(_) => None,
            PackageOutcome::BuildFailed(m)
            | PackageOutcome::Crashed(m)
            | PackageOutcome::ConfigError(m) => Some(m.clone()),
            PackageOutcome::TimedOut(s) => {
                Some(format!("the harness ran longer than {s} s and was stopped"))
            }
        }
    }
}

/// One package's run.
#[derive(Clone, Debug, PartialEq)]
pub struct PackageRun {
    /// Package name.
    pub package: String,
    /// Package root (where `drift.toml` lives).
    pub root: PathBuf,
    /// How it ended.
    pub outcome: PackageOutcome,
}

/// Exit codes of `cargo drift` (also in `--help` and README).
pub mod exit {
    /// Every check passed.
    pub const PASS: u8 = 0;
    /// A check regressed, violated a claim or errored.
    pub const FAILED: u8 = 1;
    /// Usage or configuration error.
    pub const CONFIG: u8 = 2;
    /// A harness failed to build, crashed or timed out.
    pub const BROKEN: u8 = 3;
}

/// The exit code of a run: 3 if any harness failed to build, crashed or
/// timed out; else 2 if any configuration was invalid; else 1 if any check
/// failed; else 0.
///
/// ```
/// use drift::cli::model::{exit_code, PackageOutcome, PackageRun};
/// let broken = PackageRun { package: "a".into(), root: ".".into(), outcome: PackageOutcome::Crashed("x".into()) };
/// assert_eq!(exit_code(&[broken]), 3);
/// assert_eq!(exit_code(&[]), 0);
/// ```
pub fn exit_code(runs: &[PackageRun]) -> u8 {
    let worst = |r: &PackageRun| match &r.outcome {
        PackageOutcome::BuildFailed(_)
        | PackageOutcome::Crashed(_)
        | PackageOutcome::TimedOut(_) => exit::BROKEN,
        PackageOutcome::ConfigError(_) => exit::CONFIG,
        PackageOutcome::Checked(rep) if rep.checks.iter().any(CheckResult::fails) => exit::FAILED,
        PackageOutcome::Checked(_) => exit::PASS,
    };
    runs.iter().map(worst).max().unwrap_or(exit::PASS)
}
