//! Tests of the simple built-in problems (harmonic, damped, driven, linear,
//! Arenstorf, Lotka-Volterra) against published values and mpmath tables.

mod common;

use common::{exact_rhs_mismatch, invariant_change_on_exact, read_table, ulps_rel};
use drift::problem::arenstorf::Arenstorf;
use drift::problem::damped::{Damped, Regime};
use drift::problem::driven::Driven;
use drift::problem::harmonic::Harmonic;
use drift::problem::linear::Linear;
use drift::problem::lotka_volterra::LotkaVolterra;
use drift::{ParamError, Problem, Rhs};

/// Classical fourth-order Runge-Kutta (Hairer, Norsett and Wanner I, II.1,
/// Table 1.2), `n` equal steps from `t0` to `t1` with integer step counting;
/// `observe` sees the state after every step.
fn rk4(p: &dyn Problem, y: &mut [f64], t0: f64, t1: f64, n: u64, mut observe: impl FnMut(&[f64])) {
    let d = y.len();
    let h = (t1 - t0) / n as f64;
    let (mut k1, mut k2, mut k3, mut k4) = (vec![0.0; d], vec![0.0; d], vec![0.0; d], vec![0.0; d]);
    let mut tmp = vec![0.0; d];
    for i in 0..n {
        let t = t0 + i as f64 * h;
        p.rhs(t, y, &mut k1);
        for j in 0..d {
            tmp[j] = y[j] + 0.5 * h * k1[j];
        }
        p.rhs(t + 0.5 * h, &tmp, &mut k2);
        for j in 0..d {
            tmp[j] = y[j] + 0.5 * h * k2[j];
        }
        p.rhs(t + 0.5 * h, &tmp, &mut k3);
        for j in 0..d {
            tmp[j] = y[j] + h * k3[j];
        }
        p.rhs(t + h, &tmp, &mut k4);
        for j in 0..d {
            y[j] += h / 6.0 * (k1[j] + 2.0 * k2[j] + 2.0 * k3[j] + k4[j]);
        }
        observe(y);
    }
}

fn initial_of(p: &dyn Problem) -> Vec<f64> {
    let mut y = vec![0.0; p.dim()];
    p.initial(&mut y);
    y
}

fn num(s: &str) -> f64 {
    s.parse().unwrap_or_else(|e| panic!("{s}: {e}"))
}

/// Worst error, in units of f64 epsilon, of `exact` against the rows of
/// `simple_table.txt` whose first field is `kind`. `build` makes the problem
/// from the parameter fields. The error of component `i` is divided by
/// `s_i * max(1, L)`, where `s_i` are the problem's scales and `L` is the
/// size of the reference state in those scales, `|(y_i / s_i)|_2`: plain
/// component-scaled error while the solution stays within its scales, and
/// relative to the current size when it has grown beyond them (resonance,
/// `Re lambda > 0`).
fn table_worst(kind: &str, build: impl Fn(&[f64]) -> Box<dyn Problem>) -> f64 {
    let mut worst = 0.0f64;
    let mut rows = 0;
    for row in read_table("simple_table.txt")
        .iter()
        .filter(|r| r[0] == kind)
    {
        let fields: Vec<f64> = row[1..].iter().map(|s| num(s)).collect();
        let (params, rest) = fields.split_at(fields.len() - 3);
        let (t, reference) = (rest[0], &rest[1..]);
        let p = build(params);
        let (mut y, mut s) = (vec![0.0; 2], vec![0.0; 2]);
        assert!(p.exact(t, &mut y));
        p.scales(&mut s);
        let size = reference[0].hypot(reference[1] * s[0] / s[1]) / s[0];
        for i in 0..2 {
            let e = (y[i] - reference[i]).abs() / (s[i] * size.max(1.0)) / f64::EPSILON;
            assert!(e.is_finite(), "{kind} {params:?} t = {t}");
            if e > 4.0 {
                eprintln!("{kind} {params:?} t = {t} component {i}: {e:.1} eps");
            }
            worst = worst.max(e);
        }
        rows += 1;
    }
    assert!(rows >= 20, "too few {kind} rows: {rows}");
    eprintln!("{kind}: worst {worst:.2} eps over {rows} rows");
    worst
}

