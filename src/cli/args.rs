//! The command line of `cargo drift` (clap), following cargo's convention
//! for external subcommands: cargo runs `cargo-drift drift ARGS...`.

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand, ValueEnum};

/// What the exit codes mean; shown at the end of `--help`.
pub const EXIT_CODES: &str = "\
Exit codes:
  0  every check passed (new and improved checks pass)
  1  a check regressed, violated a claim of its stepper, or errored
  2  usage or configuration error (drift.toml, baseline file, arguments)
  3  a harness failed to build, crashed or ran past --timeout
bisect: 1 it found the commit that regressed, 0 the bad revision does not
regress (nothing to bisect), 2 and 3 as above, 130 interrupted.
run --bisect-step: 0 good, 1 bad, 125 skip, 128 cannot be judged.

A pass is numerical verification of steppers on reference problems, not
validation of a physical model.";

/// `cargo`, as cargo invokes external subcommands.
#[derive(Debug, Parser)]
#[command(name = "cargo", bin_name = "cargo")]
pub enum CargoCli {
    /// Guard the accuracy of time-stepping code.
    Drift(DriftArgs),
}

/// `cargo drift [VERB] [OPTIONS]`.
#[derive(Debug, Args)]
#[command(
    version,
    about = "Measure your steppers' digits and order of convergence on reference problems, \
             compare them with the reviewed baseline, and fail when accuracy is lost.",
    after_help = EXIT_CODES,
    args_conflicts_with_subcommands = true
)]
pub struct DriftArgs {
    /// What to do (default: run).
    #[command(subcommand)]
    pub verb: Option<Verb>,
    /// Only checks whose name contains this text (for the default verb).
    #[arg(value_name = "FILTER")]
    pub filter: Option<String>,
    /// Options every verb takes.
    #[command(flatten)]
    pub common: Common,
}

/// The verbs.
#[derive(Debug, Subcommand)]
pub enum Verb {
    /// Measure every check and compare with the baseline (the default).
    Run(RunArgs),
    /// Measure and write the baseline file, showing what changed.
    Record(Filtered),
    /// List the checks with their stepper, problem, ladder and baseline status.
    List(Filtered),
    /// Set up a package: tests/drift.rs, drift.toml and the [[test]] entry.
    Init(InitArgs),
    /// Measure every check and write a certificate of each stepper: an HTML
    /// page, a Markdown page with SVG plots, and JSON.
    Report(ReportArgs),
    /// Find the first commit between --good and --bad where a check regressed.
    Bisect(super::bisect::BisectArgs),
}

/// Options of `report`.
#[derive(Debug, Args)]
pub struct ReportArgs {
    /// Directory to write the report into (default: drift-report in the
    /// target directory). An earlier report there is replaced whole.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Which checks.
    #[command(flatten)]
    pub filter: Filtered,
}

/// Options of `run`.
#[derive(Debug, Args, Default)]
pub struct RunArgs {
    /// The checks to run.
    #[command(flatten)]
    pub filtered: Filtered,
    /// Exit as a step of `git bisect run`: 0 good, 1 a check failed, 125
    /// skip (does not build, no harness, a check missing), 128 cannot be
    /// judged (crash, timeout), which stops git bisect.
    #[arg(long)]
    pub bisect_step: bool,
    /// With --bisect-step: append the step's verdict as a JSON line to FILE.
    #[arg(long, value_name = "FILE", requires = "bisect_step", hide = true)]
    pub step_log: Option<PathBuf>,
}

/// A verb that takes a check-name filter.
#[derive(Debug, Args, Default)]
pub struct Filtered {
    /// Only checks whose name contains this text.
    #[arg(value_name = "FILTER")]
    pub filter: Option<String>,
    /// Match FILTER against whole check names only.
    #[arg(long)]
    pub exact: bool,
}

/// Options of `init`.
#[derive(Debug, Args)]
pub struct InitArgs {
    /// Name under which the template registers its stepper.
    #[arg(long, default_value = "my-stepper", value_name = "NAME")]
    pub stepper: String,
    /// Depend on cargo-drift at this path instead of the published version.
    #[arg(long, value_name = "DIR")]
    pub drift_path: Option<PathBuf>,
}

/// Output format of the verdicts on standard output.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum, Default)]
pub enum Format {
    /// A table for people.
    #[default]
    Human,
    /// The versioned JSON document (see DEVELOPERS.md).
    Json,
}

/// Options every verb takes.
#[derive(Debug, Args)]
pub struct Common {
    /// Path to Cargo.toml.
    #[arg(long, global = true, value_name = "PATH")]
    pub manifest_path: Option<PathBuf>,
    /// Package to check (repeatable).
    #[arg(short, long, global = true, value_name = "SPEC")]
    pub package: Vec<String>,
    /// Check every package of the workspace.
    #[arg(long, global = true)]
    pub workspace: bool,
    /// Leave this package out (with --workspace; repeatable).
    #[arg(long, global = true, value_name = "SPEC")]
    pub exclude: Vec<String>,
    /// Cargo profile the harnesses are built with (optimised by default).
    #[arg(long, global = true, default_value = "release", value_name = "NAME")]
    pub profile: String,
    /// Checks measured in parallel (default: the number of CPUs).
    #[arg(short, long, global = true, value_name = "N")]
    pub jobs: Option<usize>,
    /// Stop a harness that runs longer than this many seconds.
    #[arg(long, global = true, default_value_t = 900, value_name = "SECS")]
    pub timeout: u64,
    /// Verdict output on standard output.
    #[arg(long, global = true, value_enum, default_value_t = Format::Human)]
    pub format: Format,
    /// Also write the verdicts as JUnit XML to FILE.
    #[arg(long, global = true, value_name = "FILE")]
    pub junit: Option<PathBuf>,
    /// Also write a Markdown summary (for a CI job summary page) to FILE.
    #[arg(long, global = true, value_name = "FILE")]
    pub summary: Option<PathBuf>,
    /// Colour: auto, always or never (also NO_COLOR and CARGO_TERM_COLOR).
    #[arg(long, global = true, default_value = "auto", value_name = "WHEN")]
    pub color: String,
}
