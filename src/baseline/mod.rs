//! The baseline file `drift-baseline.toml`: the reviewed record of every
//! check's figures, read and written deterministically (header first, checks
//! by sorted key, figures rounded), written atomically, and the judging of a
//! new measurement against it and against the stepper's claims.
//!
//! The parts: [`record`] turns a measurement into a [`CheckRecord`];
//! `file` is the TOML layout and its validation; [`judge`](mod@judge)
//! compares and gives the [`Verdict`].

mod file;
pub mod judge;
pub mod record;

pub use judge::{claim_rows, judge, Judgement, MetricRow, RowStatus, Verdict};
pub use record::{
    round_figure, CheckRecord, DriftRecord, InvariantRecord, LadderRecord, RunsRecord,
    ToleranceRecord, DECIMALS,
};

use std::collections::BTreeMap;
use std::fmt;
use std::fs;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::env::Environment;
use file::{Located, Probe, RawCheck, RawFile};

/// Default file name of the baseline, beside `drift.toml`.
pub const FILE_NAME: &str = "drift-baseline.toml";

/// Version of the file layout this build writes; it reads this one and
/// every older one. Format 2 added the order reading's interval and status
/// (`order_low`, `order_high`, `order_status`), the uncertainties of best
/// digits, drift digits, the stored long and reversibility runs and the
/// tolerance proportionality; a format-1 file reads with those absent.
pub const FORMAT: u32 = 2;

/// The command that rewrites a baseline, named in error hints.
const RECORD_HINT: &str = "re-record it with `DRIFT_RECORD=1 cargo test --test drift`";

/// The header of the file: layout version, tool version and the environment
/// the figures were measured in.
///
/// ```
/// let h = drift::baseline::Header::current();
/// assert_eq!(h.format, drift::baseline::FORMAT);
/// assert_eq!(h.tool, env!("CARGO_PKG_VERSION"));
/// ```
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Header {
    /// Layout version ([`FORMAT`] when written by this build).
    pub format: u32,
    /// Version of cargo-drift that wrote the file.
    pub tool: String,
    /// Target triple.
    pub target: String,
    /// Compiler version.
    pub rustc: String,
    /// Profile and optimisation level.
    pub profile: String,
    /// Floating-point-relevant target features.
    pub features: Vec<String>,
}

impl Header {
    /// The header for an environment, written by this version of the tool.
    ///
    /// ```
    /// let env = drift::env::Environment::current();
    /// let h = drift::baseline::Header::from_environment(&env);
    /// assert_eq!(h.target, env.target);
    /// ```
    pub fn from_environment(env: &Environment) -> Header {
        Header {
            format: FORMAT,
            tool: env!("CARGO_PKG_VERSION").to_string(),
            target: env.target.clone(),
            rustc: env.rustc.clone(),
            profile: env.profile.clone(),
            features: env.features.clone(),
        }
    }

    /// The header for this build ([`Environment::current`]).
    ///
    /// ```
    /// assert!(!drift::baseline::Header::current().target.is_empty());
    /// ```
    pub fn current() -> Header {
        Header::from_environment(&Environment::current())
    }
}

/// What went wrong with a baseline file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ErrorKind {
    /// Not valid TOML, or a key or value that does not belong.
    Malformed,
    /// Written by a newer version of the file layout.
    NewerFormat,
    /// Reading or writing the file failed.
    Io,
}

/// An error about a baseline file: which file, where in it (1-based line and
/// column, when known), what is wrong and how to fix it.
///
/// ```
/// use std::path::Path;
/// let e = drift::baseline::Baseline::parse("[header]\nformat = \"one\"\n", Path::new("drift-baseline.toml")).unwrap_err();
/// assert!(e.to_string().starts_with("drift-baseline.toml:2:10: "), "{e}");
/// ```
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct BaselineError {
    /// The file.
    pub path: PathBuf,
    /// Line and column (1-based) of the problem, when it has a place.
    pub position: Option<(usize, usize)>,
    /// The kind of problem.
    pub kind: ErrorKind,
    /// What is wrong.
    pub message: String,
    /// How to fix it.
    pub hint: String,
}

impl fmt::Display for BaselineError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.path.display())?;
        if let Some((line, column)) = self.position {
            write!(f, ":{line}:{column}")?;
        }
        write!(f, ": {} — {}", self.message, self.hint)
    }
}

impl std::error::Error for BaselineError {}

impl BaselineError {
    fn io(path: &Path, what: &str, e: &std::io::Error) -> BaselineError {
        BaselineError {
            path: path.to_path_buf(),
            position: None,
            kind: ErrorKind::Io,
            message: format!("cannot {what}: {e}"),
            hint: "check that the path exists and is writable".into(),
        }
    }
}

/// The whole baseline file.
#[derive(Clone, Debug, PartialEq)]
pub struct Baseline {
    /// Format, tool and environment.
    pub header: Header,
    /// One record per check, by check name (e.g. `rk4/harmonic`).
    pub checks: BTreeMap<String, CheckRecord>,
}

impl Baseline {
    /// A baseline of `checks` with the header of this build.
    ///
    /// ```
    /// let b = drift::baseline::Baseline::new(Default::default());
    /// assert!(b.checks.is_empty());
    /// ```
    pub fn new(checks: BTreeMap<String, CheckRecord>) -> Baseline {
        Baseline {
            header: Header::current(),
            checks,
        }
    }

