//! `drift.toml`, the per-package declaration file: what to check, with
//! which claims and settings. [`Spec::parse`] reads and validates it
//! against the steppers and problems registered with the harness
//! ([`Catalog`]), and [`Spec::plans`] lists the checks to run, each with its
//! [`Config`] and [`Claims`].
//!
//! The parts (private modules): `schema` is the serde layout of the file,
//! `errors` holds [`SpecError`] and the name suggestions, `plan` reads the
//! stepper tables and expands the battery, `settings` reads `[settings]`
//! and builds each check's configuration, `check` validates each
//! `[[check]]`. The keys are documented in DEVELOPERS.md, section
//! `drift.toml`.

mod check;
mod errors;
mod plan;
mod schema;
mod settings;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

pub use errors::SpecError;

use crate::claims::{Claims, Slack};
use crate::measure::{Config, MethodKind};
use crate::problem::registry::BuiltinInfo;

/// What the harness registered: the steppers by name and kind, and the user
/// problems by name with whether each has a velocity-independent
/// second-order form (split steppers can run on it).
///
/// A user problem must not take the name of a built-in problem: the
/// built-in wins every lookup and the user problem is left out of the
/// battery (the harness rejects such a registration).
///
/// ```
/// use drift::measure::MethodKind;
/// let c = drift::spec::Catalog {
///     steppers: vec![("rk4".into(), MethodKind::Fixed)],
///     user_problems: vec![("beam".into(), true)],
/// };
/// assert_eq!(c.steppers[0].1.name(), "stepper");
/// ```
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Catalog {
    /// Registered steppers: name and kind.
    pub steppers: Vec<(String, MethodKind)>,
    /// Registered user problems: name and whether it has a second-order form.
    pub user_problems: Vec<(String, bool)>,
}

/// The problem of a check.
#[derive(Clone, Debug)]
pub enum PlanProblem {
    /// A built-in problem with the parameters given in `drift.toml` (missing
    /// ones take their defaults; already checked to build).
    Builtin {
        /// Its catalogue entry.
        info: &'static BuiltinInfo,
        /// The parameters given.
        params: BTreeMap<String, f64>,
    },
    /// A user problem registered with the harness, by name.
    User(String),
}

impl PlanProblem {
    /// The problem's name.
    ///
    /// ```
    /// use drift::spec::PlanProblem;
    /// assert_eq!(PlanProblem::User("beam".into()).name(), "beam");
    /// ```
    pub fn name(&self) -> &str {
        match self {
            PlanProblem::Builtin { info, .. } => info.name,
            PlanProblem::User(name) => name,
        }
    }
}

/// One check to run: a stepper on a problem with a configuration and the
/// stepper's claims.
#[derive(Clone, Debug)]
pub struct Plan {
    /// `stepper/problem`, or `stepper/problem:tag`.
    pub name: String,
    /// The stepper's registered name.
    pub stepper: String,
    /// The stepper's kind.
    pub kind: MethodKind,
    /// The problem.
    pub problem: PlanProblem,
    /// What to measure.
    pub config: Config,
    /// The stepper's claims.
    pub claims: Claims,
}

/// A parsed and validated `drift.toml`.
///
/// ```
/// use std::path::Path;
/// use drift::measure::MethodKind;
/// use drift::spec::{Catalog, Spec};
/// let catalog = Catalog { steppers: vec![("rk4".into(), MethodKind::Fixed)], user_problems: vec![] };
/// let text = "[stepper.rk4]\norder = 4\n\n[[check]]\nstepper = \"rk4\"\nproblem = \"kepler\"\nparams = { e = 0.9 }\n";
/// let spec = Spec::parse(text, Path::new("drift.toml"), &catalog).unwrap();
/// let plans = spec.plans();
/// assert_eq!(plans.len(), 1);
/// assert_eq!(plans[0].name, "rk4/kepler");
/// assert_eq!(plans[0].claims.order, Some(4.0));
/// ```
#[derive(Clone, Debug)]
pub struct Spec {
    baseline: PathBuf,
    slack: Slack,
    plans: Vec<Plan>,
    /// Battery checks the file leaves out (`skip`, a battery off), with why.
    left_out: BTreeMap<String, String>,
    /// The registered steppers.
    steppers: Vec<String>,
    /// Every problem a check may name.
    problems: Vec<String>,
}

/// A check the baseline holds that the file no longer plans, and why.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize)]
pub struct Unplanned {
    /// The check's name.
    pub name: String,
    /// Why it is not planned, as far as the file and the harness tell.
    pub reason: String,
}

impl Spec {
    /// Parses and validates `text`; `path` names the file in errors, and
    /// `catalog` says which steppers and user problems exist.
    ///
    /// ```
    /// use std::path::Path;
    /// use drift::measure::MethodKind;
    /// use drift::spec::{Catalog, Spec};
    /// let catalog = Catalog { steppers: vec![("rk4".into(), MethodKind::Fixed)], user_problems: vec![] };
    /// let e = Spec::parse("[stepper.rk5]\n", Path::new("drift.toml"), &catalog).unwrap_err();
    /// assert_eq!((e.line, e.column), (1, 10));
    /// assert!(e.help.unwrap().contains("did you mean `rk4`?"));
    /// ```
    pub fn parse(text: &str, path: &Path, catalog: &Catalog) -> Result<Spec, SpecError> {
        plan::parse(text, path, catalog)
    }

