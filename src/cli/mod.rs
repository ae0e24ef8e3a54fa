//! The `cargo drift` subcommand: argument parsing ([`args`]), discovery of
//! packages ([`discover`]), building ([`build`]) and running ([`exec`]) their
//! harnesses, the verbs ([`verbs`]), the search for a regressing commit
//! ([`bisect`]), the outputs ([`render`]) and the certificate ([`report`]).
//! The binary only calls [`main_with`].

pub mod args;
pub mod bisect;
pub mod build;
pub mod discover;
pub mod exec;
pub mod init;
pub mod model;
pub mod progress;
pub mod render;
pub mod report;
pub mod verbs;

use std::ffi::OsString;

use clap::Parser;

use args::{CargoCli, Filtered, Verb};
use model::exit;

/// Runs `cargo drift` with `argv` (as cargo passes it: `cargo-drift drift
/// ...`) and returns the exit code.
pub fn main_with(argv: impl IntoIterator<Item = OsString>) -> u8 {
    let argv: Vec<OsString> = argv.into_iter().collect();
    let CargoCli::Drift(args) = match CargoCli::try_parse_from(&argv) {
        Ok(a) => a,
        Err(e) => {
            let _ = e.print();
            return match (e.use_stderr(), bisect::step::asked_for(&argv)) {
                (false, _) => exit::PASS,
                // git bisect run would take a usage error (2) for a bad commit.
                (true, true) => bisect::step::UNJUDGED,
                (true, false) => exit::CONFIG,
            };
        }
    };
    let default = Filtered {
        filter: args.filter.clone(),
        exact: false,
    };
    let result = match &args.verb {
        None => verbs::run_verb(&args.common, &default),
        Some(Verb::Run(r)) if r.bisect_step => Ok(bisect::step::step_verb(&args.common, r)),
        Some(Verb::Run(r)) => verbs::run_verb(&args.common, &r.filtered),
        Some(Verb::Record(f)) => verbs::record_verb(&args.common, f),
        Some(Verb::List(f)) => verbs::list_verb(&args.common, f),
        Some(Verb::Init(i)) => verbs::init_verb(&args.common, i),
        Some(Verb::Report(r)) => verbs::report_verb(&args.common, r),
        Some(Verb::Bisect(b)) => bisect::bisect_verb(&args.common, b),
    };
    match result {
        Ok(code) => code,
        Err(verbs::Fatal(msg)) => {
            eprintln!("error: {msg}");
            exit::CONFIG
        }
    }
}
