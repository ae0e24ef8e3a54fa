//! The harness behind a user's `tests/drift.rs`: registration of steppers and
//! problems ([`Harness`]), and running every declared check as one libtest
//! trial through libtest-mimic, judged against the baseline file.
//!
//! Modes are asked for by environment variables, because `cargo test -- FLAG`
//! would reach every test binary and libtest rejects unknown flags:
//! - [`ENV_RECORD`] (`DRIFT_RECORD=1`): measure and write the baseline file
//!   (checks left out by a filter keep their records byte for byte).
//! - [`ENV_MEASUREMENTS`] (`DRIFT_MEASUREMENTS=path`): also write every
//!   check's figures and verdict as versioned JSON ([`output`]).
//! - [`ENV_PLAN`] (`DRIFT_PLAN=path`): write the planned checks (stepper,
//!   problem, ladder, whether recorded) as JSON and measure nothing.
//! - [`ENV_BASELINE`] (`DRIFT_BASELINE=path`): judge against (and in record
//!   mode write) this baseline file instead of the one `drift.toml` names;
//!   `cargo drift bisect` judges every commit against the good revision's
//!   figures this way.
//!
//! The parts: [`check`] runs one plan; [`output`] is the JSON document and
//! the record-mode merge.

pub mod check;
pub mod detail;
pub mod output;

use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};

use libtest_mimic::{Arguments, Conclusion, Trial};

use crate::baseline::Baseline;
use crate::measure::{
    measure, Config, Fixed, MeasureError, Measurement, Method, MethodKind, Split, Whole,
};
use crate::problem::registry::Builtin;
use crate::problem::{has_second_order, Problem};
use crate::spec::{Catalog, Spec};
use crate::stepper::{Integrator, SplitStepper, Stepper};

use check::CheckOutcome;

/// Set to anything but empty or `0` to write the baseline file.
pub const ENV_RECORD: &str = "DRIFT_RECORD";
/// A path: write the measurements of every check run there as JSON.
pub const ENV_MEASUREMENTS: &str = "DRIFT_MEASUREMENTS";
/// A path: write the planned checks there as JSON and run none of them.
pub const ENV_PLAN: &str = "DRIFT_PLAN";
/// The declaration file to read instead of `drift.toml` at the package root
/// (relative to the root); `cargo drift` sets it from
/// `[package.metadata.drift] file = "..."`.
pub const ENV_FILE: &str = "DRIFT_FILE";
/// A path: the baseline file to judge against and record into, instead of
/// `settings.baseline` of `drift.toml` (relative paths are relative to the
/// package root). Harnesses built from a cargo-drift older than this
/// variable ignore it.
pub const ENV_BASELINE: &str = "DRIFT_BASELINE";

/// The problem a check runs on.
pub enum Target {
    /// A built-in reference problem (monomorphised dispatch).
    Builtin(Builtin),
    /// A problem registered with [`Harness::problem`].
    User(Arc<dyn Problem>),
}

impl Target {
    /// The problem itself.
    pub fn problem(&self) -> &dyn Problem {
        match self {
            Target::Builtin(b) => b.as_problem(),
            Target::User(p) => p.as_ref(),
        }
    }
}

type Runner = dyn Fn(&Target, &Config) -> Result<Measurement, MeasureError> + Send + Sync;

/// A registered method: its name, kind, and a closure that builds a fresh
/// instance and measures it (monomorphised over the method type; the
/// closure is the only dynamic call, once per check).
pub struct Registered {
    /// The name used in `drift.toml` and in check names.
    pub name: String,
    /// The trait it implements.
    pub kind: MethodKind,
    run: Box<Runner>,
}

impl Registered {
    fn new<M: Method + 'static>(
        name: &str,
        kind: MethodKind,
        make: impl Fn() -> M + Send + Sync + 'static,
    ) -> Self {
        let run = move |target: &Target, config: &Config| match target {
            Target::Builtin(b) => b.measure_with(&mut make(), config),
            Target::User(p) => measure(&mut make(), p.as_ref(), config),
        };
        Registered {
            name: name.to_string(),
            kind,
            run: Box::new(run),
        }
    }

    /// Measures a fresh instance on `target`.
    pub fn measure(&self, target: &Target, config: &Config) -> Result<Measurement, MeasureError> {
        (self.run)(target, config)
    }
}

