//! Benchmark of the measuring core: what `drift::measure::measure` costs
//! over a hand-written loop doing the same work (classical RK4 on the
//! harmonic oscillator, error and energy read at the same samples), and the
//! wall time of the standard battery for one RK4 stepper.
//!
//! Run with `cargo bench --bench overhead` (optimised build, no harness).

use std::hint::black_box;
use std::time::{Duration, Instant};

use drift::measure::{measure, Config, Counted, Fixed, Ladder};
use drift::metrics::digits;
use drift::problem::harmonic::Harmonic;
use drift::problem::registry;
use drift::{Problem, Rhs, Stepper};

#[path = "../examples/support/user_rk4.rs"]
mod user_rk4;
use user_rk4::Rk4;

/// Samples per time unit, the library default (`Config::default()`).
const SAMPLES_PER_UNIT: u64 = 4;
/// Timed runs of each side, after `WARM_UP` untimed ones.
const RUNS: usize = 15;
/// Untimed runs of each side before timing.
const WARM_UP: usize = 2;

/// Largest solution error (component-scaled) and largest relative energy
/// error over the samples.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Errors {
    solution: f64,
    energy: f64,
}

/// The hand-written measuring loop: `n` steps per period over `periods`
/// periods with `t_i = t0 + i h`, the right-hand side `f` called by the
/// stepper, and at every sample the exact solution, the component-scaled
/// error and the energy error of `p`, keeping the largest. `f` is the
/// problem itself, or the problem behind the library's evaluation counter
/// (to isolate that counter's cost).
fn hand_loop<F: Rhs>(f: &F, p: &Harmonic, n: u64, periods: f64) -> Errors {
    let mut rk4 = Rk4::default();
    let dim = p.dim();
    let mut y = vec![0.0; dim];
    p.initial(&mut y);
    let mut scales = vec![1.0; dim];
    p.scales(&mut scales);
    let mut exact = vec![0.0; dim];
    let (mut inv0, mut inv) = ([0.0], [0.0]);
    p.invariant_values(p.t0(), &y, &mut inv0);
    let inv_scale = p.invariants()[0].scale;
    let total = (n as f64 * periods).round() as u64;
    let stride = n / SAMPLES_PER_UNIT;
    let t0 = p.t0();
    let h = periods * p.time_unit() / total as f64;
    let mut worst = Errors {
        solution: 0.0,
        energy: 0.0,
    };
    let mut i = 0;
    while i < total {
        let next = i + stride;
        for j in i..next {
            rk4.step(f, t0 + j as f64 * h, &mut y, h);
        }
        let t = t0 + next as f64 * h;
        p.exact(t, &mut exact);
        for ((a, b), s) in y.iter().zip(&exact).zip(&scales) {
            worst.solution = worst.solution.max((a - b).abs() / s);
        }
        p.invariant_values(t, &y, &mut inv);
        worst.energy = worst.energy.max((inv[0] - inv0[0]).abs() / inv_scale);
        i = next;
    }
    worst
}

/// The library side: one fixed rung of `n` steps per period over `periods`
/// periods, no long run, no reversibility run; returns the digits it read.
fn library(p: &Harmonic, n: u64, periods: f64) -> (f64, f64) {
    let config = Config {
        ladder: Ladder::Steps(vec![n]),
        periods,
        long_run: None,
        reversibility: false,
        ..Config::default()
    };
    let m = measure(&mut Fixed(Rk4::default()), p, &config).expect("the rung runs");
    let rung = &m.rungs[0];
    (
        rung.solution_digits
            .expect("harmonic has an exact solution"),
        rung.invariant_digits[0],
    )
}

/// Minimum and median of a set of durations.
fn min_median(mut d: Vec<Duration>) -> (Duration, Duration) {
    d.sort();
    (d[0], d[d.len() / 2])
}

fn ms(d: Duration) -> f64 {
    d.as_secs_f64() * 1e3
}

fn time<T>(f: impl FnOnce() -> T) -> Duration {
    let started = Instant::now();
    black_box(f());
    started.elapsed()
}

fn machine() {
    let cores = std::thread::available_parallelism().map_or(0, |n| n.get());
    let model = std::fs::read_to_string("/proc/cpuinfo")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("model name"))
                .and_then(|l| l.split_once(':'))
                .map(|(_, m)| m.trim().to_string())
        })
        .unwrap_or_else(|| "(not readable)".to_string());
    println!("machine: {cores} logical CPUs (available parallelism), CPU model: {model}");
    println!(
        "build: {} profile, target {}-{}",
        if cfg!(debug_assertions) {
            "debug"
        } else {
            "optimised"
        },
        std::env::consts::ARCH,
        std::env::consts::OS
    );
}

