//! `cargo drift run --bisect-step`: one commit judged for `git bisect run`.
//! It builds and runs the harnesses as `run` does, then maps the outcome to
//! git's exit codes: [`GOOD`], [`BAD`], [`SKIP`] when the commit cannot take
//! part (it does not build, has no harness, lacks a check, or its
//! `drift.toml` is invalid) and [`UNJUDGED`] when it cannot be judged at
//! all (a crash or a timeout), which stops git instead of being taken for a
//! bad commit.
//!
//! The reference is the baseline each harness reads: the committed one, or
//! the file in `DRIFT_BASELINE` (which bisect sets to the good revision's
//! figures). When `DRIFT_BASELINE` names an existing file, the checks it
//! holds that match the filter are the ones that count: a missing one is a
//! skip, and checks it does not hold are ignored.
//!
//! With `--step-log FILE` the step appends one JSON line, a [`StepRecord`],
//! which is how `cargo drift bisect` learns what each step saw.

use std::collections::BTreeSet;
use std::ffi::OsString;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::git::Repo;
use crate::baseline::Baseline;
use crate::cli::args::{Common, Filtered, RunArgs};
use crate::cli::exec::Mode;
use crate::cli::model::{CheckResult, PackageOutcome, PackageRun};
use crate::cli::verbs::{found, measured, report};
use crate::harness::ENV_BASELINE;

/// The commit is good.
pub const GOOD: u8 = 0;
/// A check failed: the commit is bad.
pub const BAD: u8 = 1;
/// The commit cannot take part; git tests a neighbour instead.
pub const SKIP: u8 = 125;
/// The commit cannot be judged; git stops the bisection.
pub const UNJUDGED: u8 = 128;

/// Whether the command line asks for a bisect step (so that even a usage
/// error gets a bisect exit code).
pub fn asked_for(argv: &[OsString]) -> bool {
    argv.iter().any(|a| a == "--bisect-step")
}

/// A step's verdict.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Verdict {
    /// Every check that counts passed.
    Good,
    /// A check that counts failed.
    Bad,
    /// The commit cannot take part.
    Skip,
    /// The commit cannot be judged.
    Unjudged,
}

impl Verdict {
    /// git's exit code for it.
    pub fn exit_code(self) -> u8 {
        match self {
            Verdict::Good => GOOD,
            Verdict::Bad => BAD,
            Verdict::Skip => SKIP,
            Verdict::Unjudged => UNJUDGED,
        }
    }

    /// `good`, `bad`, `skip`, `unjudged`.
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Good => "good",
            Verdict::Bad => "bad",
            Verdict::Skip => "skip",
            Verdict::Unjudged => "unjudged",
        }
    }
}

/// Why a commit was skipped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum SkipKind {
    /// The harness did not build.
    Build,
    /// No package with a harness (or a broken manifest).
    Harness,
    /// A check that counts is missing, or none matched.
    Check,
    /// `drift.toml` or the baseline is invalid there.
    Config,
}

/// What one step saw: one line of the step log.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StepRecord {
    /// The commit checked out, when in a git checkout.
    pub commit: Option<String>,
    /// The verdict.
    pub verdict: Verdict,
    /// Why a commit was skipped.
    pub skip: Option<SkipKind>,
    /// The verdict in words (which checks failed, what is missing, ...).
    pub reason: String,
    /// cargo build attempts made.
    pub builds: usize,
    /// The checks that count, as the harness reported them.
    pub checks: Vec<CheckResult>,
}

/// Whether a check name passes a libtest-style filter.
///
/// ```
/// use drift::cli::bisect::step::matches;
/// assert!(matches("rk4/harmonic", Some(("rk4/", false))));
/// assert!(!matches("rk4/harmonic", Some(("rk4/", true))));
/// assert!(matches("rk4/harmonic", None));
/// ```
pub fn matches(name: &str, filter: Option<(&str, bool)>) -> bool {
    match filter {
        None => true,
        Some((f, true)) => name == f,
        Some((f, false)) => name.contains(f),
    }
}

fn first_line(text: &str) -> &str {
    text.lines().find(|l| !l.trim().is_empty()).unwrap_or("")
}

fn record(verdict: Verdict, skip: Option<SkipKind>, reason: String) -> StepRecord {
    StepRecord {
        commit: None,
        verdict,
        skip,
        reason,
        builds: 0,
        checks: vec![],
    }
}

/// The reference a step is judged against: the file in `DRIFT_BASELINE`
/// and its checks that match the filter.
#[derive(Debug, Clone, PartialEq)]
pub struct Reference {
    /// The baseline file.
    pub path: PathBuf,
    /// The names of the checks that count.
    pub checks: BTreeSet<String>,
}

/// Judges one package's run (one build): the verdict, why, and the checks
/// that count (all of them, or only the reference's when there is one).
pub fn judge(run: &PackageRun, reference: Option<&Reference>) -> StepRecord {
    let mut judged = judge_checks(run, reference);
    judged.builds = 1;
    judged
}