// ---- mpmath tables (tests/data/gen_simple.py, mp.dps = 60) ----
//
// Bound: 4 eps (component-scaled as described at `table_worst`). Each closed
// form is a handful of products and sums of correctly rounded sines,
// cosines and exponentials whose phases are carried in two doubles, so a
// few rounding errors of the size of the largest term are expected.

#[test]
fn harmonic_matches_mpmath_table() {
    let worst = table_worst("harmonic", |p| {
        Box::new(Harmonic::new(p[0], p[1], p[2]).unwrap())
    });
    assert!(worst <= 4.0, "harmonic: {worst} eps");
}

#[test]
fn damped_matches_mpmath_table_in_all_regimes() {
    // Rows include under-, critically and over-damped cases and
    // gamma = omega0 (1 -+ 1e-6), omega0 (1 + 1e-12): the transition.
    let worst = table_worst("damped", |p| {
        Box::new(Damped::new(p[0], p[1], p[2], p[3]).unwrap())
    });
    assert!(worst <= 4.0, "damped: {worst} eps");
}

#[test]
fn driven_matches_mpmath_table_off_near_and_at_resonance() {
    let worst = table_worst("driven", |p| {
        Box::new(Driven::new(p[0], p[1], p[2], p[3], p[4]).unwrap())
    });
    assert!(worst <= 4.0, "driven: {worst} eps");
}

#[test]
fn linear_matches_mpmath_table() {
    let worst = table_worst("linear", |p| {
        Box::new(Linear::with_initial(p[0], p[1], p[2], p[3]).unwrap())
    });
    assert!(worst <= 4.0, "linear: {worst} eps");
}

#[test]
fn lotka_volterra_period_matches_mpmath() {
    // Reference: time between upward crossings of v = b by mp.odefun at 30
    // digits (gen_simple.py). Bound 4 eps relative: the quadrature converges
    // geometrically and stops far below that; rounding in the sum remains.
    let mut rows = 0;
    for row in read_table("simple_table.txt")
        .iter()
        .filter(|r| r[0] == "lv_period")
    {
        let f: Vec<f64> = row[1..].iter().map(|s| num(s)).collect();
        let lv = LotkaVolterra::new(f[0], f[1], f[2], f[3]).unwrap();
        let e = ulps_rel(lv.period().unwrap(), f[4]);
        assert!(
            e <= 4.0,
            "{f:?}: period {} off by {e} eps",
            lv.period().unwrap()
        );
        assert_eq!(lv.time_unit(), lv.period().unwrap());
        rows += 1;
    }
    assert_eq!(rows, 4);
}

// ---- published values ----

#[test]
fn lotka_volterra_first_integral_published_value() {
    // HLW, Geometric Numerical Integration, I.1.1 (REFERENCES.md):
    // I(2, 2) = 3 ln 2 - 4 = -1.920558458320164.
    let lv = LotkaVolterra::default();
    let y0 = initial_of(&lv);
    assert_eq!(y0, [2.0, 2.0]);
    let mut i = [0.0];
    lv.invariant_values(0.0, &y0, &mut i);
    assert!(ulps_rel(i[0], -1.920558458320164) <= 2.0, "{}", i[0]);
    assert!(ulps_rel(i[0], 3.0 * 2f64.ln() - 4.0) <= 2.0);
    // The linearised period about (1, 2) is 2 pi / sqrt(2) (Jacobian
    // [[0, 1], [-2, 0]] there, from memory of the standard analysis); the
    // orbit through (2, 2) is larger and slower, but only by a few percent.
    let t = lv.period().unwrap();
    let lin = std::f64::consts::TAU / 2f64.sqrt();
    assert!(t > lin && t < 1.1 * lin, "{t}");
}

