//! The measuring core against known long-time behaviour, reversibility,
//! floors, periods and planted bugs. Sources are named beside each check.

mod common;

use common::steppers::*;
use drift::baseline::CheckRecord;
use drift::harness::check::ladder_for;
use drift::measure::{
    measure, Config, Fixed, Ladder, LongRun, MeasureError, Measurement, Method, MethodKind, Split,
    Whole,
};
use drift::metrics::DriftClass;
use drift::problem::{
    damped::Damped, driven::Driven, harmonic::Harmonic, kepler::Kepler, pendulum::Pendulum,
    power_law::PowerLaw,
};
use drift::spec::{Catalog, Plan, PlanProblem, Spec};
use drift::{Problem, Rhs, Stepper};

fn run<M: Method>(mut m: M, p: &dyn Problem, cfg: &Config) -> Measurement {
    measure(&mut m, p, cfg).unwrap_or_else(|e| panic!("{}: {e}", p.name()))
}

fn long(n: u64, periods: f64) -> Config {
    Config {
        ladder: Ladder::Steps(vec![n]),
        periods: 10.0,
        long_run: Some(LongRun {
            periods,
            steps_per_unit: Some(n),
            max_steps: u64::MAX,
            repeat: None,
        }),
        ..Config::default()
    }
}

fn energy_drift(m: &Measurement) -> (DriftClass, DriftClass) {
    let e = m
        .invariants
        .iter()
        .find(|i| i.name == "energy")
        .expect("energy invariant");
    (
        e.drift_forward.unwrap().class,
        e.drift_backward.unwrap().class,
    )
}

fn conservative() -> Vec<Box<dyn Problem>> {
    vec![
        Box::new(Harmonic::default()),
        Box::new(Pendulum::default()),
        Box::new(PowerLaw::default()),
        Box::new(Kepler::new(1.0, 1.0, 0.3).unwrap()),
    ]
}

/// Symplectic methods keep the energy error bounded over long times
/// (Hairer, Lubich and Wanner, Geometric Numerical Integration, ch. IX),
/// forward and backward in time.
#[test]
fn symplectic_energy_error_is_bounded() {
    for p in conservative() {
        let m = run(Split(Leapfrog::default()), p.as_ref(), &long(64, 1000.0));
        assert_eq!(
            energy_drift(&m),
            (DriftClass::Bounded, DriftClass::Bounded),
            "leapfrog on {}",
            p.name()
        );
        let m = run(Split(TripleJump::default()), p.as_ref(), &long(64, 1000.0));
        assert_eq!(
            energy_drift(&m),
            (DriftClass::Bounded, DriftClass::Bounded),
            "triple jump on {}",
            p.name()
        );
    }
}

/// Non-symplectic fixed-step methods: energy error grows linearly in t
/// (Hairer, Lubich and Wanner, ch. IX; REFERENCES.md).
#[test]
fn rk4_energy_error_grows_linearly() {
    for p in conservative() {
        let m = run(Fixed(Rk4::default()), p.as_ref(), &long(128, 1000.0));
        assert_eq!(
            energy_drift(&m).0,
            DriftClass::Linear,
            "rk4 on {}",
            p.name()
        );
    }
}

/// Symmetric methods are time-reversible: stepping h then -h returns to the
/// start up to rounding (Hairer, Lubich and Wanner, ch. V). RK4 is not
/// symmetric, so it returns only to its truncation error.
#[test]
fn reversibility_separates_symmetric_methods() {
    let p = Harmonic::default();
    let cfg = long(64, 10.0);
    let lf = run(Split(Leapfrog::default()), &p, &cfg)
        .reversibility_digits
        .unwrap();
    let tj = run(Split(TripleJump::default()), &p, &cfg)
        .reversibility_digits
        .unwrap();
    let rk = run(Fixed(Rk4::default()), &p, &cfg)
        .reversibility_digits
        .unwrap();
    assert!(
        lf >= 13.0 && tj >= 13.0,
        "symmetric methods: {lf} {tj} digits"
    );
    assert!(rk < 10.0, "rk4 came back to {rk} digits");
}