/// Why the harness could not start.
#[derive(Debug)]
pub enum HarnessError {
    /// Two registrations under one name.
    DuplicateName(String),
    /// `drift.toml` is invalid (the message names file, line and column).
    Spec(crate::spec::SpecError),
    /// The baseline file could not be read.
    Baseline(crate::baseline::BaselineError),
    /// An output could not be written.
    Write(String),
}

impl std::fmt::Display for HarnessError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            HarnessError::DuplicateName(n) => {
                write!(f, "two steppers or problems are registered as `{n}`; give each its own name in tests/drift.rs")
            }
            HarnessError::Spec(e) => write!(f, "{e}"),
            HarnessError::Baseline(e) => write!(f, "{e}"),
            HarnessError::Write(e) => write!(f, "{e}"),
        }
    }
}

impl std::error::Error for HarnessError {}

/// The harness: register your methods (and optionally problems), then call
/// [`Harness::main`] from `tests/drift.rs` (`[[test]] name = "drift"`,
/// `harness = false`).
///
/// ```no_run
/// use drift::{Rhs, Stepper};
/// #[derive(Default)]
/// struct Euler(Vec<f64>);
/// impl Stepper for Euler {
///     fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
///         self.0.resize(y.len(), 0.0);
///         f.rhs(t, y, &mut self.0);
///         for (a, b) in y.iter_mut().zip(&self.0) { *a += h * b; }
///     }
/// }
/// fn main() {
///     drift::Harness::new().stepper("euler", Euler::default).main();
/// }
/// ```
#[derive(Default)]
pub struct Harness {
    methods: Vec<Registered>,
    problems: Vec<Arc<dyn Problem>>,
    root: Option<PathBuf>,
}

impl Harness {
    /// An empty harness.
    pub fn new() -> Self {
        Self::default()
    }