fn judge_checks(run: &PackageRun, reference: Option<&Reference>) -> StepRecord {
    let skip = |kind, why| record(Verdict::Skip, Some(kind), why);
    let report = match &run.outcome {
        PackageOutcome::Checked(r)
            if reference.is_some_and(|f| r.baseline.as_ref() != Some(&f.path)) =>
        {
            let why = format!(
                "its harness ignores {ENV_BASELINE} (built from a cargo-drift that predates it), \
                 so it cannot be judged against the reference"
            );
            return record(Verdict::Unjudged, None, why);
        }
        PackageOutcome::Checked(r) => r,
        PackageOutcome::BuildFailed(_) => return skip(SkipKind::Build, "does not build".into()),
        PackageOutcome::ConfigError(m) => {
            let why = format!("invalid configuration: {}", first_line(m));
            return skip(SkipKind::Config, why);
        }
        other => {
            let why = first_line(&other.message().unwrap_or_default()).to_string();
            return record(Verdict::Unjudged, None, why);
        }
    };
    let expected = reference.map(|r| &r.checks);
    let counts = |c: &&CheckResult| expected.is_none_or(|e| e.contains(&c.name));
    let checks: Vec<CheckResult> = report.checks.iter().filter(counts).cloned().collect();
    let seen: BTreeSet<&str> = checks.iter().map(|c| c.name.as_str()).collect();
    let missing: Vec<&str> = expected
        .into_iter()
        .flatten()
        .map(String::as_str)
        .filter(|n| !seen.contains(n))
        .collect();
    let failed: Vec<String> = checks
        .iter()
        .filter(|c| c.fails())
        .map(|c| format!("{} {}", c.name, c.verdict))
        .collect();
    let mut judged = if !missing.is_empty() {
        let why = format!("lacks the check(s) {}", missing.join(", "));
        skip(SkipKind::Check, why)
    } else if checks.is_empty() {
        skip(SkipKind::Check, "no check matched the filter".into())
    } else if failed.is_empty() {
        let n = checks.len();
        let what = if n == 1 {
            "check passes"
        } else {
            "checks pass"
        };
        record(Verdict::Good, None, format!("{n} {what}"))
    } else {
        record(Verdict::Bad, None, failed.join(", "))
    };
    judged.checks = checks;
    judged
}

/// Combines the packages' verdicts: bad if any is bad, else unjudged if
/// any is, else skip if any is, else good.
fn combine(parts: Vec<StepRecord>) -> StepRecord {
    let rank = |v: Verdict| match v {
        Verdict::Bad => 3,
        Verdict::Unjudged => 2,
        Verdict::Skip => 1,
        Verdict::Good => 0,
    };
    let worst = parts
        .iter()
        .map(|p| p.verdict)
        .max_by_key(|v| rank(*v))
        .unwrap_or(Verdict::Skip);
    let mut combined = record(worst, None, String::new());
    let mut reasons = Vec::new();
    for part in parts {
        if part.verdict == worst {
            combined.skip = combined.skip.or(part.skip);
            reasons.push(part.reason);
        }
        combined.builds += part.builds;
        combined.checks.extend(part.checks);
    }
    combined.reason = reasons.join("; ");
    combined
}

/// The reference in `DRIFT_BASELINE` with its checks that match `filter`,
/// when that variable names an existing file.
fn reference(filter: &Filtered) -> Result<Option<Reference>, String> {
    let Some(path) = std::env::var_os(ENV_BASELINE).filter(|v| !v.is_empty()) else {
        return Ok(None);
    };
    let path = PathBuf::from(path);
    let baseline = Baseline::load(&path).map_err(|e| e.to_string())?;
    let f = filter.filter.as_deref().map(|f| (f, filter.exact));
    Ok(baseline.map(|b| Reference {
        checks: b.checks.into_keys().filter(|n| matches(n, f)).collect(),
        path,
    }))
}

/// Appends `record` as one JSON line to `log` (the whole file rewritten
/// atomically).
fn append(log: &PathBuf, record: &StepRecord) -> Result<(), String> {
    let mut text = std::fs::read_to_string(log).unwrap_or_default();
    let line = serde_json::to_string(record).map_err(|e| e.to_string())?;
    text.push_str(&line);
    text.push('\n');
    crate::atomic::write_atomic(log, text.as_bytes()).map_err(|e| format!("{}: {e}", log.display()))
}

/// Reads a step log: one [`StepRecord`] per line.
pub fn read_log(log: &Path) -> Result<Vec<StepRecord>, String> {
    let text = match std::fs::read_to_string(log) {
        Ok(t) => t,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(vec![]),
        Err(e) => return Err(format!("{}: {e}", log.display())),
    };
    text.lines()
        .filter(|l| !l.trim().is_empty())
        .map(|l| serde_json::from_str(l).map_err(|e| format!("{}: {e}", log.display())))
        .collect()
}

