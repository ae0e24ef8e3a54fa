//! End-to-end tests of `cargo drift bisect` and `run --bisect-step` on the
//! built binary: a git history of the demo crate with an unbuildable commit
//! (fixed by the next one) and, after it, a planted regression (a wrong
//! Runge-Kutta stage coefficient, which drops the classical RK4 below its
//! order 4, Hairer-Norsett-Wanner I, II.1). The search must name the
//! planted commit, skip the unbuildable one, stay within
//! ceil(log2 N) + 2 cargo builds (counted by a wrapper around cargo),
//! leave the user's checkout byte for byte as it was, and clean up after
//! an interrupt.
#![cfg(unix)]

mod common;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

use common::fixture::{copy_dir, edit, ours, shared_target, text, Scratch, ONE_AT_A_TIME};

/// Commits after the good one (the candidates for the first bad commit).
const AFTER_GOOD: usize = 18;
/// The commit that does not build; the next one fixes it.
const BROKEN: usize = 4;
/// The commit that plants the regression.
const REGRESSED: usize = 7;
/// The commit that records the crate itself in `Cargo.lock`. Before it,
/// cargo adds the entry in every build, so the worktree has a changed
/// tracked file that git's next checkout must not trip over.
const LOCKED: usize = 6;

/// A scratch area `target/e2e/<name>` holding the user's repository at
/// `user/crane`; it is also the temporary directory bisect works in
/// (`TMPDIR`). Both the repository and bisect's worktree (`<TMPDIR>/<session>/tree`)
/// sit five levels below this checkout, so the crate reaches cargo-drift
/// by one relative path from either: the commits have the same hashes on
/// every machine, and so git makes the same choices after a skip.
struct History {
    area: Scratch,
    commits: Vec<String>,
}

impl History {
    fn repo(&self) -> PathBuf {
        self.area.0.join("user/crane")
    }

    fn tmp(&self) -> PathBuf {
        self.area.0.clone()
    }
}

fn git_at(dir: &Path, date: &str, args: &[&str]) -> String {
    let out = Command::new("git")
        .arg("-C")
        .arg(dir)
        .args([
            "-c",
            "commit.gpgsign=false",
            "-c",
            "init.defaultBranch=main",
            "-c",
            "core.hooksPath=/dev/null",
        ])
        .args(args)
        .env("GIT_AUTHOR_NAME", "Quay Crane")
        .env("GIT_AUTHOR_EMAIL", "crane@example.org")
        .env("GIT_COMMITTER_NAME", "Quay Crane")
        .env("GIT_COMMITTER_EMAIL", "crane@example.org")
        .env("GIT_AUTHOR_DATE", date)
        .env("GIT_COMMITTER_DATE", date)
        .output()
        .expect("git runs");
    assert!(out.status.success(), "git {args:?}: {}", text(&out));
    String::from_utf8_lossy(&out.stdout).trim_end().to_string()
}

fn git(dir: &Path, args: &[&str]) -> String {
    git_at(dir, "2030-04-01T12:00:00+00:00", args)
}

fn append(file: &Path, line: &str) {
    let mut t = std::fs::read_to_string(file).unwrap_or_default();
    t.push_str(line);
    t.push('\n');
    std::fs::write(file, t).unwrap();
}

/// `Cargo.lock` with the entry cargo adds for the crate `package`, in
/// cargo's (name) order.
fn with_own_entry(lock: &str, package: &str) -> String {
    let entry = format!(
        "[[package]]\nname = \"{package}\"\nversion = \"0.1.0\"\ndependencies = [\n \"cargo-drift\",\n]\n\n"
    );
    let at = lock
        .match_indices("[[package]]\nname = \"")
        .find(|(i, m)| lock[i + m.len()..].split('"').next() > Some(package))
        .map_or(lock.len(), |(i, _)| i);
    format!("{}{entry}{}", &lock[..at], &lock[at..])
}

