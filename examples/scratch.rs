#[path = "../tests/common/steppers.rs"]
#[allow(dead_code)]
mod steppers;
use drift::measure::*;
fn show(p: &dyn drift::Problem) {
    let cfg = Config {
        ladder: Ladder::Auto {
            start: 16,
            max_rungs: 22,
            budget: 4_000_000,
        },
        periods: 2.0,
        long_run: None,
        reversibility: false,
        ..Config::default()
    };
    let m = measure(&mut Fixed(steppers::Rk4::default()), p, &cfg).unwrap();
    let mut prev: Option<(f64, f64)> = None;
    for (r, c) in m.rungs.iter().zip(&m.solution.classes) {
        let n = r.resolution.steps_per_unit().unwrap() as f64;
        let d = r.solution_digits.unwrap_or(f64::NAN);
        let s = prev
            .map(|(pn, pd)| (d - pd) / (n.log10() - pn.log10()))
            .unwrap_or(f64::NAN);
        println!("{n:>8} d {d:7.3} local {s:6.3} {c:?}");
        prev = Some((n, d));
    }
    println!("{:?}", m.solution.fit);
}
fn main() {
    show(&drift::problem::kepler::Kepler::default());
    show(&drift::problem::power_law::PowerLaw::default());
}
