//! `cargo drift init`: set up a package for cargo-drift. Adds the
//! dependency, the `[[test]] name = "drift"` entry (`harness = false`) and an
//! optimised test profile to `Cargo.toml` without disturbing its comments or
//! layout (toml_edit), and writes `tests/drift.rs` and `drift.toml`
//! templates. Nothing is overwritten: every check runs before any write.

use std::path::{Path, PathBuf};

use toml_edit::{value, ArrayOfTables, DocumentMut, Item, Table};

use crate::atomic::write_atomic;

/// How to depend on cargo-drift.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum DependencySpec {
    /// A published version, e.g. `"0.1.0"`.
    Version(String),
    /// A local checkout.
    Path(PathBuf),
}

/// What `init` sets up.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct InitOptions {
    /// Name the template registers its stepper under.
    pub stepper: String,
    /// The dependency to add.
    pub dependency: DependencySpec,
}

/// What `init` did.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct InitReport {
    /// Files written new.
    pub created: Vec<PathBuf>,
    /// Files edited.
    pub edited: Vec<PathBuf>,
    /// What to run next.
    pub next_steps: Vec<String>,
}

/// Why `init` changed nothing.
#[derive(Debug)]
pub enum InitError {
    /// The manifest could not be read.
    Read(PathBuf, std::io::Error),
    /// The manifest is not valid TOML.
    Parse(PathBuf, String),
    /// The manifest has no `[package]`.
    Virtual(PathBuf),
    /// A file `init` would create exists.
    Exists(PathBuf),
    /// A `[[test]] name = "drift"` entry that uses the standard harness.
    HarnessTrue(PathBuf),
    /// Writing failed.
    Write(PathBuf, String),
}

impl std::fmt::Display for InitError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            InitError::Read(p, e) => write!(f, "{}: cannot read it: {e}; run init in a package directory or pass --manifest-path", p.display()),
            InitError::Parse(p, e) => write!(f, "{}: not valid TOML: {e}", p.display()),
            InitError::Virtual(p) => write!(f, "{}: a virtual workspace manifest has no [package]; run init in a member package (--manifest-path member/Cargo.toml)", p.display()),
            InitError::Exists(p) => write!(f, "{} exists already; init changed nothing (remove or rename it to start afresh)", p.display()),
            InitError::HarnessTrue(p) => write!(f, "{}: its [[test]] named \"drift\" uses the standard harness; set `harness = false` there (the drift harness has its own main)", p.display()),
            InitError::Write(p, e) => write!(f, "{}: {e}", p.display()),
        }
    }
}

impl std::error::Error for InitError {}

fn test_template(stepper: &str) -> String {
    format!(
        r#"//! cargo-drift harness: measures the steppers registered below on
//! reference problems and compares with drift-baseline.toml.
//! Run `cargo test --test drift`; record with `cargo drift record`.

use drift::{{Rhs, Stepper}};

/// Explicit Euler, so the template runs as it is.
/// Replace it with your own stepper: register your type below instead.
#[derive(Default)]
struct Euler {{
    k: Vec<f64>,
}}

impl Stepper for Euler {{
    fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {{
        self.k.resize(y.len(), 0.0);
        f.rhs(t, y, &mut self.k);
        for (yi, ki) in y.iter_mut().zip(&self.k) {{
            *yi += h * ki;
        }}
    }}
}}

fn main() {{
    drift::Harness::new()
        // .stepper("name", YourStepper::default)        impl drift::Stepper
        // .split_stepper("name", YourVerlet::default)   impl drift::SplitStepper
        // .integrator("name", YourAdaptive::default)    impl drift::Integrator
        .stepper({stepper:?}, Euler::default)
        .main();
}}
"#
    )
}

fn declarations_template(stepper: &str) -> String {
    format!(
        r#"# cargo-drift declarations: what to check and what each stepper claims.
# Without any [[check]], a stepper runs the standard battery: every
# compatible built-in problem at its default parameters.

# [settings]
# budget = 4000000          # most steps of an automatic ladder, per check

[stepper.{stepper:?}]
# order = 1                 # claimed order of convergence, checked on every run
# energy = "linear"         # bounded | random-walk | linear
# reversible = false

# [[check]]
# stepper = {stepper:?}
# problem = "kepler"
# params = {{ e = 0.9 }}
# periods = 5.0
"#
    )
}

