//! The git plumbing of `cargo drift bisect`: finding the repository,
//! resolving revisions, reading commits and committed files, and the
//! temporary worktree's checkouts, each as one `git` command with a typed
//! error ([`GitError`]).
//!
//! Every command runs with hooks switched off (`core.hooksPath=/dev/null`:
//! a user's post-checkout hook must not run in our worktree), without
//! automatic garbage collection or maintenance, with git's messages in
//! English (their wording is parsed), and without the `GIT_DIR`-style
//! variables a caller's environment may carry, so it acts on the repository
//! it is pointed at and nothing else.

use std::ffi::OsStr;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

/// Why a git command failed, worded for the person who ran bisect.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum GitError {
    /// `git` itself could not be started.
    NoGit(String),
    /// The directory is not inside a git checkout.
    NotARepository(PathBuf),
    /// A revision names no commit.
    UnknownRevision(String),
    /// Any other failure: what was being done and git's message.
    Failed {
        /// What we were doing, e.g. `add the temporary worktree`.
        what: String,
        /// git's standard error.
        message: String,
    },
}

impl std::fmt::Display for GitError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            GitError::NoGit(e) => write!(
                f,
                "cannot run git: {e}\n  help: bisect drives git's own bisection; install git and put it on PATH"
            ),
            GitError::NotARepository(dir) => write!(
                f,
                "{} is not in a git repository\n  help: bisect searches the commit history; run it inside a git checkout of the package",
                dir.display()
            ),
            GitError::UnknownRevision(rev) => write!(
                f,
                "`{rev}` names no commit of this repository\n  help: give a commit hash, tag or branch (`git log --oneline` lists them)"
            ),
            GitError::Failed { what, message } => {
                write!(f, "git could not {what}: {}", message.trim())
            }
        }
    }
}

impl std::error::Error for GitError {}

/// A commit as the report shows it.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub struct Commit {
    /// Full hash.
    pub hash: String,
    /// First line of the message.
    pub subject: String,
    /// Author date, ISO 8601.
    pub date: String,
}

impl Commit {
    /// The first ten characters of the hash.
    ///
    /// ```
    /// let c = drift::cli::bisect::git::Commit { hash: "0123456789abcdef".into(),
    ///     subject: String::new(), date: String::new() };
    /// assert_eq!(c.short(), "0123456789");
    /// ```
    pub fn short(&self) -> &str {
        &self.hash[..self.hash.len().min(10)]
    }
}

/// A git checkout: the main one, or the temporary worktree.
#[derive(Debug, Clone)]
pub struct Repo {
    top: PathBuf,
}

/// `git` with our settings, to run in `dir`.
pub fn git_in(dir: &Path) -> Command {
    let mut cmd = Command::new("git");
    cmd.arg("-C")
        .arg(dir)
        .args([
            "-c",
            "core.hooksPath=/dev/null",
            "-c",
            "gc.auto=0",
            "-c",
            "maintenance.auto=false",
            "-c",
            "advice.detachedHead=false",
        ])
        .env("LC_ALL", "C")
        .env("LANGUAGE", "C");
    for var in [
        "GIT_DIR",
        "GIT_WORK_TREE",
        "GIT_INDEX_FILE",
        "GIT_OBJECT_DIRECTORY",
        "GIT_COMMON_DIR",
        "GIT_PREFIX",
    ] {
        cmd.env_remove(var);
    }
    cmd
}

fn output(mut cmd: Command) -> Result<Output, GitError> {
    cmd.stdin(Stdio::null())
        .output()
        .map_err(|e| GitError::NoGit(e.to_string()))
}

fn stdout_of(out: &Output) -> String {
    String::from_utf8_lossy(&out.stdout).trim_end().to_string()
}

impl Repo {
    /// The checkout that contains `dir`.
    pub fn discover(dir: &Path) -> Result<Repo, GitError> {
        let mut cmd = git_in(dir);
        cmd.args(["rev-parse", "--show-toplevel"]);
        let out = output(cmd)?;
        if !out.status.success() {
            return Err(GitError::NotARepository(dir.to_path_buf()));
        }
        Ok(Repo {
            top: PathBuf::from(stdout_of(&out)),
        })
    }

    /// The top directory of the checkout.
    pub fn top(&self) -> &Path {
        &self.top
    }

