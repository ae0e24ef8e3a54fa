//! The floating-point environment a measurement was made in: target triple,
//! compiler version, optimisation level and the floating-point-relevant CPU
//! features enabled at compile time. Results move across machines and
//! builds (fused multiply-add, vector widths, reassociation under
//! optimisation), so the baseline file records this beside the figures.

/// Where and how this build of the library was compiled.
///
/// The target, compiler and profile are captured by the package's build
/// script; the features are the ones enabled at compile time
/// (`cfg!(target_feature = ...)`), from a fixed list of features that change
/// floating-point results or their speed on the compiled architecture.
///
/// ```
/// let env = drift::env::Environment::current();
/// assert!(!env.target.is_empty());
/// assert!(env.profile.contains("opt-level"));
/// // The list holds only features of the compiled architecture, in a fixed order.
/// let again = drift::env::Environment::current();
/// assert_eq!(env, again);
/// ```
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Environment {
    /// Target triple, e.g. `x86_64-unknown-linux-gnu`.
    pub target: String,
    /// `rustc -V` of the compiler, or `unknown` when it could not be asked.
    pub rustc: String,
    /// Cargo profile family, optimisation level and whether debug assertions
    /// were on, e.g. `release, opt-level 3` or `debug, opt-level 0, debug-assertions`.
    pub profile: String,
    /// Floating-point-relevant target features enabled at compile time,
    /// e.g. `["sse2", "fma"]`.
    pub features: Vec<String>,
}

/// Candidate features of the compiled architecture with whether each was on.
#[cfg(any(target_arch = "x86", target_arch = "x86_64"))]
const FP_FEATURES: &[(&str, bool)] = &[
    ("sse2", cfg!(target_feature = "sse2")),
    ("sse4.1", cfg!(target_feature = "sse4.1")),
    ("avx", cfg!(target_feature = "avx")),
    ("avx2", cfg!(target_feature = "avx2")),
    ("fma", cfg!(target_feature = "fma")),
    ("avx512f", cfg!(target_feature = "avx512f")),
];

/// Candidate features of the compiled architecture with whether each was on.
#[cfg(target_arch = "aarch64")]
const FP_FEATURES: &[(&str, bool)] = &[
    ("neon", cfg!(target_feature = "neon")),
    ("fp16", cfg!(target_feature = "fp16")),
    ("sve", cfg!(target_feature = "sve")),
];

/// Candidate features of the compiled architecture (none known for it).
#[cfg(not(any(target_arch = "x86", target_arch = "x86_64", target_arch = "aarch64")))]
const FP_FEATURES: &[(&str, bool)] = &[];

impl Environment {
    /// The environment of this build.
    ///
    /// ```
    /// let env = drift::env::Environment::current();
    /// #[cfg(target_arch = "x86_64")]
    /// assert!(env.features.iter().any(|f| f == "sse2")); // baseline of x86-64
    /// assert!(env.features.iter().all(|f| !f.is_empty()));
    /// ```
    pub fn current() -> Environment {
        Environment {
            target: env!("DRIFT_BUILD_TARGET").to_string(),
            rustc: env!("DRIFT_BUILD_RUSTC").to_string(),
            profile: env!("DRIFT_BUILD_PROFILE").to_string(),
            features: FP_FEATURES
                .iter()
                .filter(|(_, on)| *on)
                .map(|(name, _)| name.to_string())
                .collect(),
        }
    }
}
