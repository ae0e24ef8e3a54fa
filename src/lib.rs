//! cargo-drift: guards time-stepping code against silent loss of accuracy.
#![warn(missing_docs)]

pub mod baseline;
pub mod claims;
pub mod env;
pub mod measure;
pub mod metrics;
pub mod problem;
pub mod special;
pub mod stepper;

pub use problem::{Invariant, ParamError, Problem};
pub use stepper::{Accel, Control, Counts, IntegrateError, Integrator, Rhs, SplitStepper, Stepper};
