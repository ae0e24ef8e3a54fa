//! What a bisection found ([`BisectReport`]), its exit code, and its two
//! forms: the text for people (no line over 80 columns) and the JSON
//! document of `--format json` (format 1, layout in DEVELOPERS.md).

use serde::Serialize;
use serde_json::{json, Value};

use super::git::Commit;
use super::step::{StepRecord, Verdict};
use crate::cli::model::exit;
use crate::cli::render::{clip, figure, PASS_MEANS};

/// How the bisection ended.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Outcome {
    /// git named the first bad commit.
    Found,
    /// Skipped commits hide it: it is one of the candidates.
    OneOf,
    /// The bad revision passes against the good one: nothing to bisect.
    NoRegression,
    /// The bisection could not go on (the message says why).
    Stopped(String),
}

impl Outcome {
    /// `found`, `one-of`, `no-regression`, `stopped`.
    pub fn name(&self) -> &'static str {
        match self {
            Outcome::Found => "found",
            Outcome::OneOf => "one-of",
            Outcome::NoRegression => "no-regression",
            Outcome::Stopped(_) => "stopped",
        }
    }
}

/// A figure that moved from the good revision to the first bad commit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Moved {
    /// The check.
    pub check: String,
    /// Its verdict at the first bad commit.
    pub verdict: String,
    /// The figure, e.g. `order`.
    pub metric: String,
    /// Its value at the good revision (the reference).
    pub good: Option<f64>,
    /// Its value at the first bad commit.
    pub bad: Option<f64>,
    /// The limit in words.
    pub allowed: String,
    /// `worse` or `violated`.
    pub status: String,
}

impl Moved {
    /// The rows of the failing checks of a step that moved.
    pub fn from_step(step: &StepRecord) -> Vec<Moved> {
        step.checks
            .iter()
            .filter(|c| c.fails())
            .flat_map(|c| {
                let error = c.error.as_ref().map(|e| Moved {
                    check: c.name.clone(),
                    verdict: c.verdict.clone(),
                    metric: format!("error: {e}"),
                    good: None,
                    bad: None,
                    allowed: String::new(),
                    status: "error".into(),
                });
                let rows = c
                    .rows
                    .iter()
                    .filter(|r| r.status != "ok" && r.status != "better");
                rows.map(|r| Moved {
                    check: c.name.clone(),
                    verdict: c.verdict.clone(),
                    metric: r.metric.clone(),
                    good: r.baseline,
                    bad: r.now,
                    allowed: r.allowed.clone(),
                    status: r.status.clone(),
                })
                .chain(error)
                .collect::<Vec<_>>()
            })
            .collect()
    }
}

/// One commit the bisection measured.
#[derive(Debug, Clone, PartialEq)]
pub struct Tested {
    /// The commit.
    pub commit: Commit,
    /// `good` (the reference), `bad` (the end point) or `step`.
    pub role: &'static str,
    /// The step's verdict.
    pub verdict: Verdict,
    /// Why.
    pub reason: String,
}

/// Everything a bisection found.
#[derive(Debug, Clone, PartialEq)]
pub struct BisectReport {
    /// The package followed.
    pub package: String,
    /// `measured` or `committed`: where the reference figures came from.
    pub against: &'static str,
    /// The good revision.
    pub good: Commit,
    /// The bad revision.
    pub bad: Commit,
    /// Commits after good up to and including bad.
    pub commits: usize,
    /// cargo build attempts, all told.
    pub builds: usize,
    /// How it ended.
    pub outcome: Outcome,
    /// The first bad commit, or the candidates when skips hide it.
    pub first_bad: Vec<Commit>,
    /// What moved at the first (known) bad commit.
    pub moved: Vec<Moved>,
    /// Checks left out because they already fail at the good revision.
    pub left_out: Vec<String>,
    /// Every commit measured, in order.
    pub tested: Vec<Tested>,
}

impl BisectReport {
    /// The exit code: 1 a regression was found (the first bad commit or
    /// its candidates), 0 the bad revision does not regress, 3 the
    /// bisection stopped (a harness that does not build or cannot be
    /// judged at an end point, or a step that could not be judged).
    pub fn exit_code(&self) -> u8 {
        match self.outcome {
            Outcome::Found | Outcome::OneOf => exit::FAILED,
            Outcome::NoRegression => exit::PASS,
            Outcome::Stopped(_) => exit::BROKEN,
        }
    }
}