    /// Registers a fixed-step [`Stepper`]; `make` builds a fresh one per check.
    pub fn stepper<S: Stepper + 'static>(
        mut self,
        name: &str,
        make: impl Fn() -> S + Send + Sync + 'static,
    ) -> Self {
        self.methods
            .push(Registered::new(name, MethodKind::Fixed, move || {
                Fixed(make())
            }));
        self
    }

    /// Registers a [`SplitStepper`] for `q'' = a(t, q)`.
    pub fn split_stepper<S: SplitStepper + 'static>(
        mut self,
        name: &str,
        make: impl Fn() -> S + Send + Sync + 'static,
    ) -> Self {
        self.methods
            .push(Registered::new(name, MethodKind::Split, move || {
                Split(make())
            }));
        self
    }

    /// Registers an [`Integrator`] (measured on a tolerance ladder).
    pub fn integrator<I: Integrator + 'static>(
        mut self,
        name: &str,
        make: impl Fn() -> I + Send + Sync + 'static,
    ) -> Self {
        self.methods
            .push(Registered::new(name, MethodKind::Whole, move || {
                Whole(make())
            }));
        self
    }

    /// Registers a problem of your own (it joins the standard battery of
    /// every compatible stepper, and `[[check]]`s can name it).
    pub fn problem<P: Problem + 'static>(mut self, problem: P) -> Self {
        self.problems.push(Arc::new(problem));
        self
    }

    /// The package root holding `drift.toml` (default: `CARGO_MANIFEST_DIR`
    /// as cargo sets it when it runs the test, else the working directory).
    pub fn root(mut self, dir: impl Into<PathBuf>) -> Self {
        self.root = Some(dir.into());
        self
    }

    /// Parses the test arguments, runs the checks and exits: 0 when every
    /// check passed, 101 when one failed, 2 when the harness could not start
    /// (the message says why).
    pub fn main(self) -> ! {
        let args = Arguments::from_args();
        match self.run(&args) {
            Ok(conclusion) => conclusion.exit(),
            Err(e) => {
                eprintln!("error: {e}");
                std::process::exit(2);
            }
        }
    }

    fn catalog(&self) -> Result<Catalog, HarnessError> {
        let mut names: Vec<&str> = self.methods.iter().map(|m| m.name.as_str()).collect();
        names.extend(self.problems.iter().map(|p| p.name()));
        names.sort_unstable();
        if let Some(w) = names.windows(2).find(|w| w[0] == w[1]) {
            return Err(HarnessError::DuplicateName(w[0].to_string()));
        }
        Ok(Catalog {
            steppers: self
                .methods
                .iter()
                .map(|m| (m.name.clone(), m.kind))
                .collect(),
            user_problems: self
                .problems
                .iter()
                .map(|p| (p.name().to_string(), has_second_order(p.as_ref())))
                .collect(),
        })
    }

    fn package_root(&self) -> PathBuf {
        self.root
            .clone()
            .or_else(|| std::env::var_os("CARGO_MANIFEST_DIR").map(PathBuf::from))
            .unwrap_or_else(|| PathBuf::from("."))
    }

    /// Runs the checks with `args` (libtest's flags: a filter, `--exact`,
    /// `--list`, `--test-threads`, ...) and returns libtest-mimic's
    /// conclusion, after writing the baseline (record mode) and the JSON
    /// measurements when asked to.
    pub fn run(self, args: &Arguments) -> Result<Conclusion, HarnessError> {
        let catalog = self.catalog()?;
        let root = self.package_root();
        let file = std::env::var_os(ENV_FILE)
            .filter(|v| !v.is_empty())
            .map_or_else(|| "drift.toml".into(), PathBuf::from);
        let spec = Spec::load(&root.join(file), &catalog).map_err(HarnessError::Spec)?;
        let baseline_path = std::env::var_os(ENV_BASELINE)
            .filter(|v| !v.is_empty())
            .map_or_else(|| spec.baseline_path(&root), |p| root.join(p));
        let baseline = Baseline::load(&baseline_path).map_err(HarnessError::Baseline)?;
        let record = std::env::var(ENV_RECORD).is_ok_and(|v| !v.is_empty() && v != "0");
        let json = std::env::var_os(ENV_MEASUREMENTS)
            .filter(|v| !v.is_empty())
            .map(PathBuf::from);
        if let Some(path) = std::env::var_os(ENV_PLAN)
            .filter(|v| !v.is_empty())
            .map(PathBuf::from)
        {
            let plans = spec.plans();
            write_json(
                &path,
                &output::plan_document(&plans, baseline.as_ref(), &baseline_path),
            )?;
            let listing = Arguments {
                list: true,
                ..args.clone()
            };
            let trials = plans
                .into_iter()
                .map(|p| Trial::test(p.name, || Ok(())))
                .collect();
            return Ok(libtest_mimic::run(&listing, trials));
        }

        let shared = Arc::new(check::Shared {
            methods: self.methods,
            problems: self.problems,
            baseline,
            slack: spec.slack().clone(),
            record,
            outcomes: Mutex::new(Vec::new()),
        });
        let trials: Vec<Trial> = spec
            .plans()
            .into_iter()
            .map(|plan| {
                let shared = Arc::clone(&shared);
                Trial::test(plan.name.clone(), move || check::run_trial(&shared, &plan))
            })
            .collect();
        let conclusion = libtest_mimic::run(args, trials);
        if args.list {
            return Ok(conclusion);
        }
        let mut outcomes: Vec<CheckOutcome> =
            std::mem::take(&mut *shared.outcomes.lock().unwrap_or_else(|e| e.into_inner()));
        outcomes.sort_by(|a, b| a.name.cmp(&b.name));
        let unplanned = shared.baseline.as_ref().map_or_else(Vec::new, |b| {
            spec.unplanned(b.checks.keys().map(String::as_str))
        });
        if let Some(path) = json {
            let mut doc = output::document(&outcomes);
            doc["baseline"] = serde_json::json!(baseline_path);
            doc["unplanned"] = serde_json::json!(unplanned);
            write_json(&path, &doc)?;
        }
        if record {
            let summary = output::record(
                &baseline_path,
                shared.baseline.as_ref(),
                &outcomes,
                &unplanned,
            )
            .map_err(|e| HarnessError::Write(e.to_string()))?;
            eprintln!("{summary}");
        } else if let Some(note) = output::notes(&baseline_path, &outcomes, &unplanned) {
            eprintln!("{note}");
        }
        Ok(conclusion)
    }
}

fn write_json(path: &Path, doc: &serde_json::Value) -> Result<(), HarnessError> {
    let text = serde_json::to_string_pretty(doc).map_err(|e| HarnessError::Write(e.to_string()))?;
    crate::atomic::write_atomic(path, text.as_bytes())
        .map_err(|e| HarnessError::Write(format!("{}: {e}", path.display())))
}