/// Common practice, no source (REFERENCES.md): a well-made RK4 on the
/// harmonic oscillator reaches 13 to 14 digits of energy at a few thousand
/// steps per period over a hundred periods.
#[test]
fn rk4_energy_floor_on_the_harmonic_oscillator() {
    let cfg = Config {
        ladder: Ladder::Steps(vec![256, 512, 1024, 2048, 4096, 8192]),
        periods: 100.0,
        long_run: None,
        reversibility: false,
        ..Config::default()
    };
    let m = run(Fixed(Rk4::default()), &Harmonic::default(), &cfg);
    let best = m.invariants[0].analysis.best.unwrap();
    assert!(
        (13.0..=14.6).contains(&best.digits),
        "energy floor {} digits at rung {}",
        best.digits,
        best.rung
    );
}

fn ladder_cfg(steps: Vec<u64>) -> Config {
    Config {
        ladder: Ladder::Steps(steps),
        periods: 2.0,
        long_run: None,
        reversibility: false,
        ..Config::default()
    }
}

fn order<M: Method>(m: M, p: &dyn Problem, steps: Vec<u64>) -> f64 {
    run(m, p, &ladder_cfg(steps)).solution.fit.unwrap().order
}

/// A mistyped stage coefficient (a32 = 0.49 instead of 0.5) breaks the
/// second-order condition sum b c = 1/2 (HNW I, Table 2.2): order 1.
#[test]
fn planted_wrong_coefficient_drops_the_order() {
    let ladder = vec![64, 128, 256, 512, 1024, 2048];
    let good = order(Fixed(Rk4::default()), &Harmonic::default(), ladder.clone());
    let bad = order(Fixed(Rk4WrongCoef::default()), &Harmonic::default(), ladder);
    assert!(
        (good - 4.0).abs() < 0.05 && (bad - 1.0).abs() < 0.2,
        "rk4 {good}, wrong coefficient {bad}"
    );
}

/// A wrong stage time (c3 = 0 instead of 1/2) is invisible on autonomous
/// problems and drops the order on the driven oscillator, which is why that
/// problem is in the battery.
#[test]
fn planted_wrong_stage_time_shows_only_on_the_driven_oscillator() {
    let ladder = vec![64, 128, 256, 512, 1024];
    let autonomous = order(
        Fixed(Rk4WrongTime::default()),
        &Harmonic::default(),
        ladder.clone(),
    );
    let driven = order(Fixed(Rk4WrongTime::default()), &Driven::default(), ladder);
    assert!((autonomous - 4.0).abs() < 0.05, "harmonic: {autonomous}");
    assert!(driven < 2.0, "driven: {driven}");
}

/// Stage values rounded through f32 cost digits at the fine end: the best
/// digits drop by several compared with the same method in f64.
#[test]
fn planted_f32_intermediate_drops_the_floor() {
    let cfg = Config {
        ladder: Ladder::default(),
        periods: 2.0,
        long_run: None,
        reversibility: false,
        ..Config::default()
    };
    let good = run(Fixed(Rk4::default()), &Harmonic::default(), &cfg)
        .solution
        .best
        .unwrap()
        .digits;
    let bad = run(Fixed(Rk4F32::default()), &Harmonic::default(), &cfg).solution;
    let bad_best = bad.best.unwrap().digits;
    assert!(
        good - bad_best >= 3.0,
        "rk4 best {good}, f32 best {bad_best}"
    );
    assert!(good >= 13.0);
}

/// Leapfrog on x'' = -x rotates by theta per step with cos theta =
/// 1 - h^2/2 (Hairer, Lubich and Wanner, I.5 and ch. IX: the modified
/// frequency of Stormer-Verlet), so its period is 2 pi h / theta. The
/// crossing location must find that period, not the exact one.
#[test]
fn period_of_leapfrog_matches_its_modified_frequency() {
    let n = 64u64;
    let m = run(
        Split(Leapfrog::default()),
        &Harmonic::default(),
        &long(n, 200.0),
    );
    let period = m.long_run.unwrap().period.unwrap();
    let h = std::f64::consts::TAU / n as f64;
    let theory = std::f64::consts::TAU * h / (1.0 - h * h / 2.0).acos();
    // Partial steps locate each crossing to O(h^3); over 200 periods the mean
    // spacing is then good to about 1e-7 relative, far below the O(h^2) = 4e-4
    // period error being measured.
    assert!(
        ((period.measured - theory) / theory).abs() < 1e-6,
        "{} vs {theory}",
        period.measured
    );
    let expected_digits = -((theory - std::f64::consts::TAU) / std::f64::consts::TAU)
        .abs()
        .log10();
    assert!(
        (period.digits.unwrap() - expected_digits).abs() < 0.01,
        "{period:?} {expected_digits}"
    );
}

