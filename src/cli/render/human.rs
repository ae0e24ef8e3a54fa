//! The verdict table for people: one line per check, the figures that moved
//! under a failing check, a count at the end; no line over 80 columns.

use std::collections::BTreeMap;

use super::super::model::{CheckResult, PackageOutcome, PackageRun};
use super::{clip, color, figure, headline, rows_table, PASS_MEANS};

/// The order of a check with its interval: `4.00 ±0.02` in the asymptotic
/// range, `~4.22 conv.` while the local slope still moves (converging),
/// `0.00 plat.` with a plateau, `-` without a reading.
fn order_text(check: &CheckResult) -> String {
    let Some(order) = headline(check, "order") else {
        return "-".into();
    };
    let status = check
        .figures
        .as_ref()
        .and_then(|f| f.get("order_status"))
        .and_then(|v| v.as_str());
    match status {
        Some("converging") => format!("~{order:.2} conv."),
        Some("plateau") => format!("{order:.2} plat."),
        _ => match (headline(check, "order_low"), headline(check, "order_high")) {
            (Some(lo), Some(hi)) => format!("{order:.2} \u{b1}{:.2}", (hi - lo) / 2.0),
            _ => format!("{order:.2}"),
        },
    }
}

/// The table of `runs`, coloured when `on`.
pub fn verdict_table(runs: &[PackageRun], on: bool) -> String {
    let mut out = String::new();
    let mut counts: BTreeMap<String, usize> = BTreeMap::new();
    for run in runs {
        out.push_str(&color::bold(
            &clip(&format!("{}  ({})", run.package, run.root.display()), 80),
            on,
        ));
        out.push('\n');
        match &run.outcome {
            PackageOutcome::Checked(report) => {
                if report.checks.is_empty() {
                    out.push_str("  no check matched\n");
                }
                for c in &report.checks {
                    *counts.entry(c.verdict.clone()).or_default() += 1;
                    let word = color::verdict(&format!("{:<14}", c.verdict), &c.verdict, on);
                    let figures = format!(
                        "order {:<11} best {:>5}",
                        order_text(c),
                        figure(headline(c, "best_digits"))
                    );
                    out.push_str(&format!("  {word} {:<34} {figures}\n", clip(&c.name, 34)));
                    if let Some(e) = &c.error {
                        for line in e.lines() {
                            out.push_str(&format!("      {line}\n"));
                        }
                    }
                    if c.fails() && !c.rows.is_empty() {
                        for line in rows_table(&c.rows) {
                            out.push_str(&format!("    {line}\n"));
                        }
                    }
                }
            }
            other => {
                *counts.entry(other.status().to_string()).or_default() += 1;
                out.push_str(&format!(
                    "  {}\n",
                    color::verdict(other.status(), "error", on)
                ));
                for line in other.message().unwrap_or_default().lines() {
                    out.push_str(&format!("    {}\n", clip(line, 76)));
                }
            }
        }
    }
    let tally: Vec<String> = counts.iter().map(|(k, n)| format!("{n} {k}")).collect();
    out.push_str(&format!(
        "\n{} in {} package(s)\n",
        tally.join(", "),
        runs.len()
    ));
    for line in wrap(PASS_MEANS, 80) {
        out.push_str(&line);
        out.push('\n');
    }
    out
}

/// Words of `text` in lines of at most `width` characters.
pub(crate) fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = vec![String::new()];
    for word in text.split_whitespace() {
        let last = lines.last_mut().expect("one line");
        if !last.is_empty() && last.len() + 1 + word.len() > width {
            lines.push(word.to_string());
        } else {
            if !last.is_empty() {
                last.push(' ');
            }
            last.push_str(word);
        }
    }
    lines
}