/// The history: commit 0 is the demo crate, then harmless README lines,
/// an unbuildable commit, its fix, the planted regression, the crate's own
/// lock entry, more README lines.
fn history(name: &str) -> History {
    let area = ours().join("target").join("e2e").join(name);
    let _ = std::fs::remove_dir_all(&area);
    let repo = area.join("user/crane");
    copy_dir(&ours().join("fixtures/crane"), &repo);
    let manifest = repo.join("Cargo.toml");
    edit(
        &manifest,
        "name = \"harbour-crane\"",
        &format!("name = \"harbour-crane-{name}\""),
    );
    edit(&manifest, "path = \"../..\"", "path = \"../../../../..\"");
    std::fs::copy(ours().join("Cargo.lock"), repo.join("Cargo.lock")).unwrap();
    std::fs::write(repo.join(".gitignore"), "target/\n").unwrap();
    std::fs::write(repo.join("README.md"), "# Harbour crane simulator\n").unwrap();
    git(&repo, &["init", "-q"]);
    let lib = repo.join("src/lib.rs");
    let mut commits = Vec::new();
    for i in 0..=AFTER_GOOD {
        let subject = match i {
            0 => "Crane simulator with its RK4 and Verlet steppers".to_string(),
            BROKEN => {
                append(&lib, "pub fn trolley_travel() -> f64 { 2.0 * }");
                "Add the trolley travel".into()
            }
            i if i == BROKEN + 1 => {
                edit(&lib, "{ 2.0 * }", "{ 2.0 * 12.5 }");
                "Fix the trolley travel".into()
            }
            LOCKED => {
                let path = repo.join("Cargo.lock");
                let lock = std::fs::read_to_string(&path).unwrap();
                let package = format!("harbour-crane-{name}");
                std::fs::write(&path, with_own_entry(&lock, &package)).unwrap();
                "Record the crate in Cargo.lock".into()
            }
            REGRESSED => {
                edit(
                    &lib,
                    "0.5 * h * self.k2[i]; // stage 3 coefficient",
                    "0.49 * h * self.k2[i]; // stage 3 coefficient",
                );
                "Retune the third RK4 stage".into()
            }
            i => {
                append(&repo.join("README.md"), &format!("Note {i} on the hoist."));
                format!("Document the hoist, part {i}")
            }
        };
        git(&repo, &["add", "-A"]);
        let date = format!("2030-03-{:02}T09:00:00+00:00", i + 1);
        git_at(&repo, &date, &["commit", "-q", "-m", &subject]);
        commits.push(git(&repo, &["rev-parse", "HEAD"]));
    }
    History {
        area: Scratch(area),
        commits,
    }
}

/// A cargo that logs every build attempt (`--no-run`) to `log`.
fn counting_cargo(h: &History) -> (PathBuf, PathBuf) {
    let log = h.area.0.join("builds.log");
    let script = h.area.0.join("cargo-counting");
    let real = std::env::var("CARGO").unwrap_or_else(|_| "cargo".into());
    std::fs::write(
        &script,
        format!(
            "#!/bin/sh\ncase \" $* \" in *\" --no-run \"*) echo build >> '{}' ;; esac\nexec '{real}' \"$@\"\n",
            log.display()
        ),
    )
    .unwrap();
    use std::os::unix::fs::PermissionsExt;
    std::fs::set_permissions(&script, std::fs::Permissions::from_mode(0o755)).unwrap();
    (script, log)
}

fn builds(log: &Path) -> usize {
    std::fs::read_to_string(log).map_or(0, |t| t.lines().count())
}

/// `cargo-drift drift ARGS...` in the repository, as a command.
fn drift_cmd<S: AsRef<std::ffi::OsStr>>(h: &History, cargo: &Path, args: &[S]) -> Command {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_cargo-drift"));
    cmd.arg("drift")
        .args(args)
        .current_dir(h.repo())
        .env("CARGO", cargo)
        .env("TMPDIR", h.tmp())
        // git must not find this checkout's own repository above the scratch area.
        .env("GIT_CEILING_DIRECTORIES", &h.area.0)
        .env("CARGO_NET_OFFLINE", "true")
        .env("NO_COLOR", "1")
        .env_remove("CARGO_TARGET_DIR")
        .env_remove("DRIFT_BASELINE")
        .env_remove("DRIFT_RECORD")
        .env_remove("DRIFT_MEASUREMENTS");
    cmd
}

fn drift<S: AsRef<std::ffi::OsStr>>(h: &History, cargo: &Path, args: &[S]) -> Output {
    let _turn = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
    drift_cmd(h, cargo, args)
        .output()
        .expect("cargo-drift runs")
}

fn code(out: &Output) -> i32 {
    out.status.code().unwrap_or(-1)
}

/// Every file under `dir` except `.git`, with its bytes.
fn files(dir: &Path, under: &Path, into: &mut BTreeMap<PathBuf, Vec<u8>>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let entry = entry.unwrap();
        let path = entry.path();
        if entry.file_type().unwrap().is_dir() {
            if entry.file_name() != ".git" {
                files(&path, under, into);
            }
        } else {
            let rel = path.strip_prefix(under).unwrap().to_path_buf();
            into.insert(rel, std::fs::read(&path).unwrap());
        }
    }
}