/// The exact flow of x'' = -x (a rotation by h), as a stepper: every figure
/// the instrument reports must then be at the rounding level.
#[derive(Default)]
struct ExactRotation;
impl Stepper for ExactRotation {
    fn step<F: Rhs + ?Sized>(&mut self, _f: &F, _t: f64, y: &mut [f64], h: f64) {
        let (s, c) = h.sin_cos();
        let (x, v) = (y[0], y[1]);
        y[0] = c * x + s * v;
        y[1] = c * v - s * x;
    }
}

/// Virial theorem 2<T> = p<V> (Landau and Lifshitz, Mechanics, section 10),
/// period and reversibility, on the exact flow: all at rounding level.
#[test]
fn exact_flow_reads_as_rounding_level() {
    let m = run(Fixed(ExactRotation), &Harmonic::default(), &long(64, 100.0));
    let lr = m.long_run.clone().unwrap();
    assert!(
        lr.virial_digits.unwrap() >= 12.0,
        "virial {:?}",
        lr.virial_digits
    );
    assert!(
        lr.period.unwrap().digits.unwrap() >= 12.0,
        "period {:?}",
        lr.period
    );
    assert!(m.reversibility_digits.unwrap() >= 13.0);
    // Rounding alone: bounded or a random walk, never linear.
    assert!(
        energy_drift(&m).0 <= DriftClass::RandomWalk,
        "{:?}",
        energy_drift(&m)
    );
}

/// The virial residual shrinks with the step (RK4 on the quartic oscillator).
#[test]
fn virial_residual_improves_with_resolution() {
    let p = PowerLaw::default();
    let coarse = run(Fixed(Rk4::default()), &p, &long(32, 50.0))
        .long_run
        .unwrap()
        .virial_digits
        .unwrap();
    let fine = run(Fixed(Rk4::default()), &p, &long(256, 50.0))
        .long_run
        .unwrap()
        .virial_digits
        .unwrap();
    assert!(fine > coarse + 2.0, "virial digits {coarse} -> {fine}");
}

/// A stepper that blows up at a known time.
#[derive(Default)]
struct BlowsUp;
impl Stepper for BlowsUp {
    fn step<F: Rhs + ?Sized>(&mut self, _f: &F, t: f64, y: &mut [f64], _h: f64) {
        if t >= 3.0 {
            y[0] = f64::NAN;
        }
    }
}

#[test]
fn nan_is_a_divergence_at_its_time_not_a_panic() {
    let cfg = ladder_cfg(vec![64]);
    let m = run(Fixed(BlowsUp), &Harmonic::default(), &cfg);
    let d = m.diverged.expect("diverged");
    let h = std::f64::consts::TAU / 64.0;
    // First step starting at t >= 3 is step 31 (31 h = 3.04), ending at 32 h.
    assert!((d.t - 32.0 * h).abs() < 1e-12, "diverged at {}", d.t);
    assert_eq!(m.rungs[0].solution_digits, Some(0.0));
}

#[derive(Default)]
struct Panics;
impl Stepper for Panics {
    fn step<F: Rhs + ?Sized>(&mut self, _f: &F, _t: f64, _y: &mut [f64], _h: f64) {
        panic!("stage buffer too small");
    }
}

#[test]
fn a_panicking_stepper_is_an_error_value() {
    let err = measure(
        &mut Fixed(Panics),
        &Harmonic::default(),
        &ladder_cfg(vec![64]),
    )
    .unwrap_err();
    assert_eq!(err, MeasureError::Panicked("stage buffer too small".into()));
}

