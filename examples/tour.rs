//! A tour of the measuring core: a hand-written classical Runge-Kutta
//! stepper, as a user would write it, measured on every built-in reference
//! problem with the default configuration.
//!
//! Run with `cargo run --release --example tour`.

use drift::measure::{Config, Fixed, Measurement};
use drift::problem::registry;
use drift::{Rhs, Stepper};

/// Classical fourth-order Runge-Kutta (Hairer-Norsett-Wanner I, II.1).
#[derive(Default)]
struct Rk4 {
    k: [Vec<f64>; 4],
    tmp: Vec<f64>,
}

impl Stepper for Rk4 {
    fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
        let n = y.len();
        for k in &mut self.k {
            k.resize(n, 0.0);
        }
        self.tmp.resize(n, 0.0);
        let [k1, k2, k3, k4] = &mut self.k;
        f.rhs(t, y, k1);
        for i in 0..n {
            self.tmp[i] = y[i] + 0.5 * h * k1[i];
        }
        f.rhs(t + 0.5 * h, &self.tmp, k2);
        for i in 0..n {
            self.tmp[i] = y[i] + 0.5 * h * k2[i];
        }
        f.rhs(t + 0.5 * h, &self.tmp, k3);
        for i in 0..n {
            self.tmp[i] = y[i] + h * k3[i];
        }
        f.rhs(t + h, &self.tmp, k4);
        for i in 0..n {
            y[i] += h / 6.0 * (k1[i] + 2.0 * k2[i] + 2.0 * k3[i] + k4[i]);
        }
    }
}

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
