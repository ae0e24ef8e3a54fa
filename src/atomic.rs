//! Writing a file so that readers see either the old contents or the new,
//! never a half-written file: write a temporary file beside the target,
//! flush and sync it, then rename it over the target.

use std::fs;
use std::io::{self, Write};
use std::path::Path;

/// Which step of [`write_atomic`] failed, with the IO error.
#[derive(Debug)]
pub struct AtomicWriteError {
    /// What could not be done, e.g. `"create a temporary file beside it"`.
    pub step: &'static str,
    /// The underlying error.
    pub source: io::Error,
}

impl std::fmt::Display for AtomicWriteError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "cannot {}: {}", self.step, self.source)
    }
}

impl std::error::Error for AtomicWriteError {}

/// Replaces `path` with `bytes` atomically. The temporary file is
/// `.<name>.<pid>.tmp` in the same directory (so the rename stays on one
/// file system); an existing target's permissions are kept; on any error the
/// temporary file is removed and the target is untouched.
///
/// ```
/// let dir = std::env::temp_dir().join(format!("drift-atomic-doc-{}", std::process::id()));
/// std::fs::create_dir_all(&dir).unwrap();
/// let path = dir.join("out.txt");
/// drift::atomic::write_atomic(&path, b"new").unwrap();
/// assert_eq!(std::fs::read(&path).unwrap(), b"new");
/// std::fs::remove_dir_all(&dir).unwrap();
/// ```
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), AtomicWriteError> {
    let fail = |step| move |source| AtomicWriteError { step, source };
    let name = path
        .file_name()
        .ok_or_else(|| io::Error::new(io::ErrorKind::InvalidInput, "the path names no file"))
        .map_err(fail("name the file"))?;
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let mut tmp_name = std::ffi::OsString::from(".");
    tmp_name.push(name);
    tmp_name.push(format!(".{}.tmp", std::process::id()));
    let tmp = dir.join(tmp_name);
    let mut file = fs::File::create_new(&tmp).map_err(fail("create a temporary file beside it"))?;
    let written = (|| {
        file.write_all(bytes)?;
        file.flush()?;
        if let Ok(meta) = fs::metadata(path) {
            file.set_permissions(meta.permissions())?;
        }
        file.sync_all()?;
        drop(file);
        fs::rename(&tmp, path)
    })();
    if let Err(e) = written {
        // Best effort: the error being reported is the write's.
        let _ = fs::remove_file(&tmp);
        return Err(fail("write the file")(e));
    }
    sync_dir(dir);
    Ok(())
}

/// Makes the rename durable on Unix by syncing the directory (best effort;
/// other platforms cannot open a directory as a file).
fn sync_dir(dir: &Path) {
    #[cfg(unix)]
    if let Ok(d) = fs::File::open(dir) {
        let _ = d.sync_all();
    }
    #[cfg(not(unix))]
    let _ = dir;
}