#[test]
fn lotka_volterra_orbit_closes_keeps_its_integral_and_crosses_once() {
    // Independent of mpmath: RK4 over one computed period returns to the
    // start. RK4 with 20000 steps per period of ~4.6 has an error around
    // 1e-14 here (h^4 = 5e-15 times derivatives of order one); bound 1e-11.
    for (a, b, u0, v0) in [
        (1.0, 2.0, 2.0, 2.0),
        (1.0, 2.0, 4.0, 8.0),
        (0.5, 3.0, 0.1, 3.0),
    ] {
        let lv = LotkaVolterra::new(a, b, u0, v0).unwrap();
        let y0 = initial_of(&lv);
        let mut y = y0.clone();
        let (mut s, mut inv0, mut inv) = ([0.0; 2], [0.0], [0.0]);
        lv.scales(&mut s);
        lv.invariant_values(0.0, &y0, &mut inv0);
        let (mut ups, mut prev, mut drift, mut max) = (0, lv.crossing(&y0), 0.0f64, [0.0f64; 2]);
        rk4(&lv, &mut y, 0.0, lv.period().unwrap(), 20_000, |y| {
            let c = lv.crossing(y);
            if prev < 0.0 && c >= 0.0 {
                ups += 1;
            }
            prev = c;
            lv.invariant_values(0.0, y, &mut inv);
            drift = drift.max((inv[0] - inv0[0]).abs() / lv.invariants()[0].scale);
            max = [max[0].max(y[0]), max[1].max(y[1])];
        });
        for i in 0..2 {
            assert!(
                (y[i] - y0[i]).abs() / s[i] < 1e-11,
                "{a} {b} {u0} {v0}: {y:?}"
            );
            // The scales are the largest populations on the orbit; 20000
            // samples per period find a sharp maximum to about 1e-7 relative
            // (the sample spacing squared times the curvature); bound 1e-6.
            assert!((max[i] - s[i]).abs() / s[i] < 1e-6, "{max:?} vs {s:?}");
        }
        assert_eq!(ups, 1, "upward crossings in one period");
        assert!(drift < 1e-11, "first integral drift {drift}");
    }
}

/// HNW I, II.0: y2'(0) and the period, as published (30 digits).
const ARENSTORF_VY0: &str = "-2.00158510637908252240537862224";
const ARENSTORF_T: &str = "17.0652165601579625588917206249";

#[test]
fn arenstorf_data_are_the_published_ones() {
    // Hairer, Norsett and Wanner I, 2nd ed., section II.0.
    let a = Arenstorf::new();
    assert_eq!(initial_of(&a), [0.994, 0.0, 0.0, num(ARENSTORF_VY0)]);
    assert_eq!(a.period(), Some(num(ARENSTORF_T)));
    assert_eq!(a.time_unit(), num(ARENSTORF_T));
    // mu = 0.012277471 enters the equations: at y = (0.994, 0) at rest the
    // force is y1 - mu'(y1 + mu)/r1^2 - mu (y1 - mu')/r2^2 (signs as in HNW).
    let (mu, mu1) = (0.012277471f64, 1.0 - 0.012277471f64);
    let mut f = [0.0; 4];
    a.rhs(0.0, &[0.994, 0.0, 0.0, 0.0], &mut f);
    let r1 = 0.994 + mu;
    let r2 = 0.994 - mu1;
    let expect = 0.994 - mu1 / (r1 * r1) - mu / (r2 * r2);
    assert!(ulps_rel(f[2], expect) < 8.0, "{} vs {expect}", f[2]);
}

#[test]
fn arenstorf_orbit_closes_and_keeps_the_jacobi_constant() {
    // RK4 (in this file) with 3.2e6 steps over one published period. The RK4
    // error falls by about 16 per doubling from 1e5 steps (velocity error
    // 5e-4) to 8e5 steps (1.2e-7), so at 3.2e6 steps it is below 1e-9; the
    // bound 1e-9 (Earth-Moon units) is then met only if T and y2'(0) are
    // right to about 1e-11: an error dT moves y(T) by dT |f(y0)| with
    // |f(y0)| about 300 in the velocity near the moon.
    let a = Arenstorf::new();
    let y0 = initial_of(&a);
    let mut y = y0.clone();
    let (mut c0, mut c) = ([0.0], [0.0]);
    a.invariant_values(0.0, &y0, &mut c0);
    let (mut ups, mut prev, mut drift) = (0, a.crossing(&y0), 0.0f64);
    rk4(&a, &mut y, 0.0, a.period().unwrap(), 3_200_000, |y| {
        let x = a.crossing(y);
        if prev < 0.0 && x >= 0.0 {
            ups += 1;
        }
        prev = x;
        a.invariant_values(0.0, y, &mut c);
        drift = drift.max((c[0] - c0[0]).abs() / a.invariants()[0].scale);
    });
    let gap = y
        .iter()
        .zip(&y0)
        .map(|(p, q)| (p - q).abs())
        .fold(0.0, f64::max);
    assert!(gap < 1e-9, "orbit does not close: {y:?} vs {y0:?}");
    assert_eq!(ups, 1, "upward crossings in one period");
    // Jacobi constant (Murray and Dermott 3.3) along the numerical orbit:
    // conserved up to the RK4 error.
    assert!(drift < 1e-9, "Jacobi constant drift {drift}");
}

