//! A Markdown summary for a CI job summary page: the result, a table per
//! package, the figures of each failing check, and the caution.

use super::super::model::{exit_code, PackageOutcome, PackageRun};
use super::{figure, headline};

/// Text made safe for a Markdown table cell.
pub(crate) fn cell(s: &str) -> String {
    s.replace('|', "\\|")
}

/// The summary of `runs`.
pub fn markdown_summary(runs: &[PackageRun]) -> String {
    let result = match exit_code(runs) {
        0 => "every check passed",
        1 => "checks failed: accuracy or order was lost, or a claim does not hold",
        2 => "a configuration error stopped a package",
        _ => "a harness failed to build, crashed or timed out",
    };
    let mut out = format!("# cargo drift\n\nResult: **{result}**.\n");
    for r in runs {
        out.push_str(&format!("\n## {}\n\n", cell(&r.package)));
        match &r.outcome {
            PackageOutcome::Checked(rep) => {
                out.push_str(
                    "| verdict | check | order | best digits |\n| --- | --- | ---: | ---: |\n",
                );
                for c in &rep.checks {
                    out.push_str(&format!(
                        "| {} | `{}` | {} | {} |\n",
                        c.verdict,
                        cell(&c.name),
                        figure(headline(c, "order")),
                        figure(headline(c, "best_digits"))
                    ));
                }
                for c in rep.checks.iter().filter(|c| c.fails()) {
                    out.push_str(&format!(
                        "\n<details><summary><code>{}</code>: {}</summary>\n\n",
                        cell(&c.name),
                        c.verdict
                    ));
                    if let Some(e) = &c.error {
                        out.push_str(&format!("{}\n\n", cell(e)));
                    }
                    if !c.rows.is_empty() {
                        out.push_str("| figure | recorded | measured | limit | status |\n| --- | ---: | ---: | --- | --- |\n");
                        for row in &c.rows {
                            out.push_str(&format!(
                                "| {} | {} | {} | {} | {} |\n",
                                cell(&row.metric),
                                figure(row.baseline),
                                figure(row.now),
                                cell(&row.allowed),
                                row.status
                            ));
                        }
                    }
                    out.push_str("\n</details>\n");
                }
            }
            other => {
                out.push_str(&format!(
                    "**{}**\n\n```text\n{}\n```\n",
                    other.status(),
                    other.message().unwrap_or_default()
                ));
            }
        }
    }
    out.push_str(
        "\n_A pass is numerical verification of steppers on reference problems, not validation of a physical \
         model; for safety-relevant work defer to the applicable verification-and-validation standards and \
         licensed engineering judgment._\n",
    );
    out
}
