//! Writing the report directory whole or not at all: every file goes into
//! a fresh sibling directory first, which then replaces the old report in
//! two renames. A directory that holds anything but an earlier report is
//! never replaced.

use std::path::{Path, PathBuf};

/// The file that marks a directory as a report of ours.
pub const MARKER: &str = "report.json";

/// Why the report directory could not be written.
#[derive(Debug)]
pub enum OutError {
    /// The directory holds files that are not a report.
    NotAReport(PathBuf),
    /// A file system operation failed.
    Io {
        /// What was being done, with the path.
        doing: String,
        /// The error.
        error: std::io::Error,
    },
}

impl std::fmt::Display for OutError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            OutError::NotAReport(p) => write!(
                f,
                "{} already exists and holds files that are not a cargo-drift report (no {MARKER}); \
                 nothing was written\n  help: give --out a new or empty directory",
                p.display()
            ),
            OutError::Io { doing, error } => write!(f, "{doing}: {error}"),
        }
    }
}

impl std::error::Error for OutError {}

fn io(doing: String) -> impl FnOnce(std::io::Error) -> OutError {
    move |error| OutError::Io { doing, error }
}

/// A sibling of `dir` named with `what` and this process's id.
fn sibling(dir: &Path, what: &str) -> PathBuf {
    let name = dir
        .file_name()
        .map_or("report".into(), |n| n.to_string_lossy().into_owned());
    dir.with_file_name(format!(".{name}.{what}-{}", std::process::id()))
}

/// Whether `dir` may be replaced: it does not exist, is empty, or holds a
/// report of ours.
fn replaceable(dir: &Path) -> Result<bool, OutError> {
    match std::fs::read_dir(dir) {
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(true),
        Err(e) => Err(io(format!("reading {}", dir.display()))(e)),
        Ok(mut entries) => Ok(entries.next().is_none() || dir.join(MARKER).is_file()),
    }
}

/// Writes `files` (name, content) as the directory `dir`, replacing an
/// earlier report there. On failure the earlier report stays as it was.
///
/// ```
/// let dir = std::env::temp_dir().join(format!("drift-out-doc-{}", std::process::id()));
/// let files = vec![("report.json".to_string(), b"{}".to_vec())];
/// drift::cli::report::out::write_dir(&dir, &files).unwrap();
/// drift::cli::report::out::write_dir(&dir, &files).unwrap(); // replaces its own report
/// assert_eq!(std::fs::read(dir.join("report.json")).unwrap(), b"{}");
/// std::fs::remove_dir_all(&dir).unwrap();
/// ```
pub fn write_dir(dir: &Path, files: &[(String, Vec<u8>)]) -> Result<(), OutError> {
    if !replaceable(dir)? {
        return Err(OutError::NotAReport(dir.to_path_buf()));
    }
    if let Some(parent) = dir.parent().filter(|p| !p.as_os_str().is_empty()) {
        std::fs::create_dir_all(parent).map_err(io(format!("creating {}", parent.display())))?;
    }
    let fresh = sibling(dir, "new");
    let _ = std::fs::remove_dir_all(&fresh);
    let written = (|| {
        std::fs::create_dir(&fresh).map_err(io(format!("creating {}", fresh.display())))?;
        for (name, content) in files {
            let path = fresh.join(name);
            std::fs::write(&path, content).map_err(io(format!("writing {}", path.display())))?;
        }
        Ok(())
    })();
    if let Err(e) = written {
        let _ = std::fs::remove_dir_all(&fresh);
        return Err(e);
    }
    let old = sibling(dir, "old");
    let had_old = dir.exists();
    if had_old {
        if let Err(e) = std::fs::rename(dir, &old) {
            let _ = std::fs::remove_dir_all(&fresh);
            return Err(io(format!(
                "moving the earlier report {} aside",
                dir.display()
            ))(e));
        }
    }
    if let Err(e) = std::fs::rename(&fresh, dir) {
        if had_old {
            let _ = std::fs::rename(&old, dir);
        }
        let _ = std::fs::remove_dir_all(&fresh);
        return Err(io(format!("moving the new report into {}", dir.display()))(
            e,
        ));
    }
    if had_old {
        let _ = std::fs::remove_dir_all(&old);
    }
    Ok(())
}
