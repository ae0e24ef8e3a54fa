//! `cargo drift bisect`: the first commit between a good and a bad revision
//! where a check regressed, found by git's own bisection in a temporary
//! worktree, so the user's checkout, index, stash and branches are never
//! touched.
//!
//! The steps: resolve the revisions ([`git`]); open a [`session::Session`]
//! (scratch directory and detached worktree at the good revision); take the
//! reference ([`reference`]): the good revision measured with no baseline,
//! or the baseline committed there; judge the bad revision against it
//! (no regression: stop there); then `git bisect run` with
//! `cargo drift run --bisect-step` ([`step`]) as the test, every step
//! judged against the reference through `DRIFT_BASELINE` and built into one
//! shared target directory. Each step appends what it saw to the step log,
//! from which the [`report`] is made. Ctrl-C stops the children
//! ([`interrupt`]) and the session is removed on every way out.

pub mod git;
pub mod interrupt;
pub mod reference;
pub mod report;
pub mod session;
pub mod step;

use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::process::Command;

use clap::{Args, ValueEnum};

use super::args::{Common, Filtered, Format};
use super::discover::{discover, metadata, Found};
use super::verbs::Fatal;
use crate::harness::ENV_BASELINE;
use git::{Commit, Conclusion, Repo};
use interrupt::{run_guarded, Interrupted};
use report::{BisectReport, Moved, Outcome, Tested};
use session::Session;
use step::{SkipKind, StepRecord, Verdict};

/// Options of `bisect`.
#[derive(Debug, Args)]
pub struct BisectArgs {
    /// The checks to follow (few checks make each step fast).
    #[command(flatten)]
    pub filtered: Filtered,
    /// A revision where the checks were good (commit, tag or branch).
    #[arg(long, value_name = "REV")]
    pub good: String,
    /// A later revision where a check is worse.
    #[arg(long, value_name = "REV", default_value = "HEAD")]
    pub bad: String,
    /// What every commit is judged against: the good revision measured
    /// afresh, or the baseline file committed at the good revision.
    #[arg(long, value_enum, default_value_t = Against::Measured)]
    pub against: Against,
    /// Target directory every step builds into (default: drift-bisect in
    /// the workspace's target directory).
    #[arg(long, value_name = "DIR")]
    pub target_dir: Option<PathBuf>,
}

/// Where the reference figures come from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Against {
    /// Measure the good revision (a baseline changed along the way does
    /// not mislead).
    Measured,
    /// The baseline file committed at the good revision (one build fewer).
    Committed,
}

fn fatal(e: impl std::fmt::Display) -> Fatal {
    Fatal(e.to_string())
}

/// What stays the same for every step.
struct Plan<'a> {
    pkg: &'a Found,
    common: &'a Common,
    filter: &'a Filtered,
    manifest: PathBuf,
    target: PathBuf,
}

impl Plan<'_> {
    /// `drift run --bisect-step ...` for the worktree, without the program.
    fn step_args(&self, session: &Session) -> Vec<OsString> {
        let c = self.common;
        let mut args: Vec<OsString> = ["drift", "run", "--bisect-step", "--step-log"]
            .map(OsString::from)
            .into();
        args.push(session.log().into());
        args.push("--manifest-path".into());
        args.push(session.tree().top().join(&self.manifest).into());
        for (flag, value) in [
            ("--package", self.pkg.name.clone()),
            ("--profile", c.profile.clone()),
            ("--timeout", c.timeout.to_string()),
            ("--color", "never".into()),
        ] {
            args.push(flag.into());
            args.push(value.into());
        }
        if let Some(j) = c.jobs {
            args.push("--jobs".into());
            args.push(j.to_string().into());
        }
        if self.filter.exact {
            args.push("--exact".into());
        }
        if let Some(f) = &self.filter.filter {
            args.push("--".into());
            args.push(f.into());
        }
        args
    }

    /// The environment of every step.
    fn environment(&self, cmd: &mut Command, session: &Session, baseline: &Path) {
        cmd.current_dir(session.tree().top())
            .env("CARGO_TARGET_DIR", &self.target)
            .env(ENV_BASELINE, baseline);
    }
}

