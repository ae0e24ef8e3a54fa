//! A tour of the measuring core: a hand-written classical Runge-Kutta
//! stepper, as a user would write it, measured on every built-in reference
//! problem with the default configuration.
//!
//! Run with `cargo run --release --example tour`.

use drift::measure::{Config, Fixed, Measurement};
use drift::problem::registry;

#[path = "support/user_rk4.rs"]
mod user_rk4;
use user_rk4::Rk4;

fn opt(v: Option<f64>, width: usize, prec: usize) -> String {
    v.map_or(format!("{:>width$}", "-"), |v| format!("{v:>width$.prec$}"))
}

fn row(m: &Measurement) -> String {
    let fit = m.solution.fit;
    let steps = |k: usize| m.rungs[k].resolution.steps_per_unit().unwrap_or(0);
    let range = fit.map_or("-".to_string(), |f| {
        format!("{}..{}", steps(f.first), steps(f.last))
    });
    let energy = m
        .invariants
        .iter()
        .find(|i| i.name == "energy")
        .and_then(|i| i.drift_forward);
    format!(
        "{:<15} {:<6} {} {:>12} {} {:<12} {}",
        m.problem,
        if m.basis == drift::measure::Basis::Exact {
            "exact"
        } else {
            "self"
        },
        opt(fit.map(|f| f.order), 6, 3),
        range,
        opt(m.solution.best.map(|b| b.digits), 6, 2),
        energy.map_or("-", |e| e.class.name()),
        opt(m.reversibility_digits, 6, 2),
    )
}

fn main() {
    println!("classical RK4 on the built-in reference problems (default configuration)\n");
    println!(
        "{:<15} {:<6} {:>6} {:>12} {:>6} {:<12} {:>6}",
        "problem", "error", "order", "fit range", "best", "energy", "return"
    );
    for info in registry::catalog() {
        let started = std::time::Instant::now();
        let problem = info.build_default().expect("defaults are valid");
        let config = Config {
            periods: info.periods,
            ..Config::default()
        };
        match problem.measure_with(&mut Fixed(Rk4::default()), &config) {
            Ok(m) => println!("{} {:>7.0?}", row(&m), started.elapsed()),
            Err(e) => println!("{:<15} error: {e}", info.name),
        }
    }
    println!("\norder: fitted convergence order over the fit range (steps per period);");
    println!("best: most digits reached; energy: drift of the energy error over 1000 periods;");
    println!("return: digits of the forward-then-backward return. A pass is numerical");
    println!("verification of a stepper on reference problems, not validation of a model.");
}