/// What the user has: every file of the checkout, the index, HEAD, every
/// ref (branches, the stash), the stash list and the worktrees.
fn user_state(repo: &Path) -> (BTreeMap<PathBuf, Vec<u8>>, Vec<u8>, Vec<String>) {
    let mut tree = BTreeMap::new();
    files(repo, repo, &mut tree);
    let index = std::fs::read(repo.join(".git/index")).unwrap();
    let refs = vec![
        git(repo, &["rev-parse", "HEAD"]),
        git(repo, &["symbolic-ref", "HEAD"]),
        git(repo, &["for-each-ref"]),
        git(repo, &["stash", "list"]),
        git(repo, &["worktree", "list", "--porcelain"]),
    ];
    (tree, index, refs)
}

/// No worktree, bisect state or scratch directory is left behind.
fn assert_nothing_left(h: &History) {
    let repo = h.repo();
    let worktrees = git(&repo, &["worktree", "list", "--porcelain"]);
    assert_eq!(worktrees.matches("worktree ").count(), 1, "{worktrees}");
    assert_eq!(git(&repo, &["for-each-ref", "refs/bisect"]), "");
    let admin = repo.join(".git/worktrees");
    let left: Vec<_> = std::fs::read_dir(&admin)
        .map(|d| d.flatten().map(|e| e.path()).collect())
        .unwrap_or_default();
    assert!(left.is_empty(), "worktree entries left: {left:?}");
    for f in ["BISECT_START", "BISECT_LOG", "BISECT_TERMS", "BISECT_NAMES"] {
        assert!(!repo.join(".git").join(f).exists(), "{f} left behind");
    }
    let scratch: Vec<_> = std::fs::read_dir(h.tmp())
        .unwrap()
        .flatten()
        .map(|e| e.file_name())
        .filter(|n| n.to_string_lossy().starts_with("cargo-drift-bisect-"))
        .collect();
    assert!(scratch.is_empty(), "scratch directories left: {scratch:?}");
}

/// `bisect --good <commit 0> --target-dir <shared> --profile dev [EXTRA]
/// --exact rk4/harmonic`: one check, every build in the shared end-to-end
/// target directory. The dev profile rebuilds the crate in about a second
/// where an optimised build takes ten or more, and measures this one check
/// in about two; the figures are the same (README).
fn bisect_args(h: &History, extra: &[&str]) -> Vec<String> {
    let target = shared_target().display().to_string();
    let mut args: Vec<String> = [
        "bisect",
        "--good",
        &h.commits[0],
        "--target-dir",
        &target,
        "--profile",
        "dev",
    ]
    .map(String::from)
    .into();
    args.extend(extra.iter().map(|s| s.to_string()));
    args.extend(["--exact".into(), "rk4/harmonic".into()]);
    args
}

#[test]
fn bisect_finds_the_planted_commit_skips_the_broken_one_and_leaves_the_checkout_alone() {
    let h = history("bisect-find");
    let repo = h.repo();
    // The user's own state: a stash entry, an unstaged and a staged change,
    // an untracked file.
    append(&repo.join("README.md"), "A draft paragraph.");
    git(&repo, &["stash", "push", "-q", "-m", "parked draft"]);
    append(&repo.join("src/lib.rs"), "// work in progress");
    append(&repo.join("drift.toml"), "# staged remark");
    git(&repo, &["add", "drift.toml"]);
    std::fs::write(repo.join("notes.txt"), "untracked\n").unwrap();
    let before = user_state(&repo);

    let (cargo, log) = counting_cargo(&h);
    let started = Instant::now();
    let out = drift(&h, &cargo, &bisect_args(&h, &["--format", "json"]));
    let took = started.elapsed();
    eprintln!("bisect took {:.1} s", took.as_secs_f64());
    assert_eq!(code(&out), 1, "{}", text(&out));
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).expect("JSON on stdout");
    assert_eq!(doc["outcome"], "found", "{doc:#}");
    assert_eq!(doc["exit_code"], 1);
    let first = &doc["first_bad"][0];
    assert_eq!(first["hash"], h.commits[REGRESSED].as_str(), "{doc:#}");
    assert_eq!(first["subject"], "Retune the third RK4 stage");
    assert!(first["date"]
        .as_str()
        .unwrap()
        .starts_with("2030-03-08T09:00:00"));

    // What moved: the order of RK4, 4 at the good revision (the classical
    // method's order, HNW I, II.1), below the claim's limit at the bad one.
    let moved = doc["moved"].as_array().unwrap();
    let order = moved
        .iter()
        .find(|m| m["check"] == "rk4/harmonic" && m["metric"] == "order")
        .unwrap_or_else(|| panic!("{doc:#}"));
    let (good, bad) = (
        order["good"].as_f64().unwrap(),
        order["bad"].as_f64().unwrap(),
    );
    assert!((good - 4.0).abs() < 0.1, "order at good {good}");
    assert!(bad < 3.8, "order at the first bad commit {bad}");

    // The broken commit was tried and skipped, and said so.
    let tested = doc["tested"].as_array().unwrap();
    let broken = tested
        .iter()
        .find(|t| t["hash"] == h.commits[BROKEN].as_str())
        .unwrap_or_else(|| panic!("the unbuildable commit was not tried: {doc:#}"));
    assert_eq!(broken["verdict"], "skip");
    assert!(broken["reason"]
        .as_str()
        .unwrap()
        .contains("does not build"));

    // Every cargo build attempt, counted outside cargo-drift.
    let n = doc["commits"].as_u64().unwrap() as usize;
    assert_eq!(n, AFTER_GOOD);
    let counted = builds(&log);
    let bound = (n as f64).log2().ceil() as usize + 2;
    eprintln!("{counted} builds for {n} commits (bound {bound})");
    assert_eq!(doc["builds"].as_u64(), Some(counted as u64));
    assert!(counted <= bound, "{counted} builds > {bound}: {doc:#}");
    assert_eq!(tested.len(), counted, "one build per commit tested");

    assert!(before == user_state(&repo), "the user's checkout changed");
    assert_nothing_left(&h);
}

