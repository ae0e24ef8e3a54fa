//! The `cargo drift` subcommand: argument parsing, discovery of packages,
//! building and running their harnesses, and the verbs.

pub mod model;