#[test]
fn arenstorf_exact_only_near_whole_periods() {
    // Near k T the exact answer is the start advanced by dt; compare with
    // one RK4 step of size dt from the start (error ~ dt^5 |y^(5)| with
    // dt <= 1.7e-8: below 1e-28 even with |y^(5)| ~ 1e10 near the moon).
    // Bound 1e-15 absolute (Earth-Moon units, values of order 1-2): the
    // roundings of the two final additions.
    let a = Arenstorf::new();
    let t_per = a.period().unwrap();
    let y0 = initial_of(&a);
    let mut y = vec![0.0; 4];
    for k in [0.0, 1.0, 3.0, -2.0] {
        for frac in [
            -1e-9 * (1.0 - 1e-6),
            -3e-10,
            0.0,
            7e-10,
            1e-9 * (1.0 - 1e-6),
        ] {
            let dt = frac * t_per;
            assert!(a.exact(k * t_per + dt, &mut y), "k = {k}, dt = {dt}");
            let mut r = y0.clone();
            if dt != 0.0 {
                rk4(&a, &mut r, 0.0, dt, 1, |_| {});
            }
            for i in 0..4 {
                // exact measures the offset from the 30-digit period, RK4
                // from the double one, and t = k T + dt is rounded: offsets
                // differing by up to ~ eps |k T|, times |f| <~ 300.
                let tol = 1e-15 + 300.0 * f64::EPSILON * (k * t_per).abs();
                assert!(
                    (y[i] - r[i]).abs() < tol,
                    "k = {k}, dt = {dt}: {y:?} vs {r:?}"
                );
            }
        }
        for frac in [2e-9, 0.25, 0.5, -0.1] {
            assert!(!a.exact((k + frac) * t_per, &mut y));
        }
    }
    assert!(!a.exact(f64::NAN, &mut y));
    assert!(!a.accel(0.0, &[0.994, 0.0], &mut [0.0; 2]));
}

// ---- closed forms of Taylor, Classical Mechanics, 5.4-5.5 (REFERENCES.md) ----
//
// These are the textbook formulas evaluated naively in f64, so the bound
// allows their own rounding (1e-14 relative to the amplitude at the
// moderate times used).

#[test]
fn damped_closed_forms_of_taylor() {
    let t_s = [0.0, 0.5, 1.7, 4.0, 9.0];
    let check = |d: &Damped, f: &dyn Fn(f64) -> f64| {
        let mut y = [0.0; 2];
        for &t in &t_s {
            d.exact(t, &mut y);
            assert!((y[0] - f(t)).abs() < 1e-14, "t = {t}: {} vs {}", y[0], f(t));
        }
    };
    // Under-damped (Taylor 5.4; REFERENCES.md):
    // x = exp(-g t) (x0 cos(wd t) + ((v0 + g x0)/wd) sin(wd t)), wd = sqrt(w0^2 - g^2).
    let (w0, g, x0, v0) = (2.0f64, 0.3f64, 0.8f64, -0.4f64);
    let wd = (w0 * w0 - g * g).sqrt();
    let d = Damped::new(w0, g, x0, v0).unwrap();
    assert_eq!(d.regime(), Regime::Under);
    check(&d, &|t: f64| {
        (-g * t).exp() * (x0 * (wd * t).cos() + (v0 + g * x0) / wd * (wd * t).sin())
    });
    // Critical (Taylor 5.4): x = exp(-w0 t) (x0 + (v0 + w0 x0) t).
    let d = Damped::new(w0, w0, x0, v0).unwrap();
    assert_eq!(d.regime(), Regime::Critical);
    check(&d, &|t: f64| (-w0 * t).exp() * (x0 + (v0 + w0 * x0) * t));
    // Over-damped (Taylor 5.4): x = C1 exp(r1 t) + C2 exp(r2 t),
    // r = -g +- sqrt(g^2 - w0^2), C1 + C2 = x0, r1 C1 + r2 C2 = v0.
    let g = 5.0f64;
    let (r1, r2) = (-g + (g * g - w0 * w0).sqrt(), -g - (g * g - w0 * w0).sqrt());
    let (c1, c2) = ((v0 - r2 * x0) / (r1 - r2), (r1 * x0 - v0) / (r1 - r2));
    let d = Damped::new(w0, g, x0, v0).unwrap();
    assert_eq!(d.regime(), Regime::Over);
    check(&d, &|t: f64| c1 * (r1 * t).exp() + c2 * (r2 * t).exp());
}

