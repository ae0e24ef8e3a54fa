//! Build script: records the floating-point-relevant build environment (target
//! triple, compiler version, optimisation level) for `drift::env`, which stores
//! it in the header of the baseline file.

use std::process::Command;

fn main() {
    println!("cargo:rerun-if-changed=build.rs");
    let var = |name: &str| std::env::var(name).unwrap_or_else(|_| "unknown".to_string());
    println!("cargo:rustc-env=DRIFT_BUILD_TARGET={}", var("TARGET"));
    let debug_assertions = if std::env::var_os("CARGO_CFG_DEBUG_ASSERTIONS").is_some() {
        ", debug-assertions"
    } else {
        ""
    };
    println!(
        "cargo:rustc-env=DRIFT_BUILD_PROFILE={}, opt-level {}{debug_assertions}",
        var("PROFILE"),
        var("OPT_LEVEL")
    );
    println!("cargo:rustc-env=DRIFT_BUILD_RUSTC={}", rustc_version());
}

/// `$RUSTC -V` (cargo sets `RUSTC` for build scripts), or "unknown" when it
/// cannot be run or says nothing usable.
fn rustc_version() -> String {
    let rustc = std::env::var_os("RUSTC").unwrap_or_else(|| "rustc".into());
    Command::new(rustc)
        .arg("-V")
        .output()
        .ok()
        .filter(|out| out.status.success())
        .and_then(|out| String::from_utf8(out.stdout).ok())
        .map(|s| s.trim().replace(['\n', '\r'], " "))
        .filter(|s| !s.is_empty())
        .unwrap_or_else(|| "unknown".to_string())
}
