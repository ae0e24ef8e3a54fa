//! The outputs of `cargo drift` on hand-built runs: the human table fits 80
//! columns and colours only when asked, the JSON document has its schema
//! and exit code, JUnit XML is well formed with the right counts and
//! escaping (JUnit XML as CI servers read it: testsuites/testsuite/testcase
//! with failure and error children), the Markdown summary has its tables
//! and the caution.

use drift::baseline::Header;
use drift::cli::model::{CheckResult, HarnessReport, PackageOutcome, PackageRun, Row};
use drift::cli::render::{human, json, junit, markdown};

fn check(name: &str, verdict: &str, rows: Vec<Row>) -> CheckResult {
    CheckResult {
        name: name.into(),
        stepper: "rk4".into(),
        problem: "harmonic".into(),
        verdict: verdict.into(),
        error: None,
        rows,
        figures: Some(serde_json::json!({ "order": 4.0, "best_digits": 13.5 })),
        claimed: Default::default(),
        claims: vec![],
        detail: None,
    }
}

fn runs() -> Vec<PackageRun> {
    let row = Row {
        metric: "order".into(),
        baseline: Some(4.0),
        now: Some(1.0),
        allowed: ">= 3.90".into(),
        status: "worse".into(),
    };
    let report = |checks| HarnessReport {
        format: 1,
        tool: "0.1.0".into(),
        environment: Header::current(),
        baseline: None,
        checks,
    };
    vec![
        PackageRun {
            package: "good".into(),
            root: "/w/good".into(),
            outcome: PackageOutcome::Checked(Box::new(report(vec![check(
                "rk4/harmonic",
                "pass",
                vec![],
            )]))),
        },
        PackageRun {
            package: "bad".into(),
            root: "/w/bad".into(),
            outcome: PackageOutcome::Checked(Box::new(report(vec![
                check("rk4/<&\"weird'>", "regressed", vec![row]),
                check(
                    "rk4/kepler-with-a-very-long-check-name-that-goes-on-and-on",
                    "new",
                    vec![],
                ),
            ]))),
        },
        PackageRun {
            package: "broken".into(),
            root: "/w/broken".into(),
            outcome: PackageOutcome::BuildFailed("did not build".into()),
        },
    ]
}

#[test]
fn human_table_fits_80_columns_and_colours_on_request() {
    let plain = human::verdict_table(&runs(), false);
    for name in [
        "rk4/harmonic",
        "rk4/<&\"weird'>",
        "build-failed",
        "did not build",
    ] {
        assert!(plain.contains(name), "{name} missing:\n{plain}");
    }
    assert!(plain.lines().all(|l| l.chars().count() <= 80), "{plain}");
    assert!(!plain.contains('\x1b'));
    assert!(plain.contains("validation of a physical model"), "{plain}");
    assert!(human::verdict_table(&runs(), true).contains("\x1b["));
}

#[test]
fn json_document_has_schema_and_exit_code() {
    let doc: serde_json::Value = serde_json::from_str(&json::json_document(&runs())).unwrap();
    assert_eq!(doc["format"], 1);
    assert_eq!(doc["exit_code"], 3);
    let p = doc["packages"].as_array().unwrap();
    assert_eq!(p.len(), 3);
    assert_eq!(p[2]["status"], "build-failed");
    assert!(p[2]["environment"].is_null());
    assert_eq!(p[1]["checks"][0]["verdict"], "regressed");
}

/// Minimal well-formedness check: tags balance, attribute values contain no
/// raw `<` or `&` that is not an entity.
fn well_formed(xml: &str) -> bool {
    let mut stack: Vec<String> = Vec::new();
    let mut rest = xml;
    while let Some(start) = rest.find('<') {
        let end = match rest[start..].find('>') {
            Some(e) => start + e,
            None => return false,
        };
        let tag = &rest[start + 1..end];
        if tag.contains('<') {
            return false;
        }
        if let Some(name) = tag.strip_prefix('/') {
            if stack.pop().as_deref() != Some(name) {
                return false;
            }
        } else if !tag.starts_with('?') && !tag.ends_with('/') {
            stack.push(tag.split_whitespace().next().unwrap_or("").to_string());
        }
        rest = &rest[end + 1..];
    }
    stack.is_empty()
        && !xml
            .replace("&amp;", "")
            .replace("&lt;", "")
            .replace("&gt;", "")
            .replace("&quot;", "")
            .replace("&apos;", "")
            .contains('&')
}

#[test]
fn junit_is_well_formed_with_counts_and_escaping() {
    let xml = junit::junit_xml(&runs());
    assert!(well_formed(&xml), "{xml}");
    assert!(
        xml.contains("name=\"bad\" tests=\"2\" failures=\"1\" errors=\"0\""),
        "{xml}"
    );
    assert!(
        xml.contains("name=\"broken\" tests=\"1\" failures=\"0\" errors=\"1\""),
        "{xml}"
    );
    assert!(xml.contains("rk4/&lt;&amp;&quot;weird&apos;&gt;"), "{xml}");
    assert!(xml.contains("<failure message=\"regressed\">"), "{xml}");
}

#[test]
fn markdown_has_tables_and_the_caution() {
    let md = markdown::markdown_summary(&runs());
    assert!(md.contains("| verdict | check | order | best digits |"));
    assert!(
        md.contains("<details>")
            && md.contains("| figure | recorded | measured | limit | status |")
    );
    assert!(md.contains("licensed engineering judgment"));
}