#[test]
fn driven_closed_forms_of_taylor() {
    let t_s = [0.0, 0.5, 1.7, 4.0, 9.0];
    // Off resonance (Taylor 5.5; REFERENCES.md):
    // x = (x0 - F/(w0^2 - W^2)) cos(w0 t) + (v0/w0) sin(w0 t) + F cos(W t)/(w0^2 - W^2).
    let (w0, w, f, x0, v0) = (1.5f64, 0.6f64, 0.9f64, 0.3f64, -1.1f64);
    let k = f / (w0 * w0 - w * w);
    let d = Driven::new(w0, w, f, x0, v0).unwrap();
    let mut y = [0.0; 2];
    for &t in &t_s {
        d.exact(t, &mut y);
        let x = (x0 - k) * (w0 * t).cos() + v0 / w0 * (w0 * t).sin() + k * (w * t).cos();
        assert!((y[0] - x).abs() < 1e-14, "t = {t}: {} vs {x}", y[0]);
    }
    // At resonance (Taylor 5.5): x = x0 cos + (v0/w0) sin + F t sin(w0 t)/(2 w0).
    let d = Driven::new(w0, w0, f, x0, v0).unwrap();
    for &t in &t_s {
        d.exact(t, &mut y);
        let x =
            x0 * (w0 * t).cos() + v0 / w0 * (w0 * t).sin() + f * t * (w0 * t).sin() / (2.0 * w0);
        assert!((y[0] - x).abs() < 1e-14, "t = {t}: {} vs {x}", y[0]);
    }
}

// ---- consistency of exact, rhs, invariants and initial state ----

/// Problems with an exact solution everywhere, each with its fastest rate
/// (largest frequency or decay rate), which sets the time scale of its
/// derivatives.
fn all_with_exact() -> Vec<(Box<dyn Problem>, f64)> {
    let over = 7.0 + (49.0f64 - 1.0).sqrt();
    vec![
        (Box::new(Harmonic::default()), 1.0),
        (Box::new(Harmonic::new(3.0, -0.5, 2.0).unwrap()), 3.0),
        (Box::new(Damped::default()), 1.0),
        (Box::new(Damped::new(2.0, 2.0, 1.0, -1.0).unwrap()), 2.0),
        (
            Box::new(Damped::new(1.0, 1.0 + 1e-6, 0.3, 1.0).unwrap()),
            1.0,
        ),
        (
            Box::new(Damped::new(1.0, 1.0 - 1e-6, 0.3, 1.0).unwrap()),
            1.0,
        ),
        (Box::new(Damped::new(1.0, 7.0, 1.0, 0.0).unwrap()), over),
        (Box::new(Driven::default()), 2.0),
        (Box::new(Driven::new(1.0, 1.0, 1.0, 0.0, 0.0).unwrap()), 1.0),
        (
            Box::new(Driven::new(1.0, 1.0 + 1e-7, 1.0, 0.5, 0.0).unwrap()),
            1.0,
        ),
        (Box::new(Linear::default()), 1.0f64.hypot(0.1)),
        (
            Box::new(Linear::with_initial(0.0, -2.0, 0.6, 0.8).unwrap()),
            2.0,
        ),
        (Box::new(Linear::new(-3.0, 0.0).unwrap()), 3.0),
    ]
}

#[test]
fn exact_satisfies_the_ode() {
    // Eighth-order central difference of exact (tests/common) against rhs,
    // spacing 0.04 / rate. In units of the rate: truncation about
    // 0.04^8 / 630 ~ 1e-14 (the leading error coefficient of the 8th-order
    // formula), rounding about 4 eps * 2.1 / 0.04 ~ 1e-13 (a few ulp of
    // error in exact times the sum of the weights). Bound 1e-12.
    for (p, rate) in all_with_exact() {
        let u = p.time_unit();
        let times: Vec<f64> = [0.0, 0.13, 0.5, 1.0, 2.7, 4.0]
            .iter()
            .map(|k| k * u)
            .collect();
        let m = exact_rhs_mismatch(p.as_ref(), &times, 0.04 / rate) / rate;
        assert!(m < 1e-12, "{}: mismatch {m}", p.name());
    }
}

