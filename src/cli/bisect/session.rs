//! One bisection's scratch space, outside every checkout: a temporary
//! directory holding the detached worktree the commits are checked out in,
//! the reference baseline and the step log. Dropping the session removes
//! the worktree (with the bisection state git keeps per worktree) and the
//! directory, whether the bisection finished, failed or was interrupted.

use std::path::{Path, PathBuf};
use std::time::{SystemTime, UNIX_EPOCH};

use super::git::{GitError, Repo};

/// How the scratch directory's name begins.
pub const PREFIX: &str = "cargo-drift-bisect-";

/// The scratch space; removed on drop.
pub struct Session {
    main: Repo,
    dir: PathBuf,
    tree: Repo,
}

impl Session {
    /// Creates the directory and a detached worktree of `main` at `rev`.
    pub fn open(main: &Repo, rev: &str) -> Result<Session, GitError> {
        let nanos = SystemTime::now()
            .duration_since(UNIX_EPOCH)
            .map_or(0, |d| d.subsec_nanos());
        let dir = std::env::temp_dir().join(format!("{PREFIX}{}-{nanos}", std::process::id()));
        std::fs::create_dir(&dir).map_err(|e| GitError::Failed {
            what: format!("make the scratch directory {}", dir.display()),
            message: e.to_string(),
        })?;
        match main.add_worktree(&dir.join("tree"), rev) {
            Ok(tree) => Ok(Session {
                main: main.clone(),
                dir,
                tree,
            }),
            Err(e) => {
                let _ = std::fs::remove_dir_all(&dir);
                Err(e)
            }
        }
    }

    /// The worktree.
    pub fn tree(&self) -> &Repo {
        &self.tree
    }

    /// The reference baseline every step is judged against.
    pub fn reference(&self) -> PathBuf {
        self.dir.join("reference.toml")
    }

    /// A path where no baseline exists (the good revision is measured
    /// against nothing).
    pub fn no_baseline(&self) -> PathBuf {
        self.dir.join("none.toml")
    }

    /// The step log.
    pub fn log(&self) -> PathBuf {
        self.dir.join("steps.jsonl")
    }

    /// The scratch directory.
    pub fn dir(&self) -> &Path {
        &self.dir
    }
}

impl Drop for Session {
    fn drop(&mut self) {
        if let Err(e) = self.main.remove_worktree(self.tree.top()) {
            eprintln!(
                "warning: {e}\n  help: remove it with `git worktree remove --force {}`",
                self.tree.top().display()
            );
        }
        let _ = std::fs::remove_dir_all(&self.dir);
    }
}
