//! The `cargo drift` subcommand; everything lives in `drift::cli`.
fn main() -> std::process::ExitCode {
    std::process::ExitCode::from(drift::cli::main_with(std::env::args_os()))
}