/// Times the library against the hand-written loop (and the hand-written
/// loop behind the evaluation counter) at `n` steps per period over
/// `periods` periods; runs are interleaved so that load from other processes
/// falls on all sides alike.
fn overhead_row(n: u64, periods: f64) {
    let p = Harmonic::default();
    let counted_p = Counted::new(&p);
    // The same work: both sides must read bit-identical errors.
    let (lib_sol, lib_inv) = library(&p, n, periods);
    let hand = hand_loop(&p, &p, n, periods);
    assert_eq!(
        (lib_sol, lib_inv),
        (digits(hand.solution), digits(hand.energy)),
        "library and hand-written loop disagree"
    );
    assert_eq!(hand, hand_loop(&counted_p, &p, n, periods));
    for _ in 0..WARM_UP {
        black_box(library(black_box(&p), n, periods));
        black_box(hand_loop(black_box(&p), &p, n, periods));
    }
    let (mut lib, mut direct, mut counted) = (Vec::new(), Vec::new(), Vec::new());
    for _ in 0..RUNS {
        lib.push(time(|| library(black_box(&p), n, periods)));
        direct.push(time(|| hand_loop(black_box(&p), &p, n, periods)));
        counted.push(time(|| hand_loop(black_box(&counted_p), &p, n, periods)));
    }
    let total = (n as f64 * periods).round() as u64;
    let (lib, direct, counted) = (min_median(lib), min_median(direct), min_median(counted));
    let pct = |a: Duration, b: Duration| (a.as_secs_f64() / b.as_secs_f64() - 1.0) * 100.0;
    let per_step = |d: Duration| d.as_secs_f64() * 1e9 / total as f64;
    println!(
        "\n{n} steps per period x {periods} periods = {total} steps, sample every {} steps ({:.2} solution digits, {:.2} energy digits)",
        n / SAMPLES_PER_UNIT,
        lib_sol,
        lib_inv
    );
    println!(
        "  {:<34} {:>9} {:>11} {:>12} {:>10}",
        "side", "min ms", "median ms", "ns/step med", "vs hand"
    );
    for (name, (min, med)) in [
        ("library measure(Fixed(rk4), ..)", lib),
        ("hand-written, rhs direct", direct),
        ("hand-written, rhs through Counted", counted),
    ] {
        println!(
            "  {:<34} {:>9.2} {:>11.2} {:>12.2} {:>+9.1}%",
            name,
            ms(min),
            ms(med),
            per_step(med),
            pct(med, direct.1)
        );
    }
    println!(
        "  overhead (median library / median hand-written - 1): {:+.1}%  (by min: {:+.1}%)",
        pct(lib.1, direct.1),
        pct(lib.0, direct.0)
    );
}

/// The standard battery: every catalogue entry with its default horizon and
/// otherwise the default configuration, `reps` times; per-problem min and
/// median and the total of each repetition.
fn battery(reps: usize) {
    let catalog = registry::catalog();
    let mut times = vec![Vec::new(); catalog.len()];
    let mut totals = Vec::new();
    for _ in 0..reps {
        let mut total = Duration::ZERO;
        for (info, slot) in catalog.iter().zip(&mut times) {
            let problem = info.build_default().expect("defaults are valid");
            let config = Config {
                periods: info.periods,
                ..Config::default()
            };
            let d = time(|| {
                problem
                    .measure_with(&mut Fixed(Rk4::default()), black_box(&config))
                    .unwrap_or_else(|e| panic!("{}: {e}", info.name))
            });
            slot.push(d);
            total += d;
        }
        totals.push(total);
    }
    println!(
        "\nstandard battery, one RK4 stepper, default configuration with each problem's horizon ({reps} repetitions)"
    );
    println!(
        "  {:<16} {:>8} {:>9} {:>11}",
        "problem", "periods", "min ms", "median ms"
    );
    for (info, d) in catalog.iter().zip(times) {
        let (min, med) = min_median(d);
        println!(
            "  {:<16} {:>8} {:>9.1} {:>11.1}",
            info.name,
            info.periods,
            ms(min),
            ms(med)
        );
    }
    let (min, med) = min_median(totals);
    println!(
        "  {:<16} {:>8} {:>9.1} {:>11.1}   (target: under 2000 ms)",
        "total",
        "",
        ms(min),
        ms(med)
    );
}

fn main() {
    machine();
    println!("\n1. overhead of the measuring core: classical RK4 on the harmonic oscillator,");
    println!("   one fixed rung, error and energy read at {SAMPLES_PER_UNIT} samples per period;");
    println!("   {RUNS} interleaved runs of each side after {WARM_UP} warm-up runs");
    overhead_row(1024, 5_000.0);
    overhead_row(64, 80_000.0);
    println!("\n2. standard battery");
    battery(5);
}
