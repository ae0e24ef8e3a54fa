//! Finding the packages to check: cargo_metadata for the workspace, then
//! every selected package that has a declaration file and a harness target.

use std::path::{Path, PathBuf};

use cargo_metadata::{Metadata, MetadataCommand, Package};

use super::args::Common;

/// Name of the harness test target.
pub const HARNESS_TARGET: &str = "drift";

/// A package with a harness.
#[derive(Clone, Debug, PartialEq)]
pub struct Found {
    /// Package name.
    pub name: String,
    /// Its manifest.
    pub manifest: PathBuf,
    /// Its root directory.
    pub root: PathBuf,
    /// Its declaration file, relative to the root.
    pub file: PathBuf,
}

/// Why discovery found nothing to run.
#[derive(Debug)]
pub enum DiscoverError {
    /// `cargo metadata` failed.
    Metadata(String),
    /// A `-p` names no package of the workspace.
    NoSuchPackage(String),
    /// No selected package has a harness.
    NothingFound(Vec<String>),
    /// A package has a declaration file but no harness target.
    NoHarness {
        /// The package.
        package: String,
        /// Its manifest.
        manifest: PathBuf,
    },
}

impl std::fmt::Display for DiscoverError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            DiscoverError::Metadata(m) => write!(f, "cargo metadata failed: {m}"),
            DiscoverError::NoSuchPackage(p) => write!(f, "package `{p}` is not in this workspace"),
            DiscoverError::NothingFound(searched) => write!(
                f,
                "no package to check: none of [{}] has a drift.toml (or [package.metadata.drift] file = ...) \
                 with a `[[test]] name = \"{HARNESS_TARGET}\"` target\n  help: run `cargo drift init` in the package to set one up",
                searched.join(", ")
            ),
            DiscoverError::NoHarness { package, manifest } => write!(
                f,
                "package `{package}` has a declaration file but {} has no `[[test]] name = \"{HARNESS_TARGET}\"` \
                 target\n  help: run `cargo drift init` there, or add the target with `harness = false`",
                manifest.display()
            ),
        }
    }
}

impl std::error::Error for DiscoverError {}

/// Runs `cargo metadata` for the manifest in `common` (or the current
/// directory).
pub fn metadata(common: &Common) -> Result<Metadata, DiscoverError> {
    let mut cmd = MetadataCommand::new();
    if let Some(p) = &common.manifest_path {
        cmd.manifest_path(p);
    }
    cmd.no_deps()
        .exec()
        .map_err(|e| DiscoverError::Metadata(e.to_string()))
}

/// The declaration file of `package`: `[package.metadata.drift] file`, else
/// `drift.toml`.
fn declaration_file(package: &Package) -> PathBuf {
    package
        .metadata
        .get("drift")
        .and_then(|d| d.get("file"))
        .and_then(|f| f.as_str())
        .map_or_else(|| PathBuf::from("drift.toml"), PathBuf::from)
}

fn root_of(package: &Package) -> PathBuf {
    package
        .manifest_path
        .parent()
        .map_or_else(|| PathBuf::from("."), |p| p.as_std_path().to_path_buf())
}

/// The packages `common` selects: `-p` ones, all members with
/// `--workspace` (less `--exclude`), else the root package, else the
/// default members.
fn selected<'m>(meta: &'m Metadata, common: &Common) -> Result<Vec<&'m Package>, DiscoverError> {
    let members = meta.workspace_packages();
    if !common.package.is_empty() {
        return common
            .package
            .iter()
            .map(|name| {
                members
                    .iter()
                    .copied()
                    .find(|p| p.name.as_str() == name)
                    .ok_or_else(|| DiscoverError::NoSuchPackage(name.clone()))
            })
            .collect();
    }
    if common.workspace {
        return Ok(members
            .into_iter()
            .filter(|p| !common.exclude.iter().any(|e| e == p.name.as_str()))
            .collect());
    }
    if let Some(root) = meta.root_package() {
        return Ok(vec![root]);
    }
    Ok(meta.workspace_default_packages())
}

/// The selected packages that have a harness.
pub fn discover(meta: &Metadata, common: &Common) -> Result<Vec<Found>, DiscoverError> {
    let chosen = selected(meta, common)?;
    let mut found = Vec::new();
    for p in &chosen {
        let root = root_of(p);
        let file = declaration_file(p);
        let has_file = root.join(&file).is_file();
        let has_target = p
            .targets
            .iter()
            .any(|t| t.name == HARNESS_TARGET && t.is_test());
        match (has_file, has_target) {
            (_, true) => found.push(Found {
                name: p.name.to_string(),
                manifest: p.manifest_path.clone().into_std_path_buf(),
                root,
                file,
            }),
            (true, false) => {
                return Err(DiscoverError::NoHarness {
                    package: p.name.to_string(),
                    manifest: p.manifest_path.clone().into_std_path_buf(),
                })
            }
            (false, false) => {}
        }
    }
    if found.is_empty() {
        return Err(DiscoverError::NothingFound(
            chosen.iter().map(|p| p.name.to_string()).collect(),
        ));
    }
    Ok(found)
}

/// The manifest `init` works on: `--manifest-path`, else `Cargo.toml` in
/// the current directory.
pub fn init_manifest(common: &Common) -> PathBuf {
    common
        .manifest_path
        .clone()
        .unwrap_or_else(|| Path::new("Cargo.toml").to_path_buf())
}