    /// Reads and parses the file at `path`. A missing file means the
    /// defaults ([`Spec::default_for`]); any other read error names the
    /// path.
    ///
    /// ```
    /// use std::path::Path;
    /// use drift::spec::{Catalog, Spec};
    /// let spec = Spec::load(Path::new("/nonexistent/drift.toml"), &Catalog::default()).unwrap();
    /// assert!(spec.plans().is_empty());
    /// ```
    pub fn load(path: &Path, catalog: &Catalog) -> Result<Spec, SpecError> {
        match std::fs::read_to_string(path) {
            Ok(text) => Spec::parse(&text, path, catalog),
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(Spec::default_for(catalog)),
            Err(e) => Err(SpecError {
                path: path.to_path_buf(),
                line: 0,
                column: 0,
                message: format!("cannot read the file: {e}"),
                help: Some("check that it is a readable UTF-8 text file, or remove it to run the standard battery".into()),
            }),
        }
    }

    /// The defaults, as for an empty or missing file: every registered
    /// stepper on its standard battery.
    ///
    /// ```
    /// use drift::measure::MethodKind;
    /// use drift::spec::{Catalog, Spec};
    /// let catalog = Catalog { steppers: vec![("verlet".into(), MethodKind::Split)], user_problems: vec![] };
    /// let names: Vec<String> = Spec::default_for(&catalog).plans().into_iter().map(|p| p.name).collect();
    /// assert!(names.contains(&"verlet/kepler".to_string()));
    /// assert!(!names.contains(&"verlet/damped".to_string()));
    /// ```
    pub fn default_for(catalog: &Catalog) -> Spec {
        plan::defaults(catalog)
    }

    /// Where the baseline file is: `settings.baseline` (default
    /// `drift-baseline.toml`) relative to `package_root`.
    ///
    /// ```
    /// use std::path::Path;
    /// use drift::spec::{Catalog, Spec};
    /// let spec = Spec::parse("[settings]\nbaseline = \"ci/base.toml\"\n", Path::new("drift.toml"), &Catalog::default()).unwrap();
    /// assert_eq!(spec.baseline_path(Path::new("/pkg")), Path::new("/pkg/ci/base.toml"));
    /// ```
    pub fn baseline_path(&self, package_root: &Path) -> PathBuf {
        package_root.join(&self.baseline)
    }

    /// How far figures may move against the baseline (`[settings.slack]`).
    ///
    /// ```
    /// use std::path::Path;
    /// use drift::spec::{Catalog, Spec};
    /// let spec = Spec::parse("[settings.slack]\norder = 0.3\n", Path::new("drift.toml"), &Catalog::default()).unwrap();
    /// assert_eq!(spec.slack().order, 0.3);
    /// assert_eq!(spec.slack().digits, drift::claims::Slack::default().digits);
    /// ```
    pub fn slack(&self) -> &Slack {
        &self.slack
    }

    /// The checks to run, sorted by name (names are unique).
    ///
    /// ```
    /// use drift::measure::{Ladder, MethodKind};
    /// use drift::spec::{Catalog, Spec};
    /// let catalog = Catalog { steppers: vec![("dopri".into(), MethodKind::Whole)], user_problems: vec![] };
    /// let plans = Spec::default_for(&catalog).plans();
    /// assert!(plans.windows(2).all(|w| w[0].name < w[1].name));
    /// assert!(plans.iter().all(|p| matches!(p.config.ladder, Ladder::AutoTolerances { .. })));
    /// ```
    pub fn plans(&self) -> Vec<Plan> {
        self.plans.clone()
    }

    /// The names among `recorded` (a baseline's checks) that are not
    /// planned, sorted, each with why: left out by `skip` or by a battery
    /// that is off (with the line), a stepper or problem no longer
    /// registered, else no longer declared. Their records are kept; the
    /// harness reports them after a run.
    ///
    /// ```
    /// use std::path::Path;
    /// use drift::measure::MethodKind;
    /// use drift::spec::{Catalog, Spec};
    /// let catalog = Catalog { steppers: vec![("rk4".into(), MethodKind::Fixed)], user_problems: vec![] };
    /// let spec = Spec::parse("[stepper.rk4]\nskip = [\"kepler\"]\n", Path::new("drift.toml"), &catalog).unwrap();
    /// let gone = spec.unplanned(["rk4/harmonic", "rk4/kepler", "euler/kepler"]);
    /// assert_eq!(gone.len(), 2);
    /// assert_eq!(gone[0].name, "euler/kepler");
    /// assert!(gone[0].reason.contains("no stepper `euler`"), "{}", gone[0].reason);
    /// assert_eq!(gone[1].reason, "left out by `skip` in [stepper.rk4] at drift.toml:2");
    /// ```
    pub fn unplanned<'a>(&self, recorded: impl IntoIterator<Item = &'a str>) -> Vec<Unplanned> {
        let mut out: Vec<Unplanned> = recorded
            .into_iter()
            .filter(|name| !self.plans.iter().any(|p| p.name == *name))
            .map(|name| Unplanned {
                name: name.to_string(),
                reason: self.why_unplanned(name),
            })
            .collect();
        out.sort_by(|a, b| a.name.cmp(&b.name));
        out.dedup();
        out
    }

    fn why_unplanned(&self, name: &str) -> String {
        if let Some(why) = self.left_out.get(name) {
            return why.clone();
        }
        let (stepper, rest) = name.split_once('/').unwrap_or((name, ""));
        let problem = rest.split_once(':').map_or(rest, |(p, _)| p);
        if !self.steppers.iter().any(|s| s == stepper) {
            format!("no stepper `{stepper}` is registered with the harness")
        } else if !self.problems.iter().any(|p| p == problem) {
            format!("no problem `{problem}` is built in or registered with the harness")
        } else {
            "drift.toml no longer declares it".to_string()
        }
    }
}