/// One end point measured as a step; its record.
fn measure_at(
    plan: &Plan,
    session: &Session,
    baseline: &Path,
) -> Result<Result<StepRecord, String>, Interrupted> {
    let exe = match std::env::current_exe() {
        Ok(e) => e,
        Err(e) => return Ok(Err(format!("cannot find cargo-drift itself: {e}"))),
    };
    let before = step::read_log(&session.log()).map_or(0, |l| l.len());
    let mut cmd = Command::new(exe);
    cmd.args(plan.step_args(session));
    plan.environment(&mut cmd, session, baseline);
    let status = match run_guarded(cmd)? {
        Ok((status, _)) => status,
        Err(e) => return Ok(Err(e)),
    };
    // Only a line this step wrote counts.
    Ok(step::read_log(&session.log()).and_then(|log| {
        log.get(before)
            .cloned()
            .ok_or_else(|| format!("the step ended ({status}) without a verdict"))
    }))
}

/// The package's manifest relative to the repository top.
fn relative_manifest(pkg: &Found, repo: &Repo) -> Result<PathBuf, Fatal> {
    let canon = |p: &Path| p.canonicalize().unwrap_or_else(|_| p.to_path_buf());
    canon(&pkg.manifest)
        .strip_prefix(canon(repo.top()))
        .map(Path::to_path_buf)
        .map_err(|_| {
            Fatal(format!(
                "{} is outside the repository at {}",
                pkg.manifest.display(),
                repo.top().display()
            ))
        })
}

/// The package directory relative to the top, `/`-separated.
fn package_dir(manifest: &Path) -> String {
    manifest
        .parent()
        .map(|p| {
            p.components()
                .map(|c| c.as_os_str().to_string_lossy().to_string())
                .collect::<Vec<_>>()
                .join("/")
        })
        .unwrap_or_default()
}

/// What the reference step and the end points leave for the search.
struct Ends {
    good: Commit,
    bad: Commit,
    left_out: Vec<String>,
}