#[test]
fn split_stepper_on_a_velocity_dependent_force_is_refused() {
    let err = measure(
        &mut Split(Leapfrog::default()),
        &Damped::default(),
        &ladder_cfg(vec![64]),
    )
    .unwrap_err();
    assert!(
        matches!(err, MeasureError::Incompatible(ref m) if m.contains("damped")),
        "{err}"
    );
}

#[test]
fn bad_configuration_is_an_error() {
    let err = measure(
        &mut Fixed(Rk4::default()),
        &Harmonic::default(),
        &ladder_cfg(vec![64, 32]),
    )
    .unwrap_err();
    assert!(
        matches!(err, MeasureError::Config(ref m) if m.contains("increasing")),
        "{err}"
    );
    let err = measure(
        &mut Fixed(Rk4::default()),
        &Harmonic::default(),
        &ladder_cfg(vec![6]),
    )
    .unwrap_err();
    assert!(matches!(err, MeasureError::Config(_)), "{err}");
}

/// Adaptive runs: achieved error against requested tolerance, steps and
/// rejections (design brief: "true error measured, not the solver's
/// requested tolerance"). Common practice, no source: on a benign problem a
/// well-tuned 5(4) pair achieves within about two decades of the requested
/// tolerance; on a highly eccentric orbit the global error over a couple of
/// periods is far larger than the local tolerance, and the controller
/// rejects steps near periapsis.
#[test]
fn adaptive_achieved_error_against_requested_tolerance() {
    let cfg = Config {
        ladder: Ladder::default_tolerances(),
        periods: 2.0,
        long_run: None,
        reversibility: false,
        ..Config::default()
    };
    let achieved = |m: &Measurement| -> Vec<(f64, f64)> {
        m.rungs
            .iter()
            .map(|r| {
                let drift::measure::Resolution::Tolerance(tol) = r.resolution else {
                    panic!("tolerance rung")
                };
                assert!(r.steps > 0 && r.evals > r.steps);
                (-tol.log10(), r.solution_digits.unwrap())
            })
            .collect()
    };
    let benign = run(Whole(DormandPrince::default()), &Harmonic::default(), &cfg);
    for (requested, got) in achieved(&benign).into_iter().filter(|(r, _)| *r >= 6.0) {
        assert!(
            (got - requested).abs() < 2.0,
            "harmonic: requested {requested}, achieved {got} digits"
        );
    }
    let eccentric = run(
        Whole(DormandPrince::default()),
        &Kepler::new(1.0, 1.0, 0.9).unwrap(),
        &cfg,
    );
    let pairs = achieved(&eccentric);
    assert!(
        pairs
            .iter()
            .all(|(requested, got)| got < &(requested - 2.0)),
        "kepler e = 0.9: {pairs:?}"
    );
    assert!(
        pairs.windows(2).skip(4).all(|w| w[1].1 > w[0].1 + 0.5),
        "achieved digits follow the tolerance: {pairs:?}"
    );
    assert!(eccentric.rungs.iter().any(|r| r.rejected > 0));
}

/// The plan a drift.toml without settings gives `stepper/problem`: the
/// default horizon, budget (4e6 steps, so 1e6 per direction of the long run)
/// and long run of 1000 time units.
fn default_plan(stepper: &str, kind: MethodKind, problem: &str) -> Plan {
    let catalog = Catalog {
        steppers: vec![(stepper.to_string(), kind)],
        user_problems: vec![],
    };
    let name = format!("{stepper}/{problem}");
    Spec::default_for(&catalog)
        .plans()
        .into_iter()
        .find(|p| p.name == name)
        .unwrap_or_else(|| panic!("no plan {name}"))
}

/// Measures `method` on the built-in problem of `plan` with `config`.
fn measure_plan<M: Method>(mut method: M, plan: &Plan, config: &Config) -> Measurement {
    let PlanProblem::Builtin { info, params } = &plan.problem else {
        panic!("{} is not built in", plan.name)
    };
    let problem = info.build(params).unwrap();
    problem
        .measure_with(&mut method, config)
        .unwrap_or_else(|e| panic!("{}: {e}", plan.name))
}

