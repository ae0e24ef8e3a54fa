//! The verbs: `run` (the default), `record`, `list`, `report` and `init`, each from
//! discovered packages to what it prints and its exit code.

use std::io::IsTerminal;
use std::path::PathBuf;
use std::time::Duration;

use similar::{ChangeTag, TextDiff};

use super::args::{Common, Filtered, Format, InitArgs, ReportArgs};
use super::build::build;
use super::discover::{discover, init_manifest, metadata, Found};
use super::exec::{parse_report, run, Invocation, Mode, Ran};
use super::model::{exit, exit_code, PackageOutcome, PackageRun};
use super::progress::Progress;
use super::render::{color, human, json, junit, markdown};

/// An error of the command itself (exit code 2), already worded for people.
pub struct Fatal(pub String);

pub(crate) fn color_on(common: &Common) -> Result<bool, Fatal> {
    let choice: color::ColorChoice = common.color.parse().map_err(|_| {
        Fatal(format!(
            "--color takes auto, always or never, not `{}`",
            common.color
        ))
    })?;
    let no_color = std::env::var("NO_COLOR").ok();
    let cargo = std::env::var("CARGO_TERM_COLOR").ok();
    Ok(color::use_color(
        choice,
        std::io::stdout().is_terminal(),
        no_color.as_deref(),
        cargo.as_deref(),
    ))
}

pub(crate) fn found(common: &Common) -> Result<Vec<Found>, Fatal> {
    let meta = metadata(common).map_err(|e| Fatal(e.to_string()))?;
    discover(&meta, common).map_err(|e| Fatal(e.to_string()))
}

/// Builds and runs every package's harness in `mode`: each one's JSON
/// document, or how it ended without one.
fn run_all(
    pkgs: &[Found],
    common: &Common,
    filter: &Filtered,
    mode: Mode,
) -> Vec<Result<String, PackageOutcome>> {
    let mut progress = Progress::new();
    pkgs.iter()
        .map(|pkg| {
            let exe = build(pkg, &common.profile).map_err(PackageOutcome::BuildFailed)?;
            progress.phase(format!("measuring {}", pkg.name));
            let inv = Invocation {
                pkg,
                exe: &exe,
                mode,
                filter: filter.filter.as_deref().map(|f| (f, filter.exact)),
                jobs: common.jobs,
                timeout: Duration::from_secs(common.timeout.max(1)),
            };
            let Ran { json, failure } = run(&inv, &mut progress);
            match (failure, json) {
                (Some(f), _) => Err(f),
                (None, Some(text)) => Ok(text),
                (None, None) => Err(PackageOutcome::Crashed(
                    "the harness wrote no report".into(),
                )),
            }
        })
        .collect()
}

/// The run of `pkg` from its harness's result.
fn package_run(pkg: &Found, result: Result<String, PackageOutcome>) -> PackageRun {
    let outcome = result
        .and_then(|text| parse_report(&text).map_err(PackageOutcome::Crashed))
        .map_or_else(|o| o, |r| PackageOutcome::Checked(Box::new(r)));
    PackageRun {
        package: pkg.name.clone(),
        root: pkg.root.clone(),
        outcome,
    }
}

pub(crate) fn measured(
    pkgs: &[Found],
    common: &Common,
    filter: &Filtered,
    mode: Mode,
) -> Vec<PackageRun> {
    pkgs.iter()
        .zip(run_all(pkgs, common, filter, mode))
        .map(|(p, r)| package_run(p, r))
        .collect()
}

/// Writes the verdicts in every requested form; the exit code.
pub(crate) fn report(runs: &[PackageRun], common: &Common) -> Result<u8, Fatal> {
    match common.format {
        Format::Json => println!("{}", json::json_document(runs)),
        Format::Human => print!("{}", human::verdict_table(runs, color_on(common)?)),
    }
    let write = |path: &PathBuf, text: String| {
        crate::atomic::write_atomic(path, text.as_bytes())
            .map_err(|e| Fatal(format!("{}: {e}", path.display())))
    };
    if let Some(p) = &common.junit {
        write(p, junit::junit_xml(runs))?;
    }
    if let Some(p) = &common.summary {
        write(p, markdown::markdown_summary(runs))?;
    }
    Ok(exit_code(runs))
}

/// `cargo drift [run]`.
pub fn run_verb(common: &Common, filter: &Filtered) -> Result<u8, Fatal> {
    let pkgs = found(common)?;
    let runs = measured(&pkgs, common, filter, Mode::Run);
    report(&runs, common)
}

/// The plan document of each package's harness, or how it failed.
fn plans(
    pkgs: &[Found],
    common: &Common,
    filter: &Filtered,
) -> Vec<Result<serde_json::Value, PackageOutcome>> {
    run_all(pkgs, common, filter, Mode::Plan)
        .into_iter()
        .map(|r| {
            r.and_then(|t| {
                serde_json::from_str(&t)
                    .map_err(|e| PackageOutcome::Crashed(format!("unreadable plan: {e}")))
            })
        })
        .collect()
}

fn baseline_path(doc: &serde_json::Value) -> Option<PathBuf> {
    doc.get("baseline")
        .and_then(|b| b.as_str())
        .map(PathBuf::from)
}

