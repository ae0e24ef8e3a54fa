//! The figures every commit of a bisection is judged against, as a baseline
//! file in the session's temporary directory: either the good revision's
//! own measurements (the default, so that a baseline re-recorded along the
//! way does not mislead) or the baseline file committed at the good
//! revision.

use std::path::Path;

use serde_json::{json, Map, Value};

use super::git::Repo;
use crate::baseline::{Baseline, Header};
use crate::cli::model::CheckResult;

/// Writes the figures of the checks that measured cleanly at the good
/// revision (`checks` of its step) to `path`; the names of the checks left
/// out because they already fail there.
pub fn from_measurements(checks: &[CheckResult], path: &Path) -> Result<Vec<String>, String> {
    let mut tables = Map::new();
    let mut left_out = Vec::new();
    for c in checks {
        match (&c.figures, c.fails()) {
            (Some(figures), false) => {
                tables.insert(c.name.clone(), without_nulls(figures.clone()));
            }
            _ => left_out.push(format!("{} ({})", c.name, c.verdict)),
        }
    }
    let doc = json!({ "header": Header::current(), "check": tables });
    let text = toml::to_string(&doc)
        .map_err(|e| format!("cannot write the good revision's figures as a baseline: {e}"))?;
    let baseline = Baseline::parse(&text, path).map_err(|e| e.to_string())?;
    baseline.write_atomic(path).map_err(|e| e.to_string())?;
    Ok(left_out)
}

/// `value` without its null members (absent figures, which TOML has no
/// way to write and the baseline leaves out).
///
/// ```
/// use drift::cli::bisect::reference::without_nulls;
/// let v = serde_json::json!({ "a": null, "b": { "c": null, "d": 1 } });
/// assert_eq!(without_nulls(v), serde_json::json!({ "b": { "d": 1 } }));
/// ```
pub fn without_nulls(value: Value) -> Value {
    match value {
        Value::Object(map) => Value::Object(
            map.into_iter()
                .filter(|(_, v)| !v.is_null())
                .map(|(k, v)| (k, without_nulls(v)))
                .collect(),
        ),
        Value::Array(items) => Value::Array(items.into_iter().map(without_nulls).collect()),
        other => other,
    }
}

/// The `/`-separated path of `file` under the package directory `package`
/// (relative to the repository top; empty for the top itself).
fn in_package(package: &str, file: &str) -> String {
    let file = file.trim_start_matches("./");
    if package.is_empty() {
        file.to_string()
    } else {
        format!("{package}/{file}")
    }
}

/// The baseline path `drift.toml` names (`settings.baseline`), relative to
/// the package root, in the declaration file's text.
///
/// ```
/// use drift::cli::bisect::reference::baseline_setting;
/// assert_eq!(baseline_setting("[settings]\nbaseline = \"ci/base.toml\"\n"), "ci/base.toml");
/// assert_eq!(baseline_setting(""), "drift-baseline.toml");
/// ```
pub fn baseline_setting(declaration: &str) -> String {
    let value: Option<Value> = toml::from_str(declaration).ok();
    value
        .as_ref()
        .and_then(|v| v.get("settings"))
        .and_then(|s| s.get("baseline"))
        .and_then(Value::as_str)
        .unwrap_or("drift-baseline.toml")
        .to_string()
}

/// Copies the baseline file committed at `good` for the package at
/// `package` (relative to the top, `/`-separated) whose declaration file is
/// `declaration` to `path`, checking that it reads.
pub fn from_commit(
    repo: &Repo,
    good: &str,
    package: &str,
    declaration: &str,
    path: &Path,
) -> Result<(), String> {
    let decl = repo
        .show(good, &in_package(package, declaration))
        .map_err(|e| e.to_string())?
        .unwrap_or_default();
    let file = in_package(package, &baseline_setting(&decl));
    let text = repo
        .show(good, &file)
        .map_err(|e| e.to_string())?
        .ok_or_else(|| {
            format!(
                "no baseline file {file} is committed at the good revision\n  help: \
             leave out --against committed to measure the good revision instead"
            )
        })?;
    let shown = Path::new(&file);
    let baseline = Baseline::parse(&text, shown).map_err(|e| e.to_string())?;
    baseline.write_atomic(path).map_err(|e| e.to_string())
}