#[test]
fn bisect_stops_early_when_the_bad_revision_does_not_regress() {
    let h = history("bisect-none");
    let (cargo, log) = counting_cargo(&h);
    let bad = &h.commits[REGRESSED - 1];
    let extra = ["--bad", bad, "--against", "committed"];
    let out = drift(&h, &cargo, &bisect_args(&h, &extra));
    assert_eq!(code(&out), 0, "{}", text(&out));
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(stdout.contains("no regression"), "{stdout}");
    assert!(stdout.contains("baseline committed at the good revision"));
    // Against the committed baseline only the bad revision is built.
    assert_eq!(builds(&log), 1, "{}", text(&out));
    assert_nothing_left(&h);
}

#[test]
fn bisect_refuses_bad_revisions_and_places_without_git() {
    let h = history("bisect-usage");
    let (cargo, log) = counting_cargo(&h);
    let cases: [(&[&str], &str); 3] = [
        (&["--good", "no-such-tag"], "names no commit"),
        (&["--good", "HEAD", "--bad", "HEAD~3"], "not an ancestor"),
        (&["--good", "HEAD"], "both name commit"),
    ];
    for (args, says) in cases {
        let mut all = vec!["bisect"];
        all.extend_from_slice(args);
        let out = drift(&h, &cargo, &all);
        assert_eq!(code(&out), 2, "{args:?}: {}", text(&out));
        assert!(text(&out).contains(says), "{args:?}: {}", text(&out));
    }
    std::fs::remove_dir_all(h.repo().join(".git")).unwrap();
    let out = drift(&h, &cargo, &["bisect", "--good", "HEAD~1"]);
    assert_eq!(code(&out), 2, "{}", text(&out));
    assert!(
        text(&out).contains("not in a git repository"),
        "{}",
        text(&out)
    );
    assert_eq!(
        builds(&log),
        0,
        "nothing is built before the revisions check out"
    );
}

#[test]
fn interrupted_bisect_leaves_no_worktree_or_bisect_state() {
    let h = history("bisect-stop");
    let (cargo, _log) = counting_cargo(&h);
    let _turn = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
    // Against the committed baseline the bisection starts after one build.
    let mut child = drift_cmd(&h, &cargo, &bisect_args(&h, &["--against", "committed"]))
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("cargo-drift starts");
    // Wait until git's bisection runs in the worktree, then interrupt.
    let admin = h.repo().join(".git/worktrees");
    let started = Instant::now();
    let bisecting = || {
        std::fs::read_dir(&admin)
            .map(|d| d.flatten().any(|e| e.path().join("BISECT_START").exists()))
            .unwrap_or(false)
    };
    while !bisecting() {
        assert!(
            child.try_wait().unwrap().is_none(),
            "bisect ended before it was interrupted"
        );
        assert!(
            started.elapsed() < Duration::from_secs(900),
            "no bisection started"
        );
        std::thread::sleep(Duration::from_millis(100));
    }
    // git keeps the bisection's state with the worktree, not in the
    // user's checkout.
    assert_eq!(git(&h.repo(), &["for-each-ref", "refs/bisect"]), "");
    assert!(!h.repo().join(".git/BISECT_START").exists());
    let pid = nix::unistd::Pid::from_raw(child.id() as i32);
    nix::sys::signal::kill(pid, nix::sys::signal::Signal::SIGINT).unwrap();
    let status = child.wait().unwrap();
    assert_eq!(status.code(), Some(130), "{status}");
    assert_nothing_left(&h);
}
