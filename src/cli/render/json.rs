//! The JSON document of a run (`--format json`), format 1:
//!
//! ```text
//! { "format": 1, "tool": "0.1.0", "exit_code": 0..3,
//!   "packages": [ { "name", "root",
//!                   "status": "checked" | "build-failed" | "crashed" | "timed-out" | "config-error",
//!                   "message": null | "text", "environment": null | { harness header },
//!                   "checks": [ { "name", "stepper", "problem", "verdict", "error", "rows", "figures",
//!                                 "claimed", "claims" } ] } ] }
//! ```
//! `checks` are as the harness wrote them (see `drift::harness::output`),
//! without the measurement `detail` (that goes into `cargo drift report`).

use serde_json::{json, Value};

use super::super::model::{exit_code, PackageOutcome, PackageRun};

/// Layout version.
pub const FORMAT: u32 = 1;

/// The document, pretty-printed.
pub fn json_document(runs: &[PackageRun]) -> String {
    let packages: Vec<Value> = runs
        .iter()
        .map(|r| {
            let (environment, checks) = match &r.outcome {
                PackageOutcome::Checked(rep) => (json!(rep.environment), json!(rep.checks)),
                _ => (Value::Null, json!([])),
            };
            json!({ "name": r.package, "root": r.root, "status": r.outcome.status(),
                    "message": r.outcome.message(), "environment": environment, "checks": checks })
        })
        .collect();
    let doc = json!({ "format": FORMAT, "tool": env!("CARGO_PKG_VERSION"), "exit_code": exit_code(runs), "packages": packages });
    serde_json::to_string_pretty(&doc).unwrap_or_else(|_| "{}".into())
}
