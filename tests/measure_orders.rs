//! The measuring core against the published orders of the test steppers
//! (Hairer-Norsett-Wanner I, II.1 for Euler 1, Heun and midpoint 2, RK4 4;
//! Stormer-Verlet 2; Yoshida, Phys. Lett. A 150 (1990) 262 for the triple
//! jump 4; Dormand and Prince 1980 for 5(4)) on every compatible built-in
//! reference problem, the non-autonomous driven oscillator included.
//!
//! Run with `--nocapture` to see the table of measured orders and floors.
//! Adaptive orders on tolerance ladders are in `tests/measure_adaptive.rs`.

mod common;

use common::steppers::*;
use drift::measure::{measure, Config, Fixed, Ladder, Measurement, Method, Split, Whole};
use drift::metrics::FitStatus;
use drift::problem::has_second_order;
use drift::problem::{
    arenstorf::Arenstorf, damped::Damped, driven::Driven, harmonic::Harmonic, kepler::Kepler,
    linear::Linear, lotka_volterra::LotkaVolterra, pendulum::Pendulum, power_law::PowerLaw,
};
use drift::Problem;

/// Fixed-step orders must come out within this of the published order
/// (the tolerance the project promises; issue text).
const FIXED_BAND: f64 = 0.05;

fn problems_all() -> Vec<Box<dyn Problem>> {
    vec![
        Box::new(Harmonic::default()),
        Box::new(PowerLaw::default()),
        Box::new(Pendulum::default()),
        Box::new(Kepler::new(1.0, 1.0, 0.5).unwrap()),
        Box::new(Damped::default()),
        Box::new(Driven::default()),
        Box::new(Driven::new(1.0, 1.0, 0.5, 1.0, 0.0).unwrap()),
        Box::new(Linear::default()),
        Box::new(Arenstorf::default()),
        Box::new(LotkaVolterra::default()),
    ]
}

fn config(budget: u64) -> Config {
    Config {
        ladder: Ladder::Auto {
            start: 16,
            max_rungs: 22,
            budget,
        },
        periods: 2.0,
        long_run: None,
        reversibility: false,
        ..Config::default()
    }
}

fn row(method: &str, p: &dyn Problem, m: &Measurement) -> String {
    let fit = m.solution.fit;
    let used = fit.map_or("-".into(), |f| {
        let n = |k: usize| {
            m.rungs[k]
                .resolution
                .steps_per_unit()
                .map_or(m.rungs[k].evals, |n| n)
        };
        format!("{}..{}", n(f.first), n(f.last))
    });
    format!(
        "{method:<11} {:<14} {:>7} {:>7.3} [{:>5.3}, {:>5.3}] {:<10} {:>7.4} {:>6.2} {:>12}",
        p.name(),
        format!("{:?}", m.basis).chars().take(5).collect::<String>(),
        fit.map_or(f64::NAN, |f| f.order),
        fit.map_or(f64::NAN, |f| f.low),
        fit.map_or(f64::NAN, |f| f.high),
        fit.map_or("none", |f| f.status.name()),
        fit.map_or(f64::NAN, |f| f.residual),
        m.solution.best.map_or(f64::NAN, |b| b.digits),
        used
    )
}

/// Measures `make()` on every problem in `problems`, prints a table row each
/// and returns the rows that do not read an asymptotic order within `band`
/// of `expected`. Problems named in `out_of_reach` are those the method
/// cannot reach the asymptotic range of within the budget: for them the
/// instrument must say so (no reading, or a converging one) instead of
/// reporting an asymptotic order.
fn sweep<M: Method>(
    name: &str,
    make: impl Fn() -> M,
    expected: f64,
    band: f64,
    problems: &[Box<dyn Problem>],
    config: &Config,
    out_of_reach: &[&str],
) -> Vec<String> {
    let mut misses = Vec::new();
    for p in problems {
        // At most two time units, fewer where the problem's default horizon
        // is shorter (Kepler: one orbit).
        let horizon = drift::problem::registry::find(p.name()).map_or(2.0, |i| i.periods.min(2.0));
        let config = Config {
            periods: horizon,
            ..config.clone()
        };
        let m = measure(&mut make(), p.as_ref(), &config)
            .unwrap_or_else(|e| panic!("{name} on {}: {e}", p.name()));
        let r = row(name, p.as_ref(), &m);
        println!("{r}");
        let asymptotic = m
            .solution
            .fit
            .filter(|f| f.status == FitStatus::Asymptotic)
            .map(|f| f.order);
        if out_of_reach.contains(&p.name()) {
            if asymptotic.is_some() {
                misses.push(format!(
                    "{r}   <- expected no asymptotic range within the budget"
                ));
            }
        } else if !asymptotic.is_some_and(|o| (o - expected).abs() <= band) {
            misses.push(format!(
                "{r}   <- expected an asymptotic {expected} +- {band}"
            ));
        }
    }
    misses
}

