//! The outputs of `cargo drift`: the verdict table for people ([`human`]),
//! the JSON document ([`json`]), JUnit XML ([`junit`]), a Markdown summary
//! for CI job pages ([`markdown`]), and the colour decision ([`color`]).

pub mod color;
pub mod human;
pub mod json;
pub mod junit;
pub mod markdown;

use super::model::{CheckResult, Row};

/// A figure to 2 decimals, `-` when absent.
pub(crate) fn figure(v: Option<f64>) -> String {
    v.map_or_else(|| "-".to_string(), |v| format!("{v:.2}"))
}

/// A headline figure of a check (`order`, `best_digits`) from its figures.
pub(crate) fn headline(check: &CheckResult, key: &str) -> Option<f64> {
    check
        .figures
        .as_ref()
        .and_then(|f| f.get(key))
        .and_then(|v| v.as_f64())
}

pub(crate) use crate::baseline::judge::clip;

/// The rows of a check as fixed-width text lines (at most 76 columns before
/// any indent): figure, recorded, measured, limit, status.
pub(crate) fn rows_table(rows: &[Row]) -> Vec<String> {
    let mut lines = vec![format!(
        "{:<26} {:>8} {:>8}  {:<20} {}",
        "figure", "recorded", "measured", "limit", "status"
    )];
    for r in rows {
        lines.push(format!(
            "{:<26} {:>8} {:>8}  {:<20} {}",
            clip(&r.metric, 26),
            figure(r.baseline),
            figure(r.now),
            clip(&r.allowed, 20),
            r.status
        ));
    }
    lines
}

/// What a pass means, in one line.
pub const PASS_MEANS: &str =
    "A pass is numerical verification of steppers on reference problems, not validation of a physical model.";
