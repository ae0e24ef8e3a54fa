//! JUnit XML: one `<testsuite>` per package, one `<testcase>` per check;
//! regressed and claim-violated checks carry a `<failure>` with their rows,
//! errors an `<error>`; a package whose harness did not report is one
//! testcase `harness` with an `<error>`.

use super::super::model::{PackageOutcome, PackageRun};
use super::rows_table;

/// Escapes text for XML attributes and content, dropping characters XML 1.0
/// does not allow.
///
/// ```
/// assert_eq!(drift::cli::render::junit::escape("a<&\"'>\u{1}b"), "a&lt;&amp;&quot;&apos;&gt;b");
/// ```
pub fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\t' | '\n' | '\r' => out.push(c),
            c if (c as u32) < 0x20 || c == '\u{FFFE}' || c == '\u{FFFF}' => {}
            c => out.push(c),
        }
    }
    out
}

fn case(class: &str, name: &str, body: &str) -> String {
    format!(
        "    <testcase classname=\"{}\" name=\"{}\">{body}</testcase>\n",
        escape(class),
        escape(name)
    )
}

/// The XML document of `runs`.
pub fn junit_xml(runs: &[PackageRun]) -> String {
    let mut out = String::from(
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<testsuites name=\"cargo-drift\">\n",
    );
    for r in runs {
        let class = format!("drift.{}", r.package);
        let (mut cases, mut failures, mut errors, mut tests) = (String::new(), 0, 0, 0);
        match &r.outcome {
            PackageOutcome::Checked(rep) => {
                for c in &rep.checks {
                    tests += 1;
                    let table = rows_table(&c.rows).join("\n");
                    let body = match c.verdict.as_str() {
                        "regressed" | "claim-violated" => {
                            failures += 1;
                            format!(
                                "<failure message=\"{}\">{}</failure>",
                                escape(&c.verdict),
                                escape(&table)
                            )
                        }
                        "error" => {
                            errors += 1;
                            let msg = c.error.clone().unwrap_or_default();
                            format!(
                                "<error message=\"{}\">{}</error>",
                                escape(&msg),
                                escape(&table)
                            )
                        }
                        _ => String::new(),
                    };
                    cases.push_str(&case(&class, &c.name, &body));
                }
            }
            other => {
                tests += 1;
                errors += 1;
                let msg = other.message().unwrap_or_default();
                let body = format!(
                    "<error message=\"{}\">{}</error>",
                    escape(other.status()),
                    escape(&msg)
                );
                cases.push_str(&case(&class, "harness", &body));
            }
        }
        out.push_str(&format!(
            "  <testsuite name=\"{}\" tests=\"{tests}\" failures=\"{failures}\" errors=\"{errors}\">\n{cases}  </testsuite>\n",
            escape(&r.package)
        ));
    }
    out.push_str("</testsuites>\n");
    out
}