/// Low-order methods cannot reach the asymptotic range of the Arenstorf
/// orbit within a test budget: Hairer-Norsett-Wanner I, II.0 show Euler
/// failing at 24000 steps where RK4 needs thousands; here the measured RK4
/// floor over two periods is under 4 digits at 5e5 steps per period.
const LOW_ORDER_OUT_OF_REACH: &[&str] = &["arenstorf"];

fn assert_none_missed(misses: &[String]) {
    assert!(
        misses.is_empty(),
        "orders outside the band:\n{}",
        misses.join("\n")
    );
}

#[test]
fn explicit_runge_kutta_orders_on_every_problem() {
    let all = problems_all();
    let oor = LOW_ORDER_OUT_OF_REACH;
    let mut misses = sweep(
        "euler",
        || Fixed(Euler::default()),
        1.0,
        FIXED_BAND,
        &all,
        &config(60_000_000),
        oor,
    );
    misses.extend(sweep(
        "heun",
        || Fixed(Heun::default()),
        2.0,
        FIXED_BAND,
        &all,
        &config(8_000_000),
        oor,
    ));
    // The midpoint rule gets there at this budget: the ladder's refined
    // last rung (3.7e6 steps per period) adds the third agreeing slope.
    misses.extend(sweep(
        "midpoint",
        || Fixed(Midpoint::default()),
        2.0,
        FIXED_BAND,
        &all,
        &config(8_000_000),
        &[],
    ));
    misses.extend(sweep(
        "rk4",
        || Fixed(Rk4::default()),
        4.0,
        FIXED_BAND,
        &all,
        &config(4_000_000),
        &[],
    ));
    assert_none_missed(&misses);
}

#[test]
fn split_stepper_orders_on_every_second_order_problem() {
    let split: Vec<Box<dyn Problem>> = problems_all()
        .into_iter()
        .filter(|p| has_second_order(p.as_ref()))
        .collect();
    let names: Vec<&str> = split.iter().map(|p| p.name()).collect();
    assert_eq!(
        names,
        [
            "harmonic",
            "power_law",
            "pendulum",
            "kepler",
            "driven",
            "driven"
        ]
    );
    let mut misses = sweep(
        "leapfrog",
        || Split(Leapfrog::default()),
        2.0,
        FIXED_BAND,
        &split,
        &config(8_000_000),
        &[],
    );
    let tj = sweep(
        "triple-jump",
        || Split(TripleJump::default()),
        4.0,
        FIXED_BAND,
        &split,
        &config(4_000_000),
        &[],
    );
    misses.extend(tj);
    assert_none_missed(&misses);
}

#[test]
fn fixed_step_wrapper_measures_plain_steppers_too() {
    // The same RK4 through the Stepper and through a fixed-step Integrator
    // (Dormand-Prince at Control::Steps is fifth order).
    let p = Harmonic::default();
    let m = measure(&mut Whole(DormandPrince::default()), &p, &config(4_000_000)).unwrap();
    let o = m.solution.fit.unwrap().order;
    assert!(
        (o - 5.0).abs() <= FIXED_BAND,
        "dopri at fixed steps: order {o}"
    );
    let m = measure(&mut Fixed(Rk4::default()), &p, &config(4_000_000)).unwrap();
    assert_eq!(m.evals_per_step, 4.0);
}
