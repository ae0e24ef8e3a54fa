//! The outputs of `cargo drift`: the verdict table for people ([`human`]),
//! the JSON document ([`json`]), JUnit XML ([`junit`]), a Markdown summary
//! for CI job pages ([`markdown`]), and the colour decision ([`color`]).

pub mod color;
pub mod human;
pub mod json;
pub mod junit;
pub mod markdown;

use super::model::{CheckResult, Row};

pub(crate) use crate::baseline::judge::figure;

/// A headline figure of a check (`order`, `best_digits`) from its figures.
pub(crate) fn headline(check: &CheckResult, key: &str) -> Option<f64> {
    check
        .figures
        .as_ref()
        .and_then(|f| f.get(key))
        .and_then(|v| v.as_f64())
}

pub(crate) use crate::baseline::judge::clip;
use crate::baseline::judge::{row_cells, row_lines};

/// The rows of a check as text lines: figure, recorded, measured, limit,
/// status, each column as wide as its widest cell (nothing is cut).
pub(crate) fn rows_table(rows: &[Row]) -> Vec<String> {
    let cells: Vec<[String; 5]> = rows
        .iter()
        .map(|r| row_cells(&r.metric, r.baseline, r.now, &r.allowed, &r.status))
        .collect();
    row_lines(&cells)
}

/// What a pass means, in one line.
pub const PASS_MEANS: &str =
    "A pass is numerical verification of steppers on reference problems, not validation of a physical model.";
