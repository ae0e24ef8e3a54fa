//! Helpers shared by the integration tests: checks that a problem's exact
//! solution and invariants are consistent with its own right-hand side.
#![allow(dead_code)] // each test binary uses a different subset
pub mod adaptive;
pub mod dop853;
pub mod fixture;
pub mod rewrites;
pub mod steppers;

use drift::Problem;

/// Largest component-scaled mismatch between the time derivative of
/// `problem.exact` (eighth-order central difference with spacing `delta`,
/// Fornberg's weights) and `problem.rhs` along the exact solution, at each of
/// `times`. Panics when the exact solution is unknown at one of them.
pub fn exact_rhs_mismatch(problem: &dyn Problem, times: &[f64], delta: f64) -> f64 {
    // Central difference weights for the first derivative, 8th order
    // (Fornberg, Math. Comp. 51 (1988) 699, Table 1).
    const W: [f64; 4] = [4.0 / 5.0, -1.0 / 5.0, 4.0 / 105.0, -1.0 / 280.0];
    let n = problem.dim();
    let (mut y, mut yp, mut ym, mut f, mut s) = (
        vec![0.0; n],
        vec![0.0; n],
        vec![0.0; n],
        vec![0.0; n],
        vec![0.0; n],
    );
    let mut deriv = vec![0.0; n];
    problem.scales(&mut s);
    let mut worst = 0.0f64;
    for &t in times {
        deriv.fill(0.0);
        for (j, w) in W.iter().enumerate() {
            let d = (j + 1) as f64 * delta;
            assert!(problem.exact(t + d, &mut yp), "exact unknown at {}", t + d);
            assert!(problem.exact(t - d, &mut ym), "exact unknown at {}", t - d);
            for i in 0..n {
                deriv[i] += w * (yp[i] - ym[i]) / delta;
            }
        }
        assert!(problem.exact(t, &mut y), "exact unknown at {t}");
        problem.rhs(t, &y, &mut f);
        for i in 0..n {
            worst = worst.max((deriv[i] - f[i]).abs() / s[i]);
        }
    }
    worst
}

/// Largest relative change of each invariant along the exact solution at
/// `times`, against its value at the initial state.
pub fn invariant_change_on_exact(problem: &dyn Problem, times: &[f64]) -> f64 {
    let n = problem.dim();
    let inv = problem.invariants();
    let (mut y0, mut y) = (vec![0.0; n], vec![0.0; n]);
    let (mut i0, mut i1) = (vec![0.0; inv.len()], vec![0.0; inv.len()]);
    problem.initial(&mut y0);
    problem.invariant_values(problem.t0(), &y0, &mut i0);
    let mut worst = 0.0f64;
    for &t in times {
        assert!(problem.exact(t, &mut y), "exact unknown at {t}");
        problem.invariant_values(t, &y, &mut i1);
        for k in 0..inv.len() {
            worst = worst.max((i1[k] - i0[k]).abs() / inv[k].scale);
        }
    }
    worst
}

/// Reads a whitespace-separated table from `tests/data/NAME`, skipping blank
/// lines and lines starting with `#`; each row is returned as its fields.
pub fn read_table(name: &str) -> Vec<Vec<String>> {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data")
        .join(name);
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    text.lines()
        .map(str::trim)
        .filter(|l| !l.is_empty() && !l.starts_with('#'))
        .map(|l| l.split_whitespace().map(String::from).collect())
        .collect()
}

/// Relative difference |a - b| / max(|b|, tiny), in units of f64 epsilon.
pub fn ulps_rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(f64::MIN_POSITIVE) / f64::EPSILON
}

/// Parses a table field as f64, naming it on failure.
pub fn num(s: &str) -> f64 {
    s.parse()
        .unwrap_or_else(|e| panic!("bad number {s:?}: {e}"))
}

/// Rows of `tests/data/FILE` whose first field is `tag`, as numbers with the
/// tag dropped; panics when there are none.
pub fn tagged_table(file: &str, tag: &str) -> Vec<Vec<f64>> {
    let rows: Vec<Vec<f64>> = read_table(file)
        .into_iter()
        .filter(|r| r[0] == tag)
        .map(|r| r[1..].iter().map(|s| num(s)).collect())
        .collect();
    assert!(!rows.is_empty(), "no rows tagged {tag} in {file}");
    rows
}