/// Runs the bisection in `session`; the report, or a usage error.
fn drive(
    plan: &Plan,
    args: &BisectArgs,
    repo: &Repo,
    session: &Session,
    ends: &mut Ends,
) -> Result<Result<(Outcome, Vec<String>), Fatal>, Interrupted> {
    let reference = session.reference();
    let stopped = |why: String| Ok(Ok((Outcome::Stopped(why), vec![])));
    match args.against {
        Against::Measured => {
            let good = match measure_at(plan, session, &session.no_baseline())? {
                Ok(r) => r,
                Err(e) => return stopped(e),
            };
            match (good.verdict, good.skip) {
                (Verdict::Skip, Some(SkipKind::Check)) => {
                    return Ok(Err(Fatal(format!(
                        "at the good revision {}: {}\n  help: check the filter with `cargo drift list` there",
                        ends.good.short(),
                        good.reason
                    ))))
                }
                (Verdict::Skip | Verdict::Unjudged, _) => {
                    return stopped(format!(
                        "the good revision {} cannot be measured: {}\n\
                         help: give a --good revision where the harness builds and runs",
                        ends.good.short(),
                        good.reason
                    ))
                }
                _ => {}
            }
            ends.left_out = match reference::from_measurements(&good.checks, &reference) {
                Ok(l) => l,
                Err(e) => return stopped(e),
            };
            if ends.left_out.len() == good.checks.len() {
                return Ok(Err(Fatal(format!(
                    "every check fails already at the good revision {} ({})\n  help: \
                     choose an older --good, or a filter of checks that pass there",
                    ends.good.short(),
                    good.reason
                ))));
            }
        }
        Against::Committed => {
            let dir = package_dir(&plan.manifest);
            let declaration = plan.pkg.file.to_string_lossy().replace('\\', "/");
            if let Err(e) =
                reference::from_commit(repo, &ends.good.hash, &dir, &declaration, &reference)
            {
                return Ok(Err(Fatal(e)));
            }
        }
    }
    if let Err(e) = session.tree().checkout(&ends.bad.hash) {
        return stopped(e.to_string());
    }
    let bad = match measure_at(plan, session, &reference)? {
        Ok(r) => r,
        Err(e) => return stopped(e),
    };
    match bad.verdict {
        Verdict::Good => return Ok(Ok((Outcome::NoRegression, vec![]))),
        Verdict::Skip | Verdict::Unjudged => {
            return stopped(format!(
                "the bad revision {} cannot be judged: {}\n\
                 help: give a --bad revision where the harness builds and has the checks",
                ends.bad.short(),
                bad.reason
            ))
        }
        Verdict::Bad => {}
    }
    if repo.count_between(&ends.good.hash, &ends.bad.hash).ok() == Some(1) {
        return Ok(Ok((Outcome::Found, vec![ends.bad.hash.clone()])));
    }
    if let Err(e) = session.tree().bisect_start(&ends.bad.hash, &ends.good.hash) {
        return stopped(e.to_string());
    }
    let Ok(exe) = std::env::current_exe() else {
        return stopped("cannot find cargo-drift itself".into());
    };
    let mut step: Vec<OsString> = vec![exe.into()];
    step.extend(plan.step_args(session));
    let mut cmd = session.tree().bisect_run(&step);
    plan.environment(&mut cmd, session, &reference);
    let (status, stdout) = match run_guarded(cmd)? {
        Ok(done) => done,
        Err(e) => return stopped(e),
    };
    Ok(Ok(match git::conclusion(&stdout) {
        Conclusion::FirstBad(hash) => (Outcome::Found, vec![hash]),
        Conclusion::OneOf(hashes) => (Outcome::OneOf, hashes),
        Conclusion::Stopped => {
            let log = step::read_log(&session.log()).unwrap_or_default();
            let why = log
                .iter()
                .rev()
                .find(|s| s.verdict == Verdict::Unjudged)
                .map_or_else(
                    || format!("git bisect run ended ({status}) without a conclusion"),
                    |s| {
                        let at = s.commit.as_deref().unwrap_or("?");
                        format!(
                            "commit {} could not be judged: {}\n\
                             help: run `cargo drift run` at that commit to see why",
                            &at[..at.len().min(10)],
                            s.reason
                        )
                    },
                );
            (Outcome::Stopped(why), vec![])
        }
    }))
}

/// The report from the step log once the search is over.
fn assemble(
    repo: &Repo,
    session: &Session,
    plan: &Plan,
    against: Against,
    ends: Ends,
    (outcome, first): (Outcome, Vec<String>),
) -> BisectReport {
    let log = step::read_log(&session.log()).unwrap_or_default();
    let describe = |hash: &str| {
        repo.commit(hash).unwrap_or_else(|_| Commit {
            hash: hash.to_string(),
            subject: String::new(),
            date: String::new(),
        })
    };
    // What moved at the earliest commit known to be bad.
    let earliest = match outcome {
        Outcome::OneOf => session.tree().bisect_bad().ok(),
        _ => first.first().cloned(),
    };
    let moved = earliest
        .as_ref()
        .and_then(|h| {
            log.iter()
                .rev()
                .find(|s| s.commit.as_deref() == Some(h) && s.verdict == Verdict::Bad)
        })
        .map(Moved::from_step)
        .unwrap_or_default();
    let tested = log
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let hash = s.commit.clone().unwrap_or_default();
            let role = match (i, against) {
                (0, Against::Measured) => "good",
                _ if hash == ends.bad.hash => "bad",
                _ => "step",
            };
            Tested {
                commit: describe(&hash),
                role,
                verdict: s.verdict,
                reason: s.reason.clone(),
            }
        })
        .collect();
    BisectReport {
        package: plan.pkg.name.clone(),
        against: match against {
            Against::Measured => "measured",
            Against::Committed => "committed",
        },
        commits: repo
            .count_between(&ends.good.hash, &ends.bad.hash)
            .unwrap_or(0),
        builds: log.iter().map(|s| s.builds).sum(),
        first_bad: first.iter().map(|h| describe(h)).collect(),
        moved,
        left_out: ends.left_out,
        tested,
        good: ends.good,
        bad: ends.bad,
        outcome,
    }
}

