//! The `cargo drift` subcommand (command-line front end; see `drift::cli`).
fn main() {
    eprintln!(
        "cargo-drift {}: the subcommand is not built yet; use the library through `cargo test`.",
        env!("CARGO_PKG_VERSION")
    );
    std::process::exit(2);
}
