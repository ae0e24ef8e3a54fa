//! No false alarms, and teeth: every test stepper comes in several
//! accuracy-neutral rewrites (reordered sums, split weights, FMA, another
//! scratch layout: the same method up to rounding). Each rewrite records a
//! baseline of its standard battery through the real harness, and every
//! other rewrite of the same method is judged against it, in both
//! directions: no check may fail. The planted bugs of
//! tests/common/steppers.rs, judged against the same baselines, must fail.
//!
//! Everything runs in this one test, in sequence, because the harness reads
//! its modes from the process environment.

mod common;

use std::path::{Path, PathBuf};

use common::rewrites::{families, planted, Family, Variant};
use drift::harness::{ENV_BASELINE, ENV_MEASUREMENTS, ENV_RECORD};
use drift::Harness;
use libtest_mimic::Arguments;

/// A fresh directory for one family under the target directory.
fn workdir(name: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("target")
        .join("neutral")
        .join(name);
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("scratch directory");
    dir
}

/// The failing checks of one harness run of `variant` (registered as the
/// family's stepper) against `baseline`, recording it when `record`.
fn run(
    dir: &Path,
    family: &Family,
    variant: &Variant,
    baseline: &Path,
    record: bool,
) -> Vec<String> {
    let out = dir.join("measurements.json");
    let _ = std::fs::remove_file(&out);
    std::env::set_var(ENV_BASELINE, baseline);
    std::env::set_var(ENV_MEASUREMENTS, &out);
    if record {
        std::env::set_var(ENV_RECORD, "1");
    } else {
        std::env::remove_var(ENV_RECORD);
    }
    // The inner runs' own test lines (a planted bug's are failures, as
    // they must be) go to a log beside the measurements, not into this
    // test's output.
    let args = Arguments {
        quiet: true,
        logfile: Some(dir.join("harness.log").to_string_lossy().into_owned()),
        ..Arguments::default()
    };
    let harness = (variant.register)(Harness::new().root(dir), family.name);
    let _ = harness.run(&args).expect("the harness starts");
    let text = std::fs::read_to_string(&out).expect("the harness wrote its measurements");
    let doc: serde_json::Value = serde_json::from_str(&text).expect("measurements are JSON");
    let checks = doc["checks"].as_array().expect("checks").clone();
    assert!(!checks.is_empty(), "{}: no check ran", variant.name);
    checks
        .iter()
        .filter(|c| {
            let v = c["verdict"].as_str().unwrap_or("?");
            let bad = matches!(v, "regressed" | "claim-violated" | "error" | "improved");
            bad || (record && v == "error")
        })
        .map(|c| {
            let rows = c["rows"]
                .as_array()
                .map(|rows| {
                    rows.iter()
                        .filter(|r| r["status"] != "ok")
                        .map(|r| {
                            format!(
                                "{} {} -> {} ({}, {})",
                                r["metric"], r["baseline"], r["now"], r["allowed"], r["status"]
                            )
                        })
                        .collect::<Vec<_>>()
                        .join("; ")
                })
                .unwrap_or_default();
            format!(
                "{} as {}: {} {} {}",
                variant.name,
                c["name"].as_str().unwrap_or("?"),
                c["verdict"],
                c["error"],
                rows
            )
        })
        .collect()
}

#[test]
fn neutral_rewrites_never_fail_and_planted_bugs_always_do() {
    let mut false_alarms = Vec::new();
    let mut missed = Vec::new();
    let mut judged = 0;
    for family in families() {
        assert!(
            family.variants.len() >= 3,
            "{}: the original and at least two rewrites",
            family.name
        );
        let dir = workdir(family.name);
        std::fs::write(
            dir.join("drift.toml"),
            format!("[stepper.{}]\norder = {}\n", family.name, family.order),
        )
        .expect("drift.toml");
        let baselines: Vec<PathBuf> = (0..family.variants.len())
            .map(|i| dir.join(format!("baseline-{i}.toml")))
            .collect();
        for (v, path) in family.variants.iter().zip(&baselines) {
            false_alarms.extend(run(&dir, &family, v, path, true));
        }
        for (i, base) in baselines.iter().enumerate() {
            for (j, v) in family.variants.iter().enumerate() {
                if i != j {
                    judged += 1;
                    let fails = run(&dir, &family, v, base, false);
                    false_alarms.extend(
                        fails
                            .into_iter()
                            .map(|f| format!("against {}: {f}", family.variants[i].name)),
                    );
                }
            }
        }
        for bug in planted(family.name) {
            if run(&dir, &family, &bug, &baselines[0], false).is_empty() {
                missed.push(format!(
                    "{} passed against {}",
                    bug.name, family.variants[0].name
                ));
            }
        }
    }
    println!("{judged} judged pairs");
    assert!(
        false_alarms.is_empty(),
        "neutral rewrites failed:\n{}",
        false_alarms.join("\n")
    );
    assert!(
        missed.is_empty(),
        "planted bugs passed:\n{}",
        missed.join("\n")
    );
}