/// `cargo drift bisect`.
pub fn bisect_verb(common: &Common, args: &BisectArgs) -> Result<u8, Fatal> {
    if common.junit.is_some() || common.summary.is_some() {
        return Err(Fatal(
            "--junit and --summary belong to run and record; bisect reports with --format json"
                .into(),
        ));
    }
    let meta = metadata(common).map_err(fatal)?;
    let pkgs = discover(&meta, common).map_err(fatal)?;
    let pkg = match pkgs.as_slice() {
        [one] => one,
        many => {
            let names: Vec<&str> = many.iter().map(|p| p.name.as_str()).collect();
            return Err(Fatal(format!(
                "bisect follows one package at a time, and these have harnesses: {}\n  help: choose one with -p NAME",
                names.join(", ")
            )));
        }
    };
    let repo = Repo::discover(&pkg.root).map_err(fatal)?;
    let good = repo.resolve(&args.good).map_err(fatal)?;
    let bad = repo.resolve(&args.bad).map_err(fatal)?;
    if good == bad {
        return Err(Fatal(format!(
            "--good and --bad both name commit {good}\n  help: --bad must be a later commit (default HEAD)"
        )));
    }
    if !repo.is_ancestor(&good, &bad).map_err(fatal)? {
        return Err(Fatal(format!(
            "the good revision `{}` is not an ancestor of the bad revision `{}`\n  help: \
             bisect searches the commits from good to bad; check that the two are not swapped \
             (`git log --oneline {}..{}` should list commits)",
            args.good, args.bad, args.good, args.bad
        )));
    }
    let plan = Plan {
        pkg,
        common,
        filter: &args.filtered,
        manifest: relative_manifest(pkg, &repo)?,
        target: args
            .target_dir
            .clone()
            .unwrap_or_else(|| meta.target_directory.as_std_path().join("drift-bisect")),
    };
    if repo.has_changes().unwrap_or(false) {
        eprintln!(
            "drift: uncommitted changes are fine: bisect tests commits in a temporary worktree and never touches your checkout"
        );
    }
    interrupt::install().map_err(Fatal)?;
    let mut ends = Ends {
        good: repo.commit(&good).map_err(fatal)?,
        bad: repo.commit(&bad).map_err(fatal)?,
        left_out: vec![],
    };
    let session = Session::open(&repo, &good).map_err(fatal)?;
    let outcome = drive(&plan, args, &repo, &session, &mut ends);
    let result = match outcome {
        Err(Interrupted) => Err(Interrupted),
        Ok(Err(f)) => Ok(Err(f)),
        Ok(Ok(o)) => Ok(Ok(assemble(&repo, &session, &plan, args.against, ends, o))),
    };
    drop(session);
    // An interrupt that reached a git command directly ends the same way.
    let result = if interrupt::interrupted() {
        Err(Interrupted)
    } else {
        result
    };
    match result {
        Err(Interrupted) => {
            eprintln!("drift: bisect interrupted; its temporary worktree is removed");
            Ok(interrupt::EXIT_INTERRUPTED)
        }
        Ok(Err(f)) => Err(f),
        Ok(Ok(report)) => {
            match common.format {
                Format::Json => println!("{}", report::json_document(&report)),
                Format::Human => print!("{}", report::human(&report)),
            }
            Ok(report.exit_code())
        }
    }
}
