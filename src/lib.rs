//! cargo-drift: guards time-stepping code against silent loss of accuracy.
//!
//! You implement one of [`Stepper`], [`SplitStepper`] or [`Integrator`] for
//! your method; [`measure::measure`] runs it on a [`Problem`] (a built-in
//! reference from [`problem::registry`], or your own) over a ladder of step
//! sizes and returns a [`measure::Measurement`]: digits per rung, the order of
//! convergence with its fit range, the roundoff floor, invariant drift,
//! period, virial residual and reversibility.
//!
//! ```
//! use drift::measure::{measure, Config, Fixed, Ladder};
//! use drift::problem::harmonic::Harmonic;
//! use drift::{Rhs, Stepper};
//!
//! /// The explicit midpoint rule (Hairer-Norsett-Wanner I, II.1), order 2.
//! #[derive(Default)]
//! struct Midpoint { k: Vec<f64>, mid: Vec<f64> }
//! impl Stepper for Midpoint {
//!     fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
//!         let n = y.len();
//!         self.k.resize(n, 0.0);
//!         self.mid.resize(n, 0.0);
//!         f.rhs(t, y, &mut self.k);
//!         for i in 0..n { self.mid[i] = y[i] + 0.5 * h * self.k[i]; }
//!         f.rhs(t + 0.5 * h, &self.mid, &mut self.k);
//!         for i in 0..n { y[i] += h * self.k[i]; }
//!     }
//! }
//!
//! let config = Config { ladder: Ladder::Steps(vec![64, 128, 256, 512, 1024]), ..Config::default() };
//! let m = measure(&mut Fixed(Midpoint::default()), &Harmonic::default(), &config).unwrap();
//! let fit = m.solution.fit.unwrap();
//! assert!((fit.order - 2.0).abs() < 0.05);
//! let energy = &m.invariants[0];
//! assert_eq!(energy.name, "energy");
//! // The midpoint rule is not symplectic: its energy error grows.
//! assert_ne!(energy.drift_forward.unwrap().class, drift::metrics::DriftClass::Bounded);
//! ```
//!
//! A good figure is numerical verification of a stepper on reference
//! problems, not validation of a physical model; for safety-relevant work,
//! defer to the applicable verification-and-validation standards and to
//! licensed engineering judgment.
#![warn(missing_docs)]

pub mod atomic;
pub mod baseline;
pub mod claims;
pub mod cli;
pub mod env;
pub mod harness;
pub mod measure;
pub mod metrics;
pub mod problem;
pub mod spec;
pub mod special;
pub mod stepper;
mod textpos;

pub use harness::Harness;
pub use problem::{Invariant, ParamError, Problem};

/// The examples in README.md, compiled and run as doctests.
#[cfg(doctest)]
#[doc = include_str!("../README.md")]
pub struct ReadmeDoctests;
pub use stepper::{Accel, Control, Counts, IntegrateError, Integrator, Rhs, SplitStepper, Stepper};