    /// Runs `git ARGS` here; its standard output, or [`GitError::Failed`]
    /// saying `what` failed.
    fn run<I, S>(&self, what: &str, args: I) -> Result<String, GitError>
    where
        I: IntoIterator<Item = S>,
        S: AsRef<OsStr>,
    {
        let mut cmd = git_in(&self.top);
        cmd.args(args);
        let out = output(cmd)?;
        if out.status.success() {
            Ok(stdout_of(&out))
        } else {
            Err(GitError::Failed {
                what: what.to_string(),
                message: String::from_utf8_lossy(&out.stderr).to_string(),
            })
        }
    }

    /// The full hash of the commit `rev` names.
    pub fn resolve(&self, rev: &str) -> Result<String, GitError> {
        self.run(
            "resolve a revision",
            [
                "rev-parse",
                "--verify",
                "--quiet",
                &format!("{rev}^{{commit}}"),
            ],
        )
        .map_err(|_| GitError::UnknownRevision(rev.to_string()))
    }

    /// Whether commit `a` is an ancestor of (or equal to) commit `b`.
    pub fn is_ancestor(&self, a: &str, b: &str) -> Result<bool, GitError> {
        let mut cmd = git_in(&self.top);
        cmd.args(["merge-base", "--is-ancestor", a, b]);
        let out = output(cmd)?;
        match out.status.code() {
            Some(0) => Ok(true),
            Some(1) => Ok(false),
            _ => Err(GitError::Failed {
                what: "compare the two revisions".into(),
                message: String::from_utf8_lossy(&out.stderr).to_string(),
            }),
        }
    }

    /// The number of commits in `good..bad`: the candidates for the first
    /// bad commit.
    pub fn count_between(&self, good: &str, bad: &str) -> Result<usize, GitError> {
        let text = self.run(
            "count the commits between the revisions",
            ["rev-list", "--count", &format!("{good}..{bad}")],
        )?;
        text.trim().parse().map_err(|_| GitError::Failed {
            what: "count the commits between the revisions".into(),
            message: format!("unexpected answer `{text}`"),
        })
    }

    /// Hash, subject and author date of `rev`.
    pub fn commit(&self, rev: &str) -> Result<Commit, GitError> {
        let text = self.run(
            "read a commit",
            ["log", "-1", "--format=%H%x00%s%x00%aI", rev, "--"],
        )?;
        let mut parts = text.splitn(3, '\0');
        let mut next = || parts.next().unwrap_or_default().to_string();
        Ok(Commit {
            hash: next(),
            subject: next(),
            date: next(),
        })
    }

    /// The text of `path` (relative to the top, `/`-separated) as committed
    /// at `rev`; `None` when the commit has no such file.
    pub fn show(&self, rev: &str, path: &str) -> Result<Option<String>, GitError> {
        let spec = format!("{rev}:{path}");
        let mut cmd = git_in(&self.top);
        cmd.args(["cat-file", "-e", &spec]);
        if !output(cmd)?.status.success() {
            return Ok(None);
        }
        self.run("read a committed file", ["show", &spec]).map(Some)
    }

    /// Whether the checkout has uncommitted or untracked changes (asked
    /// without taking git's optional locks, so the index is not rewritten).
    pub fn has_changes(&self) -> Result<bool, GitError> {
        let text = self.run(
            "read the status of the checkout",
            ["--no-optional-locks", "status", "--porcelain"],
        )?;
        Ok(!text.is_empty())
    }

    /// Adds a detached worktree at `path` with `rev` checked out; the
    /// worktree as a [`Repo`].
    pub fn add_worktree(&self, path: &Path, rev: &str) -> Result<Repo, GitError> {
        let mut cmd = git_in(&self.top);
        cmd.args(["worktree", "add", "--detach", "--quiet"])
            .arg(path)
            .arg(rev);
        let out = output(cmd)?;
        if !out.status.success() {
            return Err(GitError::Failed {
                what: format!("add a temporary worktree at {}", path.display()),
                message: String::from_utf8_lossy(&out.stderr).to_string(),
            });
        }
        Ok(Repo {
            top: path.to_path_buf(),
        })
    }

    /// Removes the worktree at `path` (with whatever a bisection left in
    /// it), then, if that failed, prunes worktree entries whose directory
    /// is gone.
    pub fn remove_worktree(&self, path: &Path) -> Result<(), GitError> {
        let removed = self.run(
            "remove the temporary worktree",
            [
                OsStr::new("worktree"),
                OsStr::new("remove"),
                OsStr::new("--force"),
                path.as_os_str(),
            ],
        );
        if removed.is_err() {
            let _ = std::fs::remove_dir_all(path);
            self.run("prune the temporary worktree", ["worktree", "prune"])?;
        }
        Ok(())
    }