/// A line diff of two baseline texts, coloured when `color`.
fn diff(old: &str, new: &str, name: &str, color: bool) -> String {
    let d = TextDiff::from_lines(old, new);
    let mut out = String::new();
    for group in d.grouped_ops(2) {
        out.push_str(&format!("@@ {name} @@\n"));
        for op in group {
            for change in d.iter_changes(&op) {
                let (sign, code) = match change.tag() {
                    ChangeTag::Delete => ('-', "31"),
                    ChangeTag::Insert => ('+', "32"),
                    ChangeTag::Equal => (' ', ""),
                };
                let line = format!("{sign}{}", change.value().trim_end_matches('\n'));
                if color && !code.is_empty() {
                    out.push_str(&format!("\x1b[{code}m{line}\x1b[0m\n"));
                } else {
                    out.push_str(&line);
                    out.push('\n');
                }
            }
        }
    }
    out
}

/// `cargo drift record`.
pub fn record_verb(common: &Common, filter: &Filtered) -> Result<u8, Fatal> {
    let color = color_on(common)?;
    let pkgs = found(common)?;
    let before: Vec<Option<(PathBuf, String)>> = plans(&pkgs, common, filter)
        .iter()
        .map(|doc| {
            let path = doc.as_ref().ok().and_then(baseline_path)?;
            Some((
                path.clone(),
                std::fs::read_to_string(&path).unwrap_or_default(),
            ))
        })
        .collect();
    let runs = measured(&pkgs, common, filter, Mode::Record);
    for (run, old) in runs.iter().zip(before) {
        let Some((path, old)) = old else { continue };
        let new = std::fs::read_to_string(&path).unwrap_or_default();
        if old == new {
            eprintln!("drift: {} unchanged", path.display());
        } else {
            println!(
                "{}",
                diff(
                    &old,
                    &new,
                    &format!("{} ({})", path.display(), run.package),
                    color
                )
            );
        }
    }
    let code = report(&runs, common)?;
    // Recording itself succeeds when every harness ran; failing verdicts
    // were measured and recorded.
    Ok(if code == exit::FAILED {
        exit::PASS
    } else {
        code
    })
}

/// `cargo drift list`.
pub fn list_verb(common: &Common, filter: &Filtered) -> Result<u8, Fatal> {
    let pkgs = found(common)?;
    let mut code = exit::PASS;
    for (pkg, doc) in pkgs.iter().zip(plans(&pkgs, common, filter)) {
        let doc = match doc {
            Ok(doc) => doc,
            Err(outcome) => {
                println!(
                    "{}: {}: {}",
                    pkg.name,
                    outcome.status(),
                    outcome.message().unwrap_or_default()
                );
                let run = PackageRun {
                    package: pkg.name.clone(),
                    root: pkg.root.clone(),
                    outcome,
                };
                code = code.max(exit_code(std::slice::from_ref(&run)));
                continue;
            }
        };
        println!("{} ({})", pkg.name, pkg.root.display());
        println!(
            "  {:<30} {:<14} {:<15} {:<9} ladder",
            "check", "kind", "problem", "recorded"
        );
        for c in doc["checks"].as_array().into_iter().flatten() {
            let s = |k: &str| c[k].as_str().unwrap_or("-").to_string();
            let recorded = if c["recorded"].as_bool() == Some(true) {
                "yes"
            } else {
                "no"
            };
            println!(
                "  {:<30} {:<14} {:<15} {:<9} {}",
                s("name"),
                s("kind"),
                s("problem"),
                recorded,
                s("ladder")
            );
        }
    }
    Ok(code)
}

/// `cargo drift init`.
pub fn init_verb(common: &Common, args: &InitArgs) -> Result<u8, Fatal> {
    use super::init::{init, DependencySpec, InitOptions};
    let manifest = init_manifest(common);
    let root = manifest.parent().map_or_else(
        || PathBuf::from("."),
        |p| {
            if p.as_os_str().is_empty() {
                PathBuf::from(".")
            } else {
                p.to_path_buf()
            }
        },
    );
    let dependency = match &args.drift_path {
        Some(p) => DependencySpec::Path(p.clone()),
        None => DependencySpec::Version(env!("CARGO_PKG_VERSION").to_string()),
    };
    let options = InitOptions {
        stepper: args.stepper.clone(),
        dependency,
    };
    let report = init(&root, &options).map_err(|e| Fatal(e.to_string()))?;
    for p in &report.created {
        println!("created {}", p.display());
    }
    for p in &report.edited {
        println!("edited  {}", p.display());
    }
    println!("next:");
    for step in &report.next_steps {
        println!("  {step}");
    }
    Ok(exit::PASS)
}

/// `cargo drift report`: measures like `run`, writes the report directory
/// whole, then shows and writes the verdicts as `run` does and exits as it
/// would.
pub fn report_verb(common: &Common, args: &ReportArgs) -> Result<u8, Fatal> {
    use super::report;
    let meta = metadata(common).map_err(|e| Fatal(e.to_string()))?;
    let pkgs = discover(&meta, common).map_err(|e| Fatal(e.to_string()))?;
    let dir = args
        .out
        .clone()
        .unwrap_or_else(|| report::default_dir(meta.target_directory.as_std_path()));
    let started = std::time::Instant::now();
    let runs = measured(&pkgs, common, &args.filter, Mode::Run);
    let source = pkgs.first().map_or_else(
        || meta.workspace_root.clone().into_std_path_buf(),
        |p| p.root.clone(),
    );
    let files = report::files(&runs, &source).map_err(|e| Fatal(e.to_string()))?;
    report::out::write_dir(&dir, &files).map_err(|e| Fatal(e.to_string()))?;
    let plots = files.iter().filter(|(n, _)| n.ends_with(".svg")).count();
    eprintln!(
        "drift: wrote the report to {} ({}, {}, {} and {plots} plots) in {:.1} s",
        dir.display(),
        report::HTML_FILE,
        report::MARKDOWN_FILE,
        report::JSON_FILE,
        started.elapsed().as_secs_f64()
    );
    report(&runs, common)
}