#[test]
fn initial_state_is_exact_at_t0() {
    let mut all: Vec<Box<dyn Problem>> = all_with_exact().into_iter().map(|c| c.0).collect();
    all.push(Box::new(Arenstorf::new()));
    for p in all {
        let y0 = initial_of(p.as_ref());
        let mut y = vec![0.0; p.dim()];
        assert!(p.exact(p.t0(), &mut y));
        assert_eq!(y, y0, "{}", p.name());
    }
}

#[test]
fn invariants_hold_on_the_exact_solution() {
    // Energy and |y|^2 along the exact solution: a few rounding errors of
    // the squares; bound 8 eps relative to the initial value.
    let cases: Vec<Box<dyn Problem>> = vec![
        Box::new(Harmonic::default()),
        Box::new(Harmonic::new(3.0, -0.5, 2.0).unwrap()),
        Box::new(Linear::with_initial(0.0, -2.0, 0.6, 0.8).unwrap()),
        Box::new(Linear::new(0.0, 5.0).unwrap()),
    ];
    for p in cases {
        assert_eq!(p.invariants().len(), 1, "{}", p.name());
        let u = p.time_unit();
        let times: Vec<f64> = (0..200).map(|k| 0.731 * k as f64 * u).collect();
        let change = invariant_change_on_exact(p.as_ref(), &times);
        assert!(change <= 8.0 * f64::EPSILON, "{}: {change}", p.name());
    }
    // Off the imaginary axis |y| is not conserved, so no invariant is offered.
    assert!(Linear::default().invariants().is_empty());
    assert_eq!(
        Linear::new(0.0, 2.0).unwrap().period(),
        Some(std::f64::consts::PI)
    );
    assert_eq!(Linear::default().period(), None);
}

#[test]
fn harmonic_virial_period_and_split_form() {
    // Virial theorem for V = omega^2 x^2 / 2 (degree 2): <v^2> = <omega^2 x^2>
    // over a period (Landau and Lifshitz, Mechanics, section 10). The
    // trapezoidal rule with 64 points is exact for these trigonometric
    // polynomials of degree 2 up to rounding.
    let h = Harmonic::new(2.0, 0.7, -1.2).unwrap();
    let t_per = h.period().unwrap();
    assert_eq!(t_per, std::f64::consts::PI);
    let mut y = [0.0; 2];
    let (mut two_t, mut p_v) = (0.0, 0.0);
    for k in 0..64 {
        h.exact(t_per * k as f64 / 64.0, &mut y);
        let (a, b) = h.virial_terms(&y).unwrap();
        two_t += a / 64.0;
        p_v += b / 64.0;
    }
    assert!((two_t - p_v).abs() < 1e-14 * two_t, "{two_t} {p_v}");
    let mut a = [0.0];
    assert!(h.accel(0.0, &[0.5], &mut a));
    assert_eq!(a[0], -2.0);
    // The driven problem's split form carries the time-dependent force.
    let d = Driven::new(1.0, 2.0, 3.0, 0.0, 0.0).unwrap();
    let mut f = [0.0; 2];
    d.rhs(0.4, &[0.5, 9.0], &mut f);
    assert!(d.accel(0.4, &[0.5], &mut a));
    assert_eq!(a[0], f[1]);
    assert_eq!(a[0], 3.0 * 0.8f64.cos() - 0.5);
    assert!(!Damped::default().accel(0.0, &[0.5], &mut a));
    assert!(!Linear::default().accel(0.0, &[0.5], &mut a));
    assert!(!LotkaVolterra::default().accel(0.0, &[0.5], &mut a));
}

// ---- parameter validation ----

fn expect_param(r: Result<impl Problem, ParamError>, parameter: &str) {
    match r {
        Ok(p) => panic!("{}: accepted an invalid {parameter}", p.name()),
        Err(e) => {
            assert_eq!(e.parameter, parameter, "{e}");
            let msg = e.to_string();
            assert!(msg.contains(parameter) && msg.contains(e.allowed), "{msg}");
        }
    }
}