fn dependency_item(spec: &DependencySpec) -> Item {
    match spec {
        DependencySpec::Version(v) => value(v.as_str()),
        DependencySpec::Path(p) => {
            let mut t = toml_edit::InlineTable::new();
            t.insert("path", p.display().to_string().into());
            value(t)
        }
    }
}

fn has_dependency(doc: &DocumentMut) -> bool {
    ["dependencies", "dev-dependencies"].iter().any(|t| {
        doc.get(t)
            .and_then(Item::as_table_like)
            .is_some_and(|t| t.contains_key("cargo-drift"))
    })
}

/// Adds what is missing to the manifest; whether anything changed.
fn edit_manifest(
    doc: &mut DocumentMut,
    manifest: &Path,
    dependency: &DependencySpec,
) -> Result<bool, InitError> {
    let mut changed = false;
    if !has_dependency(doc) {
        let deps = doc
            .entry("dev-dependencies")
            .or_insert(Item::Table(Table::new()));
        let table = deps.as_table_like_mut().ok_or_else(|| {
            InitError::Parse(manifest.into(), "[dev-dependencies] is not a table".into())
        })?;
        table.insert("cargo-drift", dependency_item(dependency));
        changed = true;
    }
    let tests = doc
        .entry("test")
        .or_insert(Item::ArrayOfTables(ArrayOfTables::new()));
    let tests = tests.as_array_of_tables_mut().ok_or_else(|| {
        InitError::Parse(
            manifest.into(),
            "`test` is not an array of [[test]] tables".into(),
        )
    })?;
    let existing = tests
        .iter()
        .find(|t| t.get("name").and_then(Item::as_str) == Some("drift"))
        .map(|t| t.get("harness").and_then(Item::as_bool));
    match existing {
        Some(Some(false)) => {}
        Some(_) => return Err(InitError::HarnessTrue(manifest.into())),
        None => {
            let mut t = Table::new();
            t.insert("name", value("drift"));
            t.insert("harness", value(false));
            tests.push(t);
            changed = true;
        }
    }
    let profile = doc.entry("profile").or_insert(Item::Table(Table::new()));
    if let Some(profile) = profile.as_table_mut() {
        profile.set_implicit(true);
        let test = profile.entry("test").or_insert(Item::Table(Table::new()));
        if let Some(test) = test.as_table_like_mut() {
            if !test.contains_key("opt-level") {
                test.insert("opt-level", value(3));
                changed = true;
            }
        }
    }
    Ok(changed)
}

/// Sets up the package at `package_root` (see the module docs).
pub fn init(package_root: &Path, options: &InitOptions) -> Result<InitReport, InitError> {
    let manifest = package_root.join("Cargo.toml");
    let text =
        std::fs::read_to_string(&manifest).map_err(|e| InitError::Read(manifest.clone(), e))?;
    let mut doc: DocumentMut = text
        .parse()
        .map_err(|e: toml_edit::TomlError| InitError::Parse(manifest.clone(), e.to_string()))?;
    if doc.get("package").is_none() {
        return Err(InitError::Virtual(manifest));
    }
    let harness = package_root.join("tests").join("drift.rs");
    let declarations = package_root.join("drift.toml");
    for p in [&harness, &declarations] {
        if p.exists() {
            return Err(InitError::Exists(p.clone()));
        }
    }
    let changed = edit_manifest(&mut doc, &manifest, &options.dependency)?;
    let write = |p: &Path, text: &str| {
        write_atomic(p, text.as_bytes())
            .map_err(|e| InitError::Write(p.to_path_buf(), e.to_string()))
    };
    std::fs::create_dir_all(package_root.join("tests"))
        .map_err(|e| InitError::Write(package_root.join("tests"), e.to_string()))?;
    write(&harness, &test_template(&options.stepper))?;
    write(&declarations, &declarations_template(&options.stepper))?;
    let mut edited = Vec::new();
    if changed {
        write(&manifest, &doc.to_string())?;
        edited.push(manifest);
    }
    Ok(InitReport {
        created: vec![harness, declarations],
        edited,
        next_steps: vec![
            "cargo drift record      # measure and write drift-baseline.toml".into(),
            "cargo drift             # compare with it (or: cargo test --test drift)".into(),
        ],
    })
}