fn commit_line(c: &Commit) -> String {
    clip(&format!("{}  {}  {}", c.short(), &c.date, c.subject), 76)
}

fn moved_line(m: &Moved) -> String {
    if m.status == "error" {
        return clip(&m.metric, 74);
    }
    let limit = if m.allowed.is_empty() {
        String::new()
    } else {
        format!(" limit {}", m.allowed)
    };
    clip(
        &format!(
            "{:<20} {:>6} -> {:<6} {:<9}{limit}",
            clip(&m.metric, 20),
            figure(m.good),
            figure(m.bad),
            m.status
        ),
        74,
    )
}

/// Whether a row is one rung of the ladder (shown as a count for people).
fn is_rung(m: &Moved) -> bool {
    m.metric.starts_with("digits @")
}

/// The report for people.
pub fn human(r: &BisectReport) -> String {
    let mut out = String::new();
    let push = |out: &mut String, line: String| {
        out.push_str(&line);
        out.push('\n');
    };
    let source = if r.against == "committed" {
        "the baseline committed at the good revision"
    } else {
        "figures measured at the good revision"
    };
    push(
        &mut out,
        clip(
            &format!(
                "bisect {}: {} commits from good {} to bad {}",
                r.package,
                r.commits,
                r.good.short(),
                r.bad.short()
            ),
            80,
        ),
    );
    push(&mut out, format!("judged against {source}"));
    push(&mut out, String::new());
    match &r.outcome {
        Outcome::Found => push(&mut out, "first bad commit:".into()),
        Outcome::OneOf => push(
            &mut out,
            "first bad commit: one of these (skipped commits hide which):".into(),
        ),
        Outcome::NoRegression => push(
            &mut out,
            clip(
                &format!(
                    "no regression: {} passes against the good revision; nothing to bisect",
                    r.bad.short()
                ),
                80,
            ),
        ),
        Outcome::Stopped(why) => {
            push(&mut out, "bisect stopped:".into());
            for line in why.lines() {
                push(&mut out, format!("  {}", clip(line, 76)));
            }
        }
    }
    for c in &r.first_bad {
        push(&mut out, format!("  {}", commit_line(c)));
    }
    let mut checks: Vec<(&str, &str)> = r
        .moved
        .iter()
        .map(|m| (m.check.as_str(), m.verdict.as_str()))
        .collect();
    checks.dedup();
    for (check, verdict) in checks {
        push(&mut out, format!("    {} ({verdict})", clip(check, 50)));
        let rows: Vec<&Moved> = r.moved.iter().filter(|m| m.check == check).collect();
        for m in rows.iter().filter(|m| !is_rung(m)) {
            push(&mut out, format!("      {}", moved_line(m)));
        }
        let rungs = rows.iter().filter(|m| is_rung(m)).count();
        if rungs > 0 {
            push(
                &mut out,
                format!("      and {rungs} rung(s) of the ladder with fewer digits"),
            );
        }
    }
    if !r.left_out.is_empty() {
        push(
            &mut out,
            clip(
                &format!(
                    "left out, already failing at good: {}",
                    r.left_out.join(", ")
                ),
                80,
            ),
        );
    }
    push(&mut out, String::new());
    push(
        &mut out,
        format!(
            "commits tested ({} builds for {} commits):",
            r.builds, r.commits
        ),
    );
    for t in &r.tested {
        let what = match t.role {
            "good" if t.verdict == Verdict::Good => "the reference".to_string(),
            "step" => t.reason.clone(),
            role => format!("{role} end: {}", t.reason),
        };
        push(
            &mut out,
            clip(
                &format!(
                    "  {:<5} {}  {:<30}  {what}",
                    t.verdict.name(),
                    t.commit.short(),
                    clip(&t.commit.subject, 30)
                ),
                80,
            ),
        );
    }
    push(&mut out, String::new());
    for line in crate::cli::render::human::wrap(PASS_MEANS, 80) {
        push(&mut out, line);
    }
    out
}