#[test]
fn invalid_parameters_are_rejected_by_name() {
    let (nan, inf) = (f64::NAN, f64::INFINITY);
    for bad in [nan, inf, -inf] {
        expect_param(Harmonic::new(bad, 1.0, 0.0), "omega");
        expect_param(Harmonic::new(1.0, bad, 0.0), "x0");
        expect_param(Harmonic::new(1.0, 1.0, bad), "v0");
        expect_param(Damped::new(bad, 0.1, 1.0, 0.0), "omega0");
        expect_param(Damped::new(1.0, bad, 1.0, 0.0), "gamma");
        expect_param(Damped::new(1.0, 0.1, bad, 0.0), "x0");
        expect_param(Damped::new(1.0, 0.1, 1.0, bad), "v0");
        expect_param(Driven::new(bad, 2.0, 1.0, 1.0, 0.0), "omega0");
        expect_param(Driven::new(1.0, bad, 1.0, 1.0, 0.0), "omega_drive");
        expect_param(Driven::new(1.0, 2.0, bad, 1.0, 0.0), "force");
        expect_param(Driven::new(1.0, 2.0, 1.0, bad, 0.0), "x0");
        expect_param(Driven::new(1.0, 2.0, 1.0, 1.0, bad), "v0");
        expect_param(Linear::new(bad, 1.0), "re");
        expect_param(Linear::new(-0.1, bad), "im");
        expect_param(Linear::with_initial(-0.1, 1.0, bad, 0.0), "y0_re");
        expect_param(Linear::with_initial(-0.1, 1.0, 1.0, bad), "y0_im");
        expect_param(LotkaVolterra::new(bad, 2.0, 2.0, 2.0), "a");
        expect_param(LotkaVolterra::new(1.0, bad, 2.0, 2.0), "b");
        expect_param(LotkaVolterra::new(1.0, 2.0, bad, 2.0), "u0");
        expect_param(LotkaVolterra::new(1.0, 2.0, 2.0, bad), "v0");
    }
    // Out of range.
    expect_param(Harmonic::new(0.0, 1.0, 0.0), "omega");
    expect_param(Harmonic::new(1.0, 0.0, 0.0), "v0");
    expect_param(Damped::new(-1.0, 0.1, 1.0, 0.0), "omega0");
    expect_param(Damped::new(1.0, -0.1, 1.0, 0.0), "gamma");
    expect_param(Damped::new(1.0, 0.1, 0.0, 0.0), "v0");
    expect_param(Driven::new(0.0, 2.0, 1.0, 1.0, 0.0), "omega0");
    expect_param(Driven::new(1.0, -2.0, 1.0, 1.0, 0.0), "omega_drive");
    expect_param(Driven::new(1.0, 2.0, 0.0, 0.0, 0.0), "force");
    expect_param(Linear::new(0.0, 0.0), "im");
    expect_param(Linear::with_initial(-0.1, 1.0, 0.0, 0.0), "y0_im");
    expect_param(LotkaVolterra::new(0.0, 2.0, 2.0, 2.0), "a");
    expect_param(LotkaVolterra::new(1.0, -2.0, 2.0, 2.0), "b");
    expect_param(LotkaVolterra::new(1.0, 2.0, -1.0, 2.0), "u0");
    expect_param(LotkaVolterra::new(1.0, 2.0, 2.0, 0.0), "v0");
    expect_param(LotkaVolterra::new(1.0, 2.0, 1.0, 2.0), "v0");
    // An orbit too large for the period quadrature names the population
    // responsible.
    expect_param(LotkaVolterra::new(1.0, 2.0, 2.0, 1e15), "v0");
    expect_param(LotkaVolterra::new(1.0, 2.0, 1e15, 2.0), "u0");
    // Edges that are allowed.
    assert!(Damped::new(1.0, 0.0, 1.0, 0.0).is_ok());
    assert!(Driven::new(1.0, 0.0, 1.0, 0.0, 0.0).is_ok());
    assert!(Driven::new(1.0, 2.0, 1.0, 0.0, 0.0).is_ok());
    assert!(Linear::new(0.0, -1.0).is_ok());
    assert!(Linear::new(2.0, 0.0).is_ok());
}
