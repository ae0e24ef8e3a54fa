//! The report as a Markdown page with the plots as SVG files beside it:
//! the same header, caution, summary, claims, plots and tables as the HTML
//! page, for a repository's release notes or a review thread.

use super::cert::{Certificate, StepperCert};
use super::html::{CONVERGENCE_CAPTION, INVARIANT_CAPTION, WORK_CAPTION};
use super::tables::{self, Table, Tone};
use crate::cli::render::markdown::cell;

fn table(t: &Table) -> String {
    let mut out = format!(
        "| {} |\n|{}\n",
        t.head
            .iter()
            .map(|h| cell(h))
            .collect::<Vec<_>>()
            .join(" | "),
        " --- |".repeat(t.head.len())
    );
    for row in &t.rows {
        let cells: Vec<String> = row
            .iter()
            .map(|c| match c.tone {
                Tone::Bad => format!("**{}**", cell(&c.text)),
                Tone::Muted => format!("_{}_", cell(&c.text)),
                Tone::Plain | Tone::Good => cell(&c.text),
            })
            .collect();
        out.push_str(&format!("| {} |\n", cells.join(" | ")));
    }
    out.push('\n');
    out
}

fn image(file: &Option<String>, alt: &str, caption: &str) -> String {
    match file {
        Some(f) => format!("![{alt}]({f})\n\n_{caption}_\n\n"),
        None => String::new(),
    }
}

fn stepper(s: &StepperCert) -> String {
    let mut out = format!(
        "### Stepper `{}` ({}): {}\n\n",
        s.name,
        s.kind,
        tables::verdict_phrase(&s.verdict)
    );
    if s.claims.is_empty() {
        out.push_str("No claims are declared for this stepper in drift.toml; the figures below are measured only.\n\n");
    } else {
        out.push_str(&table(&tables::claims(s)));
    }
    out.push_str(&image(
        &s.convergence_plot,
        &format!("Convergence of {}", s.name),
        CONVERGENCE_CAPTION,
    ));
    out.push_str(&image(
        &s.invariant_plot,
        &format!("Invariant error of {}", s.name),
        INVARIANT_CAPTION,
    ));
    for c in &s.checks {
        out.push_str(&format!("#### {} ({})\n\n", c.name, c.verdict));
        out.push_str(&table(&tables::figures(c)));
        if !c.rungs.is_empty() {
            out.push_str(&table(&tables::ladder(c)));
        }
    }
    out
}

/// The page; plots are linked by their file names.
pub fn page(cert: &Certificate) -> String {
    let names: Vec<&str> = cert.packages.iter().map(|p| p.name.as_str()).collect();
    let mut out = format!(
        "# Stepper certificate: {}\n\nWhat each stepper was measured to do on reference problems with known answers.\n\n",
        names.join(", ")
    );
    let commit = match &cert.source.commit {
        Some(c) if cert.source.dirty => format!("`{c}` with uncommitted changes"),
        Some(c) => format!("`{c}`"),
        None => "not in a git repository".into(),
    };
    out.push_str(&format!(
        "- tool: cargo-drift {}\n- measured: {}\n- git commit: {commit}\n",
        cert.tool, cert.generated
    ));
    if let Some(env) = cert.packages.iter().find_map(|p| p.environment.as_ref()) {
        out.push_str(&format!(
            "- target: {}\n- rustc: {}\n- profile: {}\n- floating-point features: {}\n",
            env.target,
            env.rustc,
            env.profile,
            env.features.join(", ")
        ));
    }
    out.push_str(&format!("\n> **What a pass means.** {}\n\n", cert.caution));
    out.push_str("## Summary\n\n");
    out.push_str(&table(&tables::summary(&cert.packages)));
    for p in &cert.packages {
        out.push_str(&format!("## Package `{}`\n\n", p.name));
        if let Some(m) = &p.message {
            out.push_str(&format!("**Not checked ({}):** {m}\n\n", p.status));
        }
        for s in &p.steppers {
            out.push_str(&stepper(s));
        }
        if p.work_precision_plot.is_some() {
            out.push_str("### Work against precision\n\n");
            out.push_str(&image(
                &p.work_precision_plot,
                &format!("Work against precision, {}", p.name),
                WORK_CAPTION,
            ));
        }
    }
    out
}