/// The JSON document (format 1).
pub fn json_document(r: &BisectReport) -> String {
    let tested: Vec<Value> = r
        .tested
        .iter()
        .map(|t| {
            json!({ "hash": t.commit.hash, "subject": t.commit.subject, "date": t.commit.date,
                    "role": t.role, "verdict": t.verdict.name(), "reason": t.reason })
        })
        .collect();
    let message = match &r.outcome {
        Outcome::Stopped(why) => Some(why.clone()),
        _ => None,
    };
    let doc = json!({
        "format": 1, "tool": env!("CARGO_PKG_VERSION"), "verb": "bisect",
        "exit_code": r.exit_code(), "outcome": r.outcome.name(), "message": message,
        "package": r.package, "against": r.against, "good": r.good, "bad": r.bad,
        "commits": r.commits, "builds": r.builds, "first_bad": r.first_bad,
        "moved": r.moved, "left_out": r.left_out, "tested": tested,
    });
    serde_json::to_string_pretty(&doc).unwrap_or_else(|_| "{}".into())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cli::model::{CheckResult, Row};

    fn commit(n: u8, subject: &str) -> Commit {
        Commit {
            hash: format!("{n:02}").repeat(20),
            subject: subject.into(),
            date: "2030-01-0".to_string() + &n.to_string(),
        }
    }

    fn failing_step() -> StepRecord {
        let row = |metric: &str, b: f64, n: f64, status: &str| Row {
            metric: metric.into(),
            baseline: Some(b),
            now: Some(n),
            allowed: ">= 3.90".into(),
            status: status.into(),
        };
        StepRecord {
            commit: None,
            verdict: Verdict::Bad,
            skip: None,
            reason: "rk4/harmonic claim-violated".into(),
            builds: 1,
            checks: vec![CheckResult {
                name: "rk4/harmonic".into(),
                stepper: "rk4".into(),
                problem: "harmonic".into(),
                verdict: "claim-violated".into(),
                error: None,
                rows: vec![
                    row("order", 4.0, 1.0, "worse"),
                    row("best digits", 14.4, 14.4, "ok"),
                    row("digits @ 16/unit", 3.1, 1.2, "worse"),
                    row("digits @ 32/unit", 4.3, 1.5, "worse"),
                ],
                figures: None,
                claimed: Default::default(),
                claims: vec![],
                detail: None,
            }],
        }
    }

    fn report() -> BisectReport {
        BisectReport {
            package: "crane".into(),
            against: "measured",
            good: commit(1, "start"),
            bad: commit(9, "end"),
            commits: 8,
            builds: 5,
            outcome: Outcome::Found,
            first_bad: vec![commit(5, "Retune the stages")],
            moved: Moved::from_step(&failing_step()),
            left_out: vec![],
            tested: vec![
                Tested {
                    commit: commit(1, "start"),
                    role: "good",
                    verdict: Verdict::Good,
                    reason: "1 check passes".into(),
                },
                Tested {
                    commit: commit(4, "broken"),
                    role: "step",
                    verdict: Verdict::Skip,
                    reason: "does not build".into(),
                },
            ],
        }
    }

    #[test]
    fn moved_keeps_only_rows_that_got_worse() {
        let moved = Moved::from_step(&failing_step());
        assert_eq!(moved.len(), 3);
        assert_eq!(
            (moved[0].metric.as_str(), moved[0].good, moved[0].bad),
            ("order", Some(4.0), Some(1.0))
        );
    }

    #[test]
    fn human_names_the_commit_the_figure_and_the_skip() {
        let text = human(&report());
        assert!(text.contains(&commit(5, "x").hash[..10]), "{text}");
        assert!(text.contains("Retune the stages"), "{text}");
        let order = text.lines().find(|l| l.contains("order")).unwrap();
        assert!(order.contains("4.00 -> 1.00"), "{order}");
        assert!(
            text.contains("skip") && text.contains("does not build"),
            "{text}"
        );
        assert!(text.contains("5 builds for 8 commits"), "{text}");
        assert!(text.contains("and 2 rung(s) of the ladder"), "{text}");
        assert!(
            !text.contains("digits @"),
            "rungs are counted, not listed: {text}"
        );
        assert!(text.lines().all(|l| l.chars().count() <= 80), "{text}");
        assert!(text.contains("not\nvalidation") || text.contains("not validation"));
    }

    #[test]
    fn exit_codes_follow_the_outcome() {
        let mut r = report();
        assert_eq!(r.exit_code(), 1);
        r.outcome = Outcome::NoRegression;
        assert_eq!(r.exit_code(), 0);
        r.outcome = Outcome::Stopped("x".into());
        assert_eq!(r.exit_code(), 3);
        let doc: Value = serde_json::from_str(&json_document(&r)).unwrap();
        assert_eq!(
            (doc["exit_code"].as_u64(), doc["outcome"].as_str()),
            (Some(3), Some("stopped"))
        );
        assert_eq!(doc["tested"][1]["verdict"], "skip");
    }
}
