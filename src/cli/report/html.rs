//! The report as one self-contained HTML page: inline CSS and inline SVG
//! plots, no scripts and no external resources, so it works offline and
//! prints. Layout: header with the environment, the caution, the summary,
//! then per stepper its claims, plots and the table of every check.

use std::collections::BTreeMap;

use super::cert::{Certificate, PackageCert, StepperCert};
use super::tables::{self, Table, Tone};
use crate::cli::render::junit::escape;

const STYLE: &str = "
body { font-family: system-ui, -apple-system, 'Segoe UI', Roboto, sans-serif; margin: 2rem auto;
       max-width: 1200px; padding: 0 1rem; color: #1d1d1f; line-height: 1.45; }
h1 { margin-bottom: 0.2rem; } h2 { border-bottom: 2px solid #ddd; padding-bottom: 0.2rem; margin-top: 2.5rem; }
h3 { margin-top: 2rem; } h4 { margin: 1.4rem 0 0.4rem; }
table { border-collapse: collapse; margin: 0.5rem 0 1rem; font-size: 0.92rem; }
th, td { border: 1px solid #ccc; padding: 0.25rem 0.55rem; text-align: left; vertical-align: top; }
th { background: #f3f3f5; }
td.good { color: #0b6e2e; font-weight: 600; } td.bad { color: #b00020; font-weight: 600; }
td.muted { color: #777; }
.ladder td, .ladder th { text-align: right; white-space: nowrap; } .ladder td:first-child, .ladder th:first-child { text-align: left; }
.scroll { overflow-x: auto; }
.pair { display: flex; flex-wrap: wrap; gap: 0 1.5rem; align-items: flex-start; }
.pair table { font-size: 0.86rem; } .figures td:last-child { max-width: 30rem; }
.caution { border-left: 5px solid #c77700; background: #fff6e5; padding: 0.7rem 1rem; margin: 1.2rem 0; }
figure { margin: 1rem 0; } figure svg { max-width: 100%; height: auto; display: block; border: 1px solid #e5e5e5; }
figcaption { font-size: 0.9rem; color: #444; margin-top: 0.3rem; max-width: 900px; }
.meta th { width: 14rem; } footer { margin-top: 3rem; font-size: 0.85rem; color: #555; }
@media print { body { max-width: none; margin: 0; } h2, h3 { break-after: avoid; } figure, table { break-inside: avoid; } }
";

fn table(t: &Table, class: &str) -> String {
    let mut out = format!("<div class=\"scroll\"><table class=\"{class}\"><thead><tr>");
    for h in &t.head {
        out.push_str(&format!("<th>{}</th>", escape(h)));
    }
    out.push_str("</tr></thead><tbody>");
    for row in &t.rows {
        out.push_str("<tr>");
        for c in row {
            let class = match c.tone {
                Tone::Plain => "",
                Tone::Good => " class=\"good\"",
                Tone::Bad => " class=\"bad\"",
                Tone::Muted => " class=\"muted\"",
            };
            out.push_str(&format!("<td{class}>{}</td>", escape(&c.text)));
        }
        out.push_str("</tr>");
    }
    out.push_str("</tbody></table></div>\n");
    out
}

/// The SVG element of a plot file, without any XML prolog.
fn inline_svg(svg: &str) -> &str {
    svg.find("<svg").map_or(svg, |i| &svg[i..])
}

fn figure(svgs: &BTreeMap<String, String>, file: &Option<String>, caption: &str) -> String {
    let Some(svg) = file.as_ref().and_then(|f| svgs.get(f)) else {
        return String::new();
    };
    format!(
        "<figure>{}<figcaption>{}</figcaption></figure>\n",
        inline_svg(svg),
        escape(caption)
    )
}

/// Caption of a stepper's convergence plot.
pub const CONVERGENCE_CAPTION: &str =
    "Solution digits against resolution on log axes; each line is \
one problem. Filled markers are the rungs the order was fitted over; hollow markers are \
pre-asymptotic, near the roundoff floor or on it. The dashed black segments have the fitted \
slope; the grey dashed lines are reference slopes (digits gained per tenfold refinement).";

/// Caption of a stepper's invariant plot.
pub const INVARIANT_CAPTION: &str = "Relative error of each conserved quantity against elapsed \
time over the long run, log-log; the largest error in each time bin. A flat curve is bounded \
error; a curve parallel to the grey t^(1/2) line is a random walk; parallel to the t line, \
linear drift.";

/// Caption of a package's work-precision plot.
pub const WORK_CAPTION: &str = "Work against precision: solution digits against the total \
right-hand-side evaluations of each rung, one panel per problem, one line per stepper. Higher \
and further left is cheaper accuracy.";

fn stepper_section(s: &StepperCert, svgs: &BTreeMap<String, String>) -> String {
    let mut out = format!(
        "<h3 id=\"{id}\">Stepper <code>{name}</code> ({kind}): {verdict}</h3>\n",
        id = escape(&s.name),
        name = escape(&s.name),
        kind = escape(&s.kind),
        verdict = tables::verdict_phrase(&s.verdict)
    );
    if s.claims.is_empty() {
        out.push_str("<p>No claims are declared for this stepper in drift.toml; the figures below are measured only.</p>\n");
    } else {
        out.push_str(&table(&tables::claims(s), "claims"));
    }
    out.push_str(&figure(svgs, &s.convergence_plot, CONVERGENCE_CAPTION));
    out.push_str(&figure(svgs, &s.invariant_plot, INVARIANT_CAPTION));
    for c in &s.checks {
        out.push_str(&format!(
            "<h4>{} <span class=\"verdict\">({})</span></h4>\n",
            escape(&c.name),
            escape(&c.verdict)
        ));
        out.push_str("<div class=\"pair\">");
        out.push_str(&table(&tables::figures(c), "figures"));
        if !c.rungs.is_empty() {
            out.push_str(&table(&tables::ladder(c), "ladder"));
        }
        out.push_str("</div>\n");
    }
    out
}

fn package_section(p: &PackageCert, svgs: &BTreeMap<String, String>) -> String {
    let mut out = format!("<h2>Package <code>{}</code></h2>\n", escape(&p.name));
    if let Some(m) = &p.message {
        out.push_str(&format!(
            "<p class=\"bad\">Not checked ({}): {}</p>\n",
            escape(&p.status),
            escape(m)
        ));
    }
    if let Some(env) = &p.environment {
        out.push_str(&format!(
            "<p>Measured on {} with {}, profile {}, floating-point features {}.</p>\n",
            escape(&env.target),
            escape(&env.rustc),
            escape(&env.profile),
            escape(&env.features.join(", "))
        ));
    }
    for s in &p.steppers {
        out.push_str(&stepper_section(s, svgs));
    }
    if p.work_precision_plot.is_some() {
        out.push_str("<h3>Work against precision</h3>\n");
        out.push_str(&figure(svgs, &p.work_precision_plot, WORK_CAPTION));
    }
    out
}

/// The page, with every plot of `svgs` (by file name) inlined.
pub fn page(cert: &Certificate, svgs: &BTreeMap<String, String>) -> String {
    let names: Vec<&str> = cert.packages.iter().map(|p| p.name.as_str()).collect();
    let commit = match &cert.source.commit {
        Some(c) if cert.source.dirty => format!("{c} with uncommitted changes"),
        Some(c) => c.clone(),
        None => "not in a git repository".into(),
    };
    let mut meta = vec![
        ("tool", format!("cargo-drift {}", cert.tool)),
        ("measured", cert.generated.clone()),
        ("git commit", commit),
    ];
    if let Some(env) = cert.packages.iter().find_map(|p| p.environment.as_ref()) {
        meta.push(("target", env.target.clone()));
        meta.push(("rustc", env.rustc.clone()));
        meta.push(("profile", env.profile.clone()));
        meta.push(("floating-point features", env.features.join(", ")));
    }
    let mut body = String::new();
    body.push_str(&format!(
        "<h1>Stepper certificate: {}</h1>\n<p>What each stepper was measured to do on reference problems with known answers.</p>\n",
        escape(&names.join(", "))
    ));
    body.push_str("<table class=\"meta\"><tbody>");
    for (k, v) in meta {
        body.push_str(&format!("<tr><th>{k}</th><td>{}</td></tr>", escape(&v)));
    }
    body.push_str("</tbody></table>\n");
    body.push_str(&format!(
        "<div class=\"caution\"><strong>What a pass means.</strong> {}</div>\n",
        escape(&cert.caution)
    ));
    body.push_str("<h2>Summary</h2>\n");
    body.push_str(&table(&tables::summary(&cert.packages), "summary"));
    for p in &cert.packages {
        body.push_str(&package_section(p, svgs));
    }
    body.push_str(&format!(
        "<footer>Digits are -log10 of the largest component-scaled error over the samples of a run. \
         The order is fitted over the asymptotic range only.<br>Written by cargo-drift {}.</footer>\n",
        escape(&cert.tool)
    ));
    format!(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <title>Stepper certificate: {}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n{body}</body>\n</html>\n",
        escape(&names.join(", "))
    )
}