    /// Reads a baseline from `text`; `path` names the file in errors.
    ///
    /// A format version newer than [`FORMAT`] is an [`ErrorKind::NewerFormat`]
    /// error; anything malformed is an [`ErrorKind::Malformed`] error with
    /// its line and column.
    ///
    /// ```
    /// use std::path::Path;
    /// let text = drift::baseline::Baseline::new(Default::default()).to_toml();
    /// let b = drift::baseline::Baseline::parse(&text, Path::new("drift-baseline.toml")).unwrap();
    /// assert_eq!(b.header.format, drift::baseline::FORMAT);
    /// ```
    pub fn parse(text: &str, path: &Path) -> Result<Baseline, BaselineError> {
        let located = |l: Located, kind: ErrorKind, hint: String| BaselineError {
            path: path.to_path_buf(),
            position: Some(crate::textpos::line_column(
                text,
                l.span.map_or(0, |s| s.start),
            )),
            kind,
            message: l.message,
            hint,
        };
        let malformed = |l: Located| {
            located(
                l,
                ErrorKind::Malformed,
                format!("fix the file by hand or {RECORD_HINT}"),
            )
        };
        let probe: Probe = toml::from_str(text).map_err(|e| malformed(e.into()))?;
        let format = probe.header.format;
        if *format.get_ref() > FORMAT {
            let l = Located {
                span: Some(format.span()),
                message: format!(
                    "format {} was written by a newer cargo-drift (this one reads format {FORMAT})",
                    format.get_ref()
                ),
            };
            let hint =
                format!("upgrade cargo-drift, or {RECORD_HINT} to rewrite it in format {FORMAT}");
            return Err(located(l, ErrorKind::NewerFormat, hint));
        }
        if *format.get_ref() == 0 {
            return Err(malformed(Located {
                span: Some(format.span()),
                message: "format 0 is not a baseline format version".into(),
            }));
        }
        let raw: RawFile<toml::Spanned<RawCheck>> =
            toml::from_str(text).map_err(|e| malformed(e.into()))?;
        Ok(Baseline {
            header: raw.header,
            checks: file::records(raw.check).map_err(malformed)?,
        })
    }

    /// The file text: deterministic (header first, then one
    /// `[check."name"]` table per check in sorted order, invariants as
    /// sub-tables in sorted order), so equal baselines give identical bytes.
    ///
    /// ```
    /// let text = drift::baseline::Baseline::new(Default::default()).to_toml();
    /// assert!(text.starts_with("[header]\nformat = 2\n"));
    /// ```
    pub fn to_toml(&self) -> String {
        let raw = RawFile {
            header: self.header.clone(),
            check: self
                .checks
                .iter()
                .map(|(name, r)| (name.clone(), RawCheck::from(r)))
                .collect(),
        };
        // Strings, integers, floats, arrays and tables only: serialising them
        // cannot fail.
        toml::to_string(&raw).expect("baseline tables serialise to TOML")
    }

    /// Reads the baseline at `path`; a missing file is `Ok(None)`.
    ///
    /// ```
    /// let none = drift::baseline::Baseline::load(std::path::Path::new("no/such/drift-baseline.toml"));
    /// assert_eq!(none, Ok(None));
    /// ```
    pub fn load(path: &Path) -> Result<Option<Baseline>, BaselineError> {
        match fs::read_to_string(path) {
            Ok(text) => Baseline::parse(&text, path).map(Some),
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(None),
            Err(e) => Err(BaselineError::io(path, "read the baseline", &e)),
        }
    }

    /// Writes the baseline to `path` atomically: the text goes to a
    /// temporary file `.<name>.<pid>.tmp` in the same directory, is flushed
    /// and synced, and is then renamed over `path`. The old file is never
    /// half-written; on any error the temporary file is removed and the old
    /// file stays as it was. An existing file's permissions are kept.
    ///
    /// ```
    /// let dir = std::env::temp_dir().join(format!("drift-doc-{}", std::process::id()));
    /// std::fs::create_dir_all(&dir).unwrap();
    /// let path = dir.join("drift-baseline.toml");
    /// let b = drift::baseline::Baseline::new(Default::default());
    /// b.write_atomic(&path).unwrap();
    /// assert_eq!(drift::baseline::Baseline::load(&path).unwrap(), Some(b));
    /// std::fs::remove_dir_all(&dir).unwrap();
    /// ```
    pub fn write_atomic(&self, path: &Path) -> Result<(), BaselineError> {
        crate::atomic::write_atomic(path, self.to_toml().as_bytes())
            .map_err(|e| BaselineError::io(path, e.step, &e.source))
    }
}

/// The layout of the file and of the JSON measurements: the same keys as a
/// `[check."..."]` table.
impl Serialize for CheckRecord {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        RawCheck::from(self).serialize(serializer)
    }
}

/// Reads the figures of a check back from the same keys (a harness's JSON
/// document carries them), checked as a baseline table is.
///
/// ```
/// use drift::baseline::CheckRecord;
/// let text = r#"{ "kind": "stepper", "basis": "exact", "steps_per_unit": [16, 32],
///     "digits": [2.0, 3.2], "classes": ["fit", "fit"], "order": 3.99,
///     "order_residual": 0.0, "fit_from": 0, "fit_to": 1, "evals_per_step": 4.0 }"#;
/// let r: CheckRecord = serde_json::from_str(text).unwrap();
/// assert_eq!(r.fit.unwrap().order, 3.99);
/// assert!(serde_json::from_str::<CheckRecord>(r#"{ "kind": "stepper" }"#).is_err());
/// ```
impl<'de> serde::Deserialize<'de> for CheckRecord {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        RawCheck::deserialize(deserializer)?
            .into_record()
            .map_err(serde::de::Error::custom)
    }
}
