//! `cargo drift report`: measure every check, then write a certificate of
//! each stepper's measured properties as a self-contained HTML page
//! ([`html`]), a Markdown page ([`markdown`]) with SVG plots ([`plot`])
//! beside it, and JSON ([`cert`], layout in `docs/report.schema.json`),
//! into one directory written whole ([`out`]).

pub mod cert;
pub mod html;
pub mod markdown;
pub mod out;
pub mod plot;
pub mod tables;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::Command;

use cert::{package_cert, Certificate, PackageCert, Source, CAUTION, REPORT_FORMAT};

/// File names inside the report directory.
pub const HTML_FILE: &str = "index.html";
/// The Markdown page.
pub const MARKDOWN_FILE: &str = "report.md";
/// The JSON document.
pub const JSON_FILE: &str = out::MARKER;

/// The UTC time `secs` after the Unix epoch in RFC 3339, by the
/// days-to-civil algorithm of H. Hinnant ("chrono-Compatible Low-Level Date
/// Algorithms", 2013).
///
/// ```
/// use drift::cli::report::utc_timestamp;
/// assert_eq!(utc_timestamp(0), "1970-01-01T00:00:00Z");
/// assert_eq!(utc_timestamp(951_782_400), "2000-02-29T00:00:00Z"); // a leap day
/// assert_eq!(utc_timestamp(1_796_165_345), "2026-12-01T22:49:05Z");
/// ```
pub fn utc_timestamp(secs: u64) -> String {
    let days = (secs / 86_400) as i64;
    let rem = secs % 86_400;
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1_460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    let year = yoe + era * 400 + i64::from(month <= 2);
    format!(
        "{year:04}-{month:02}-{day:02}T{:02}:{:02}:{:02}Z",
        rem / 3_600,
        rem / 60 % 60,
        rem % 60
    )
}

/// Seconds since the epoch: `SOURCE_DATE_EPOCH` when set (reproducible
/// output, as the reproducible-builds convention has it), else now.
fn now_secs() -> u64 {
    std::env::var("SOURCE_DATE_EPOCH")
        .ok()
        .and_then(|s| s.trim().parse().ok())
        .unwrap_or_else(|| {
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map_or(0, |d| d.as_secs())
        })
}

/// The git revision of the code in `dir`, when it is in a repository.
pub fn git_source(dir: &Path) -> Source {
    let git = |args: &[&str]| -> Option<String> {
        let out = Command::new("git")
            .arg("-C")
            .arg(dir)
            .args(args)
            .output()
            .ok()?;
        out.status
            .success()
            .then(|| String::from_utf8_lossy(&out.stdout).trim().to_string())
    };
    let commit = git(&["rev-parse", "HEAD"]);
    let dirty = commit.is_some()
        && git(&["status", "--porcelain", "--untracked-files=no"]).is_some_and(|s| !s.is_empty());
    Source { commit, dirty }
}

/// A file-name-safe form of `name`.
fn slug(name: &str) -> String {
    name.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                c
            } else {
                '-'
            }
        })
        .collect()
}

/// Draws every plot of `pkg`, naming the files in it; the SVG text by file
/// name.
fn draw(pkg: &mut PackageCert) -> Result<BTreeMap<String, String>, plot::PlotError> {
    let mut svgs = BTreeMap::new();
    let base = slug(&pkg.name);
    for s in &mut pkg.steppers {
        let name = format!("{base}-{}", slug(&s.name));
        if let Some(svg) = plot::convergence(s)? {
            let file = format!("{name}-convergence.svg");
            svgs.insert(file.clone(), svg);
            s.convergence_plot = Some(file);
        }
        if let Some(svg) = plot::invariants(s)? {
            let file = format!("{name}-invariants.svg");
            svgs.insert(file.clone(), svg);
            s.invariant_plot = Some(file);
        }
    }
    if let Some(svg) = plot::work_precision(pkg)? {
        let file = format!("{base}-work-precision.svg");
        svgs.insert(file.clone(), svg);
        pkg.work_precision_plot = Some(file);
    }
    Ok(svgs)
}

/// The report's files (name, content) for `runs` measured from the code in
/// `source_dir`.
pub fn files(
    runs: &[crate::cli::model::PackageRun],
    source_dir: &Path,
) -> Result<Vec<(String, Vec<u8>)>, plot::PlotError> {
    let mut cert = Certificate {
        format: REPORT_FORMAT,
        tool: env!("CARGO_PKG_VERSION").to_string(),
        generated: utc_timestamp(now_secs()),
        source: git_source(source_dir),
        caution: CAUTION.to_string(),
        packages: runs.iter().map(package_cert).collect(),
    };
    let mut svgs = BTreeMap::new();
    for p in &mut cert.packages {
        svgs.append(&mut draw(p)?);
    }
    let json = serde_json::to_string_pretty(&cert).map_err(|e| plot::PlotError(e.to_string()))?;
    let mut files = vec![
        (HTML_FILE.to_string(), html::page(&cert, &svgs).into_bytes()),
        (
            MARKDOWN_FILE.to_string(),
            markdown::page(&cert).into_bytes(),
        ),
        (JSON_FILE.to_string(), json.into_bytes()),
    ];
    files.extend(svgs.into_iter().map(|(k, v)| (k, v.into_bytes())));
    Ok(files)
}

/// Where the report goes by default: `drift-report` in the target
/// directory (never committed by accident).
pub fn default_dir(target_dir: &Path) -> PathBuf {
    target_dir.join("drift-report")
}