/// The long run of a default plan is made over the whole horizon asked for.
fn whole_horizon(m: &Measurement) -> f64 {
    let lr = m.long_run.as_ref().expect("a long run");
    assert_eq!(lr.periods, lr.requested_periods, "shortened long run");
    lr.periods
}

/// Heun's method is not symplectic: its tableau (b = (1/2, 1/2), a21 = 1)
/// breaks the condition b_i a_ij + b_j a_ji = b_i b_j of symplectic
/// Runge-Kutta methods (Hairer, Lubich and Wanner, Geometric Numerical
/// Integration, 2nd ed., Theorem VI.4.3), so its energy error drifts
/// linearly in time (ibid., ch. IX). With the default settings the long run
/// must cover the whole 1000 time units and read that drift on the Kepler
/// problem at its default parameters.
#[test]
fn heun_energy_drift_on_kepler_reads_linear_at_default_settings() {
    let plan = default_plan("heun", MethodKind::Fixed, "kepler");
    let m = measure_plan(Fixed(Heun::default()), &plan, &plan.config);
    assert_eq!(whole_horizon(&m), 1000.0);
    assert_eq!(energy_drift(&m).0, DriftClass::Linear, "{:?}", m.invariants);
}

/// Stormer-Verlet (leapfrog) is symplectic (Hairer, Lubich and Wanner,
/// Theorem VI.3.4) and keeps the energy error bounded over long times
/// (ibid., ch. IX), also where the automatic choice of the long run puts it
/// under the default settings, over the whole horizon.
#[test]
fn leapfrog_energy_stays_bounded_at_default_settings() {
    for problem in ["kepler", "harmonic", "pendulum"] {
        let plan = default_plan("leapfrog", MethodKind::Split, problem);
        let m = measure_plan(Split(Leapfrog::default()), &plan, &plan.config);
        assert_eq!(whole_horizon(&m), 1000.0, "{problem}");
        assert_eq!(
            energy_drift(&m),
            (DriftClass::Bounded, DriftClass::Bounded),
            "leapfrog on {problem}"
        );
    }
}

/// A planted bug (0.49 for the 0.5 of RK4's second stage weight h k2, which
/// drops the order to 1: Hairer, Norsett and Wanner I, II.1, order
/// conditions) measured against the record of the correct RK4 (Kutta 1901;
/// HNW I, Table II.1.2) repeats the recorded long run and reversibility
/// run, so its period, virial and reversibility figures cannot come out
/// better through a finer step. On its own the broken method would be run
/// finer (it needs more steps for 3 digits), which is how it used to earn
/// better figures.
#[test]
fn a_planted_bug_is_measured_where_the_correct_method_was_recorded() {
    let plan = default_plan("rk4", MethodKind::Fixed, "harmonic");
    let good =
        CheckRecord::from_measurement(&measure_plan(Fixed(Rk4::default()), &plan, &plan.config));
    let config = ladder_for(&plan, Some(&good));
    let bad = CheckRecord::from_measurement(&measure_plan(
        Fixed(Rk4WrongCoef::default()),
        &plan,
        &config,
    ));
    let (g, b) = (good.runs, bad.runs);
    assert!(g.long_run.is_some() && g.reversibility.is_some(), "{g:?}");
    assert_eq!(b.long_run, g.long_run);
    assert_eq!(b.reversibility, g.reversibility);
    for (what, now, before) in [
        ("period", bad.period_digits, good.period_digits),
        ("virial", bad.virial_digits, good.virial_digits),
        (
            "reversibility",
            bad.reversibility_digits,
            good.reversibility_digits,
        ),
    ] {
        let (now, before) = (now.expect(what), before.expect(what));
        assert!(
            now <= before,
            "{what}: {now} digits against {before} recorded"
        );
    }
    // Without the record the broken method's own choice is finer.
    let alone = CheckRecord::from_measurement(&measure_plan(
        Fixed(Rk4WrongCoef::default()),
        &plan,
        &plan.config,
    ));
    let n = |r: &CheckRecord| r.runs.long_run.unwrap().steps_per_unit;
    assert!(n(&alone) > n(&good), "{} against {}", n(&alone), n(&good));
}