    /// Checks out `rev` (detached) in this worktree, over any change a
    /// build made to tracked files.
    pub fn checkout(&self, rev: &str) -> Result<(), GitError> {
        self.run(
            &format!("check out {rev} in the temporary worktree"),
            ["checkout", "--quiet", "--force", "--detach", rev],
        )
        .map(|_| ())
    }

    /// Whether this checkout is a bisection's own worktree: a linked
    /// worktree at `<temporary dir>/cargo-drift-bisect-*/tree`.
    pub fn is_bisect_worktree(&self) -> bool {
        let named = self.top.file_name().is_some_and(|n| n == "tree")
            && self
                .top
                .parent()
                .and_then(Path::file_name)
                .is_some_and(|n| {
                    n.to_string_lossy()
                        .starts_with(crate::cli::bisect::session::PREFIX)
                });
        let linked = match (
            self.run("read the git directory", ["rev-parse", "--git-dir"]),
            self.run("read the git directory", ["rev-parse", "--git-common-dir"]),
        ) {
            (Ok(own), Ok(common)) => own != common,
            _ => false,
        };
        named && linked
    }

    /// Puts back every tracked file and removes untracked ones that are
    /// not ignored (what a build may have changed, e.g. `Cargo.lock`), so
    /// that git can check out the next commit. Only in a bisection's own
    /// worktree ([`Repo::is_bisect_worktree`]); elsewhere it does nothing.
    pub fn discard_changes(&self) -> Result<(), GitError> {
        if !self.is_bisect_worktree() {
            return Ok(());
        }
        self.run(
            "reset the temporary worktree",
            ["reset", "--hard", "--quiet"],
        )?;
        self.run("clean the temporary worktree", ["clean", "-fdq"])
            .map(|_| ())
    }

    /// `git bisect start BAD GOOD` in this worktree (git checks out the
    /// first commit to test).
    pub fn bisect_start(&self, bad: &str, good: &str) -> Result<(), GitError> {
        self.run("start the bisection", ["bisect", "start", bad, good])
            .map(|_| ())
    }

    /// The earliest commit the bisection knows to be bad.
    pub fn bisect_bad(&self) -> Result<String, GitError> {
        self.run(
            "read the bisection's bad commit",
            ["rev-parse", "--verify", "refs/bisect/bad"],
        )
    }

    /// The commit checked out here, if any.
    pub fn head(&self) -> Option<String> {
        self.run("read HEAD", ["rev-parse", "--verify", "HEAD"])
            .ok()
    }

    /// `git bisect run` with `step` in this worktree, as a command for the
    /// caller to spawn.
    pub fn bisect_run(&self, step: &[std::ffi::OsString]) -> Command {
        let mut cmd = git_in(&self.top);
        cmd.args(["bisect", "run"]).args(step);
        cmd
    }
}

/// What `git bisect run` concluded, read from its standard output.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Conclusion {
    /// `<hash> is the first bad commit`.
    FirstBad(String),
    /// Skipped commits hide it: the first bad commit is one of these.
    OneOf(Vec<String>),
    /// Neither: the run stopped early.
    Stopped,
}

/// Reads git's conclusion from the standard output of `git bisect run`.
///
/// ```
/// use drift::cli::bisect::git::{conclusion, Conclusion};
/// let h = "0123456789012345678901234567890123456789";
/// assert_eq!(conclusion(&format!("running x\n{h} is the first bad commit\n")),
///            Conclusion::FirstBad(h.into()));
/// let text = format!("There are only 'skip'ped commits left to test.\n\
///     The first bad commit could be any of:\n{h}\n{h}\nWe cannot bisect more!\n");
/// assert_eq!(conclusion(&text), Conclusion::OneOf(vec![h.into(), h.into()]));
/// assert_eq!(conclusion("bisect run failed"), Conclusion::Stopped);
/// ```
pub fn conclusion(stdout: &str) -> Conclusion {
    let is_hash = |w: &str| w.len() == 40 && w.bytes().all(|b| b.is_ascii_hexdigit());
    for line in stdout.lines() {
        if let Some(hash) = line.strip_suffix(" is the first bad commit") {
            if is_hash(hash) {
                return Conclusion::FirstBad(hash.to_string());
            }
        }
    }
    if let Some((_, rest)) = stdout.split_once("The first bad commit could be any of:") {
        let hashes: Vec<String> = rest
            .lines()
            .map(str::trim)
            .take_while(|l| l.is_empty() || is_hash(l))
            .filter(|l| !l.is_empty())
            .map(str::to_string)
            .collect();
        if !hashes.is_empty() {
            return Conclusion::OneOf(hashes);
        }
    }
    Conclusion::Stopped
}