/// `cargo drift run --bisect-step`: the exit code for git.
pub fn step_verb(common: &Common, args: &RunArgs) -> u8 {
    let filter = &args.filtered;
    let checkout = std::env::current_dir()
        .ok()
        .and_then(|d| Repo::discover(&d).ok());
    let commit = checkout.as_ref().and_then(Repo::head);
    let mut step = match (reference(filter), found(common)) {
        (Err(e), _) => record(
            Verdict::Unjudged,
            None,
            format!("cannot read the reference in {ENV_BASELINE}: {e}"),
        ),
        (Ok(_), Err(e)) => record(
            Verdict::Skip,
            Some(SkipKind::Harness),
            format!("no harness to run: {}", first_line(&e.0)),
        ),
        (Ok(reference), Ok(pkgs)) => {
            let runs = measured(&pkgs, common, filter, Mode::Run);
            // The table (or JSON) for whoever reads git's output.
            let _ = report(&runs, common);
            combine(runs.iter().map(|r| judge(r, reference.as_ref())).collect())
        }
    };
    step.commit = commit;
    let at = step.commit.as_deref().map_or("", |c| &c[..c.len().min(10)]);
    eprintln!(
        "drift: bisect step {at}: {} ({})",
        step.verdict.name(),
        step.reason
    );
    if let Some(log) = &args.step_log {
        if let Err(e) = append(log, &step) {
            eprintln!("error: cannot write the step log: {e}");
            return UNJUDGED;
        }
    }
    // In bisect's own worktree, what the build changed goes, so that git
    // can check out the next commit; a user's checkout is never reset.
    if let Some(Err(e)) = checkout.map(|c| c.discard_changes()) {
        eprintln!("error: {e}");
        return UNJUDGED;
    }
    step.verdict.exit_code()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cli::model::HarnessReport;

    fn check(name: &str, verdict: &str) -> CheckResult {
        CheckResult {
            name: name.into(),
            stepper: "rk4".into(),
            problem: "harmonic".into(),
            verdict: verdict.into(),
            error: None,
            rows: vec![],
            figures: None,
            claimed: Default::default(),
            claims: vec![],
            detail: None,
        }
    }

    fn run(outcome: PackageOutcome) -> PackageRun {
        PackageRun {
            package: "crane".into(),
            root: ".".into(),
            outcome,
        }
    }

    fn checked(checks: Vec<CheckResult>) -> PackageRun {
        run(PackageOutcome::Checked(Box::new(HarnessReport {
            format: 1,
            tool: "0.1.0".into(),
            environment: crate::baseline::Header::current(),
            baseline: Some("ref.toml".into()),
            checks,
        })))
    }

    fn verdict_of(r: &PackageRun, reference: Option<&Reference>) -> (Verdict, u8) {
        let v = judge(r, reference).verdict;
        (v, v.exit_code())
    }

    #[test]
    fn outcomes_map_to_git_codes() {
        let pass = checked(vec![check("a/b", "pass"), check("a/c", "new")]);
        assert_eq!(verdict_of(&pass, None), (Verdict::Good, 0));
        for failing in ["regressed", "claim-violated", "error"] {
            let bad = checked(vec![check("a/b", "pass"), check("a/c", failing)]);
            assert_eq!(verdict_of(&bad, None), (Verdict::Bad, 1), "{failing}");
        }
        let built = run(PackageOutcome::BuildFailed("x".into()));
        assert_eq!(verdict_of(&built, None), (Verdict::Skip, 125));
        let config = run(PackageOutcome::ConfigError("drift.toml:1:1".into()));
        assert_eq!(verdict_of(&config, None), (Verdict::Skip, 125));
        for broken in [
            PackageOutcome::Crashed("segfault".into()),
            PackageOutcome::TimedOut(3),
        ] {
            let r = run(broken);
            assert_eq!(verdict_of(&r, None), (Verdict::Unjudged, 128));
        }
        assert_eq!(verdict_of(&checked(vec![]), None), (Verdict::Skip, 125));
    }

    #[test]
    fn only_the_reference_checks_count() {
        let expected = Reference {
            path: "ref.toml".into(),
            checks: ["a/b".to_string()].into(),
        };
        // A check the reference does not hold fails: ignored.
        let other = checked(vec![check("a/b", "pass"), check("a/z", "claim-violated")]);
        assert_eq!(verdict_of(&other, Some(&expected)), (Verdict::Good, 0));
        // The reference's check is missing: skip, not good.
        let missing = checked(vec![check("a/z", "pass")]);
        let r = judge(&missing, Some(&expected));
        assert_eq!((r.verdict, r.skip), (Verdict::Skip, Some(SkipKind::Check)));
        assert!(r.reason.contains("a/b"), "{}", r.reason);
        // A harness that judged against another file cannot be judged.
        let elsewhere = Reference {
            path: "other.toml".into(),
            ..expected
        };
        assert_eq!(
            verdict_of(&other, Some(&elsewhere)),
            (Verdict::Unjudged, 128)
        );
    }

    #[test]
    fn a_bad_package_outweighs_a_skipped_one() {
        let parts = vec![
            judge(&run(PackageOutcome::BuildFailed("x".into())), None),
            judge(&checked(vec![check("a/b", "regressed")]), None),
        ];
        let r = combine(parts);
        assert_eq!((r.verdict, r.builds), (Verdict::Bad, 2));
        assert!(r.reason.contains("a/b regressed"), "{}", r.reason);
    }
}
