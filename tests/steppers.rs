//! Tests of the test steppers in tests/common/steppers.rs: their tableaux
//! against the Runge-Kutta order conditions, a few exact one-step identities,
//! measured convergence orders (including the planted bugs, which must show
//! the order or floor their comments claim) and the adaptive Dormand-Prince
//! integrator's contract (tolerance, landing on t1, counts, failures).

mod common;

use std::cell::Cell;

use common::dop853::*;
use common::rewrites::*;
use common::steppers::*;
use drift::{Accel, Control, IntegrateError, Integrator, Problem, Rhs, SplitStepper, Stepper};

// ---------------------------------------------------------------------------
// Order conditions (Hairer, Norsett and Wanner I, section II.2, Table 2.2).

fn mat<const S: usize>(a: &[[f64; S]; S], v: &[f64; S]) -> [f64; S] {
    std::array::from_fn(|i| (0..S).map(|j| a[i][j] * v[j]).sum())
}

fn had<const S: usize>(u: &[f64; S], v: &[f64; S]) -> [f64; S] {
    std::array::from_fn(|i| u[i] * v[i])
}

fn dot<const S: usize>(u: &[f64; S], v: &[f64; S]) -> f64 {
    (0..S).map(|i| u[i] * v[i]).sum()
}

/// The order conditions of orders 1 to 5 for weights `b` and stage matrix
/// `a`, with `c = A 1` (the row sums) as the conditions assume
/// (Hairer, Norsett and Wanner I, II.2, Table 2.2, and (2.21) for order 5):
/// `(order, name, sum, required value)`.
fn conditions<const S: usize>(
    a: &[[f64; S]; S],
    b: &[f64; S],
) -> Vec<(u32, &'static str, f64, f64)> {
    let one = [1.0; S];
    let c = mat(a, &one);
    let c2 = had(&c, &c);
    let c3 = had(&c2, &c);
    let ac = mat(a, &c);
    let ac2 = mat(a, &c2);
    let aac = mat(a, &ac);
    vec![
        (1, "sum b = 1", dot(b, &one), 1.0),
        (2, "sum b c = 1/2", dot(b, &c), 1.0 / 2.0),
        (3, "sum b c^2 = 1/3", dot(b, &c2), 1.0 / 3.0),
        (3, "sum b a c = 1/6", dot(b, &ac), 1.0 / 6.0),
        (4, "sum b c^3 = 1/4", dot(b, &c3), 1.0 / 4.0),
        (4, "sum b c a c = 1/8", dot(b, &had(&c, &ac)), 1.0 / 8.0),
        (4, "sum b a c^2 = 1/12", dot(b, &ac2), 1.0 / 12.0),
        (4, "sum b a a c = 1/24", dot(b, &aac), 1.0 / 24.0),
        (5, "sum b c^4 = 1/5", dot(b, &had(&c3, &c)), 1.0 / 5.0),
        (
            5,
            "sum b c^2 a c = 1/10",
            dot(b, &had(&c2, &ac)),
            1.0 / 10.0,
        ),
        (
            5,
            "sum b c a c^2 = 1/15",
            dot(b, &had(&c, &ac2)),
            1.0 / 15.0,
        ),
        (
            5,
            "sum b c a a c = 1/30",
            dot(b, &had(&c, &aac)),
            1.0 / 30.0,
        ),
        (
            5,
            "sum b (a c)^2 = 1/20",
            dot(b, &had(&ac, &ac)),
            1.0 / 20.0,
        ),
        (5, "sum b a c^3 = 1/20", dot(b, &mat(a, &c3)), 1.0 / 20.0),
        (
            5,
            "sum b a (c a c) = 1/40",
            dot(b, &mat(a, &had(&c, &ac))),
            1.0 / 40.0,
        ),
        (5, "sum b a a c^2 = 1/60", dot(b, &mat(a, &ac2)), 1.0 / 60.0),
        (
            5,
            "sum b a a a c = 1/120",
            dot(b, &mat(a, &aac)),
            1.0 / 120.0,
        ),
    ]
}

/// Tolerance for a condition evaluated in f64 from rounded coefficients
/// (Dormand-Prince entries reach about 11 in magnitude): common practice,
/// no source.
const COND_TOL: f64 = 1e-13;

/// Names of the conditions up to `order` that `(a, b)` violates.
fn failed_conditions<const S: usize>(a: &[[f64; S]; S], b: &[f64; S], order: u32) -> Vec<String> {
    conditions(a, b)
        .into_iter()
        .filter(|&(p, _, lhs, rhs)| p <= order && (lhs - rhs).abs() > COND_TOL)
        .map(|(_, name, lhs, _)| format!("{name} (got {lhs})"))
        .collect()
}

/// Rows `i` (1-based) whose node `c_i` differs from the row sum `sum_j a_ij`
/// (Hairer, Norsett and Wanner I, II.1, (1.9)).
fn bad_row_sums<const S: usize>(t: &Tableau<S>) -> Vec<usize> {
    (0..S)
        .filter(|&i| (t.a[i].iter().sum::<f64>() - t.c[i]).abs() > COND_TOL)
        .map(|i| i + 1)
        .collect()
}

/// Strictly lower triangular `a` (explicit method).
fn is_explicit<const S: usize>(t: &Tableau<S>) -> bool {
    (0..S).all(|i| (i..S).all(|j| t.a[i][j] == 0.0))
}

fn check_tableau<const S: usize, M: Coefficients<S>>(name: &str) {
    let t = M::TABLEAU;
    assert!(is_explicit(&t), "{name}: not explicit");
    assert_eq!(
        bad_row_sums(&t),
        Vec::<usize>::new(),
        "{name}: c_i != sum_j a_ij"
    );
    let failed = failed_conditions(&t.a, &t.b, t.claimed_order);
    assert!(
        failed.is_empty(),
        "{name}: order {} conditions fail: {failed:?}",
        t.claimed_order
    );
}

#[test]
fn correct_tableaux_satisfy_their_order_conditions() {
    // Orders: Euler 1, Heun and midpoint 2, classical RK4 4 (Hairer, Norsett
    // and Wanner I, II.1); Dormand-Prince 5 (Dormand and Prince 1980; HNW I,
    // II.5, Table 5.2).
    check_tableau::<1, EulerTableau>("Euler");
    check_tableau::<2, HeunTableau>("Heun");
    check_tableau::<2, MidpointTableau>("midpoint");
    check_tableau::<4, Rk4Tableau>("RK4");
    check_tableau::<7, DormandPrinceTableau>("Dormand-Prince 5th-order weights");
    // The claimed orders are the published ones, not more: each method fails
    // some condition of the next order (otherwise the order test above would
    // not bound anything).
    assert!(!failed_conditions(&EulerTableau::TABLEAU.a, &EulerTableau::TABLEAU.b, 2).is_empty());
    assert!(!failed_conditions(&HeunTableau::TABLEAU.a, &HeunTableau::TABLEAU.b, 3).is_empty());
    assert!(!failed_conditions(&Rk4Tableau::TABLEAU.a, &Rk4Tableau::TABLEAU.b, 5).is_empty());
}

#[test]
fn dormand_prince_embedded_weights_are_fourth_order_exactly() {
    // HNW I, II.5, Table 5.2: the b^ row is an order-4 method on the same
    // stages, and not order 5 (else the error estimate b - b^ would vanish).
    let t = DormandPrinceTableau::TABLEAU;
    let failed4 = failed_conditions(&t.a, &DORMAND_PRINCE_B_HAT, 4);
    assert!(
        failed4.is_empty(),
        "embedded weights fail order 4: {failed4:?}"
    );
    assert!(!failed_conditions(&t.a, &DORMAND_PRINCE_B_HAT, 5).is_empty());
    // First same as last: the last stage row equals b, with c_7 = 1
    // (Dormand and Prince 1980).
    assert_eq!(t.a[6], t.b);
    assert_eq!(t.c[6], 1.0);
}

// ---------------------------------------------------------------------------
// Order conditions from rooted trees (Butcher; Hairer, Norsett and Wanner I,
// II.2, Theorem 2.13): a method has order p when sum_i b_i Phi_i(t) =
// 1/gamma(t) for every rooted tree t with at most p vertices.

/// A rooted tree as the sorted list of its root's subtrees (canonical, so
/// equal trees compare equal).
#[derive(Clone, PartialEq, Eq, PartialOrd, Ord, Debug)]
struct Tree(Vec<Tree>);

impl Tree {
    fn order(&self) -> usize {
        1 + self.0.iter().map(Tree::order).sum::<usize>()
    }

    /// gamma(t) = |t| prod gamma(t_k) (HNW I, II.2, Definition 2.10).
    fn density(&self) -> f64 {
        self.order() as f64 * self.0.iter().map(Tree::density).product::<f64>()
    }

    /// Every tree made by attaching one new leaf to a vertex of this one.
    fn grown(&self) -> Vec<Tree> {
        let mut out = Vec::new();
        let mut with_leaf = self.0.clone();
        with_leaf.push(Tree(Vec::new()));
        with_leaf.sort();
        out.push(Tree(with_leaf));
        for (k, child) in self.0.iter().enumerate() {
            for g in child.grown() {
                let mut children = self.0.clone();
                children[k] = g;
                children.sort();
                out.push(Tree(children));
            }
        }
        out
    }

    /// The elementary weights Phi_i(t) = prod_k (A Phi(t_k))_i, with
    /// Phi(leaf) = 1 (HNW I, II.2, Definition 2.9).
    fn weights<const S: usize>(&self, a: &[[f64; S]; S]) -> [f64; S] {
        let mut phi = [1.0; S];
        for child in &self.0 {
            let p = child.weights(a);
            for (i, x) in phi.iter_mut().enumerate() {
                *x *= (0..S).map(|j| a[i][j] * p[j]).sum::<f64>();
            }
        }
        phi
    }
}

/// All rooted trees with 1 to `max` vertices, by order.
fn trees_by_order(max: usize) -> Vec<Vec<Tree>> {
    let mut levels = vec![vec![Tree(Vec::new())]];
    while levels.len() < max {
        let mut next: Vec<Tree> = levels
            .last()
            .unwrap()
            .iter()
            .flat_map(Tree::grown)
            .collect();
        next.sort();
        next.dedup();
        levels.push(next);
    }
    levels
}

/// Residual `sum b Phi(t) - 1/gamma(t)` of each tree.
fn tree_residuals<const S: usize>(a: &[[f64; S]; S], b: &[f64; S], trees: &[Tree]) -> Vec<f64> {
    trees
        .iter()
        .map(|t| {
            let phi = t.weights(a);
            (0..S).map(|i| b[i] * phi[i]).sum::<f64>() - 1.0 / t.density()
        })
        .collect()
}

/// Number of trees up to order `p` whose condition fails by more than
/// [`COND_TOL`].
fn failed_trees<const S: usize>(
    a: &[[f64; S]; S],
    b: &[f64; S],
    levels: &[Vec<Tree>],
    p: usize,
) -> usize {
    levels[..p]
        .iter()
        .flat_map(|l| tree_residuals(a, b, l))
        .filter(|r| r.abs() > COND_TOL)
        .count()
}

#[test]
fn rooted_trees_are_counted_as_published() {
    // Number of rooted trees with n vertices (Cayley; OEIS A000081, from
    // memory): 1, 1, 2, 4, 9, 20, 48, 115, 286.
    let levels = trees_by_order(9);
    let counts: Vec<usize> = levels.iter().map(Vec::len).collect();
    assert_eq!(counts, [1, 1, 2, 4, 9, 20, 48, 115, 286]);
    // 200 conditions for order 8 (HNW I, II.2, Table 2.3, number of
    // conditions up to each order: 1, 2, 4, 8, 17, 37, 85, 200; from memory).
    assert_eq!(counts[..8].iter().sum::<usize>(), 200);
    // The generator agrees with the hand-written conditions of Table 2.2:
    // classical RK4 passes every tree to order 4 and fails one of order 5;
    // Dormand-Prince 5(4) passes every tree to order 5.
    let rk4 = Rk4Tableau::TABLEAU;
    assert_eq!(failed_trees(&rk4.a, &rk4.b, &levels, 4), 0);
    assert!(failed_trees(&rk4.a, &rk4.b, &levels, 5) > 0);
    let dp = DormandPrinceTableau::TABLEAU;
    assert_eq!(failed_trees(&dp.a, &dp.b, &levels, 5), 0);
    assert!(failed_trees(&dp.a, &DORMAND_PRINCE_B_HAT, &levels, 5) > 0);
}

#[test]
fn dop853_coefficients_satisfy_the_order_conditions() {
    // HNW I, II.10 (DOP853): 8th-order weights b, 5th-order embedded
    // weights b - e5 and 3rd-order weights bhh on 12 explicit stages with
    // c_i = sum_j a_ij.
    let t = Dop853Tableau::TABLEAU;
    assert!(is_explicit(&t));
    assert_eq!(bad_row_sums(&t), Vec::<usize>::new(), "c_i != sum_j a_ij");
    let levels = trees_by_order(9);
    assert_eq!(failed_trees(&t.a, &t.b, &levels, 8), 0, "order 8");
    // Not order 9: some order-9 condition fails far beyond rounding (the
    // check above would otherwise bound nothing).
    let worst9 = tree_residuals(&t.a, &t.b, &levels[8])
        .into_iter()
        .fold(0.0, |m: f64, r| m.max(r.abs()));
    assert!(worst9 > 1e3 * COND_TOL, "order 9 holds to {worst9:e}");
    // And the check notices a coefficient wrong in its 10th digit.
    let mut wrong = t.a;
    wrong[11][10] *= 1.0 + 1e-9;
    assert!(failed_trees(&wrong, &t.b, &levels, 8) > 0);
    assert_eq!(failed_trees(&t.a, &DOP853_B5, &levels, 5), 0, "b5 order 5");
    assert!(
        failed_trees(&t.a, &DOP853_B5, &levels, 6) > 0,
        "b5 is order 6"
    );
    assert_eq!(failed_trees(&t.a, &DOP853_B3, &levels, 3), 0, "bhh order 3");
    assert!(
        failed_trees(&t.a, &DOP853_B3, &levels, 4) > 0,
        "bhh is order 4"
    );
    // bhh uses stages 1, 9 and 12 only (the DOP853 code).
    let used: Vec<usize> = (0..12).filter(|&i| DOP853_B3[i] != 0.0).collect();
    assert_eq!(used, [0, 8, 11]);
}

#[test]
fn planted_wrong_coefficient_fails_an_identified_condition() {
    // a32 = 0.49 instead of 0.5 (HNW I, II.1, Table 1.2 has 1/2): row 3
    // no longer sums to c3 = 1/2, and with c = A 1 the second-order
    // condition sum b c = 1/2 fails by b3 * 0.01 = 1/300.
    let t = Rk4WrongCoefTableau::TABLEAU;
    assert_eq!(bad_row_sums(&t), vec![3]);
    let failed = failed_conditions(&t.a, &t.b, 4);
    assert!(failed[0].starts_with("sum b c = 1/2"), "{failed:?}");
    let sum_bc = dot(&t.b, &mat(&t.a, &[1.0; 4]));
    assert!((sum_bc - (0.5 - 1.0 / 300.0)).abs() < 1e-15, "{sum_bc}");
    assert!(failed_conditions(&t.a, &t.b, 1).is_empty());
}

#[test]
fn planted_wrong_time_has_correct_a_and_b_but_a_wrong_node() {
    // The stage matrix and weights are RK4's, so the conditions (which take
    // c = A 1) all hold; only the stored node c3 disagrees with its row sum.
    let t = Rk4WrongTimeTableau::TABLEAU;
    assert!(failed_conditions(&t.a, &t.b, 4).is_empty());
    assert_eq!(bad_row_sums(&t), vec![3]);
    // With the stored nodes, the quadrature condition sum b c = 1/2 fails:
    // 1/3 * 0.5 + 1/3 * 0 + 1/6 * 1 = 1/3.
    assert!((dot(&t.b, &t.c) - 1.0 / 3.0).abs() < 1e-15);
}

// ---------------------------------------------------------------------------
// Test problems, each with its exact solution.

/// y' = y, y = exp(t).
struct Growth;
impl Rhs for Growth {
    fn dim(&self) -> usize {
        1
    }
    fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) {
        dydt[0] = y[0];
    }
}

/// y' = cos(t) y, y(0) = 1, y = exp(sin t) (separation of variables;
/// non-autonomous, so it sees the stage times).
struct CosGrowth;
impl Rhs for CosGrowth {
    fn dim(&self) -> usize {
        1
    }
    fn rhs(&self, t: f64, y: &[f64], dydt: &mut [f64]) {
        dydt[0] = t.cos() * y[0];
    }
}

/// Harmonic oscillator q'' = -q in two dimensions.
struct Spring;
impl Accel for Spring {
    fn dim(&self) -> usize {
        2
    }
    fn accel(&self, _t: f64, q: &[f64], a: &mut [f64]) {
        a[0] = -q[0];
        a[1] = -q[1];
    }
}

/// Driven oscillator x'' + x = cos(2 t), x(0) = 1, x'(0) = 0 (Taylor,
/// Classical Mechanics, 5.5, with w0 = 1, W = 2, F = 1, so F/(w0^2 - W^2)
/// = -1/3): x = (4/3) cos t - cos(2 t)/3, v = -(4/3) sin t + (2/3) sin(2 t).
struct Driven;
impl Accel for Driven {
    fn dim(&self) -> usize {
        1
    }
    fn accel(&self, t: f64, q: &[f64], a: &mut [f64]) {
        a[0] = -q[0] + (2.0 * t).cos();
    }
}

fn driven_exact(t: f64) -> (f64, f64) {
    (
        4.0 / 3.0 * t.cos() - (2.0 * t).cos() / 3.0,
        -4.0 / 3.0 * t.sin() + 2.0 / 3.0 * (2.0 * t).sin(),
    )
}

/// Error of `n` fixed steps of `stepper` for a scalar problem from
/// `(0, 1)` to `t1`, against `exact`. Times t_i = i h (integer counting).
fn scalar_error<S: Stepper + Default>(f: &impl Rhs, t1: f64, exact: f64, n: u64) -> f64 {
    let mut s = S::default();
    let mut y = [1.0];
    let h = t1 / n as f64;
    for i in 0..n {
        s.step(f, i as f64 * h, &mut y, h);
    }
    (y[0] - exact).abs()
}

/// Error ratio err(n) / err(2 n): about 2^p for a method of order p.
fn ratio<S: Stepper + Default>(f: &impl Rhs, t1: f64, exact: f64, n: u64) -> f64 {
    scalar_error::<S>(f, t1, exact, n) / scalar_error::<S>(f, t1, exact, 2 * n)
}

/// Error of `n` fixed split steps on the driven oscillator over [0, t1].
fn driven_error<S: SplitStepper + Default>(t1: f64, n: u64) -> f64 {
    let mut s = S::default();
    let (mut q, mut v) = ([1.0], [0.0]);
    let h = t1 / n as f64;
    for i in 0..n {
        s.step(&Driven, i as f64 * h, &mut q, &mut v, h);
    }
    let (qe, ve) = driven_exact(t1);
    (q[0] - qe).abs().max((v[0] - ve).abs())
}

/// `ratio` lies within a factor 1.25 of 2^p: the band is common practice,
/// no source (asymptotic ratios at these step counts are within a few
/// percent of 2^p; the band leaves room for the next error term).
fn assert_order(what: &str, ratio: f64, p: i32) {
    let ideal = 2f64.powi(p);
    assert!(
        ratio > ideal / 1.25 && ratio < ideal * 1.25,
        "{what}: error ratio {ratio} when the steps double, expected about {ideal} (order {p})"
    );
}

// ---------------------------------------------------------------------------
// Direct checks.

#[test]
fn rk4_step_of_growth_is_the_taylor_polynomial() {
    // RK4's stability function is R(z) = 1 + z + z^2/2 + z^3/6 + z^4/24
    // (HNW II, section IV.2): one step of y' = y from
    // y = 1 gives exactly R(h) in exact arithmetic; in f64 a few ulp.
    let h: f64 = 0.1;
    let taylor = 1.0 + h + h * h / 2.0 + h.powi(3) / 6.0 + h.powi(4) / 24.0;
    let mut y = [1.0];
    Rk4::default().step(&Growth, 0.0, &mut y, h);
    assert!(
        common::ulps_rel(y[0], taylor) <= 4.0,
        "{} vs {taylor}",
        y[0]
    );
    // And it is not e^h: the next Taylor term h^5/120 = 8.3e-8 is missing.
    assert!((y[0] - h.exp() + h.powi(5) / 120.0).abs() < 2e-9);
}

#[test]
fn split_steppers_are_reversible_to_roundoff() {
    // Stormer-Verlet and its symmetric compositions are symmetric methods:
    // the step with -h inverts the step with h (Hairer, Lubich and Wanner,
    // Geometric Numerical Integration, V.1 and II.4). In f64 the state comes
    // back to a few ulp (a bound of 8 ulp: common practice, no source).
    fn back_and_forth<S: SplitStepper + Default>(name: &str, steps: usize) {
        let (q0, v0) = ([1.0, 0.3], [0.0, -0.5]);
        let (mut q, mut v) = (q0, v0);
        let mut s = S::default();
        let h = 0.1;
        for i in 0..steps {
            s.step(&Spring, i as f64 * h, &mut q, &mut v, h);
        }
        for i in (1..=steps).rev() {
            s.step(&Spring, i as f64 * h, &mut q, &mut v, -h);
        }
        for (a, b) in q.iter().chain(&v).zip(q0.iter().chain(&v0)) {
            let ulps = (a - b).abs() / f64::EPSILON;
            assert!(
                ulps <= 8.0 * steps as f64,
                "{name}: {a} vs {b} ({ulps} ulp of 1)"
            );
        }
    }
    back_and_forth::<Leapfrog>("leapfrog", 1);
    back_and_forth::<Leapfrog>("leapfrog", 10);
    back_and_forth::<TripleJump>("triple jump", 1);
}

#[test]
fn split_steppers_move_the_state() {
    // One step of h = 0.1 on the oscillator from q = 1, v = 0 moves q to
    // about cos(0.1) (so the reversibility test above compares a real round
    // trip): leapfrog gives 1 - h^2/2 exactly in exact arithmetic.
    let (mut q, mut v) = ([1.0, 0.0], [0.0, 0.0]);
    Leapfrog::default().step(&Spring, 0.0, &mut q, &mut v, 0.1);
    assert!((q[0] - (1.0 - 0.005)).abs() < 1e-15);
    assert!((v[0] - -(0.1 - 0.1f64.powi(3) / 4.0)).abs() < 1e-15);
}

#[test]
fn triple_jump_weights_satisfy_yoshidas_conditions() {
    // Yoshida, Phys. Lett. A 150 (1990) 262: 2 w1 + w0 = 1 (consistency)
    // and 2 w1^3 + w0^3 = 0 (third-order error term cancels).
    let (w0, w1) = TripleJump::weights();
    assert!((2.0 * w1 + w0 - 1.0).abs() < 4.0 * f64::EPSILON);
    assert!((2.0 * w1.powi(3) + w0.powi(3)).abs() < 32.0 * f64::EPSILON);
    // Published decimal values (Yoshida 1990, from memory):
    // w1 = 1.3512071919596578, w0 = -1.7024143839193153.
    assert!((w1 - 1.351_207_191_959_657_8).abs() < 1e-15);
    assert!((w0 + 1.702_414_383_919_315_3).abs() < 1e-15);
}

// ---------------------------------------------------------------------------
// Measured orders, correct and planted.

#[test]
fn explicit_runge_kutta_orders_on_the_fixed_ladder() {
    let e = 1f64.exp();
    let es = 2f64.sin().exp();
    // Orders from HNW I, II.1; on y' = y over [0, 1] and the non-autonomous
    // y' = cos(t) y over [0, 2].
    assert_order("Euler", ratio::<Euler>(&Growth, 1.0, e, 256), 1);
    assert_order("Heun", ratio::<Heun>(&Growth, 1.0, e, 64), 2);
    assert_order("midpoint", ratio::<Midpoint>(&Growth, 1.0, e, 64), 2);
    assert_order("RK4", ratio::<Rk4>(&Growth, 1.0, e, 16), 4);
    assert_order("Euler, cos", ratio::<Euler>(&CosGrowth, 2.0, es, 256), 1);
    assert_order("Heun, cos", ratio::<Heun>(&CosGrowth, 2.0, es, 64), 2);
    assert_order(
        "midpoint, cos",
        ratio::<Midpoint>(&CosGrowth, 2.0, es, 64),
        2,
    );
    assert_order("RK4, cos", ratio::<Rk4>(&CosGrowth, 2.0, es, 32), 4);
}

#[test]
fn planted_bugs_show_the_order_or_floor_they_claim() {
    let e = 1f64.exp();
    let es = 2f64.sin().exp();
    // Wrong a32: order 1 on every problem (see Rk4WrongCoefTableau).
    assert_order(
        "Rk4WrongCoef",
        ratio::<Rk4WrongCoef>(&Growth, 1.0, e, 64),
        1,
    );
    assert_order(
        "Rk4WrongCoef, cos",
        ratio::<Rk4WrongCoef>(&CosGrowth, 2.0, es, 64),
        1,
    );
    // Wrong c3: invisible on an autonomous problem, order 1 otherwise.
    assert_order(
        "Rk4WrongTime",
        ratio::<Rk4WrongTime>(&Growth, 1.0, e, 16),
        4,
    );
    assert_order(
        "Rk4WrongTime, cos",
        ratio::<Rk4WrongTime>(&CosGrowth, 2.0, es, 64),
        1,
    );
    // Stages through f32: the error stalls between 1e-12 and 1e-8 (relative)
    // for 500 to 8000 steps, while the correct RK4 goes below 1e-13 at 2000
    // steps. The bounds bracket generously the random-walk estimate
    // 6e-8 sqrt(h) of the Rk4F32 comment (3e-9 to 7e-10 here).
    for n in [500, 1000, 2000, 4000, 8000] {
        let floor = scalar_error::<Rk4F32>(&Growth, 1.0, e, n) / e;
        assert!(
            floor > 1e-12 && floor < 1e-8,
            "f32 stages, {n} steps: {floor:e}"
        );
    }
    let good = scalar_error::<Rk4>(&Growth, 1.0, e, 2000) / e;
    assert!(good < 1e-13, "RK4 at 2000 steps {good:e}");
    // Still fourth order while far above the floor.
    assert_order("Rk4F32, coarse", ratio::<Rk4F32>(&Growth, 1.0, e, 4), 4);
}

#[test]
fn split_stepper_orders_on_the_driven_oscillator() {
    // Stormer-Verlet order 2, triple jump order 4 (Yoshida 1990), measured
    // on a non-autonomous force so the substep times matter.
    let t1 = 5.0;
    let r2 = driven_error::<Leapfrog>(t1, 200) / driven_error::<Leapfrog>(t1, 400);
    assert_order("leapfrog", r2, 2);
    let r4 = driven_error::<TripleJump>(t1, 100) / driven_error::<TripleJump>(t1, 200);
    assert_order("triple jump", r4, 4);
}

// ---------------------------------------------------------------------------
// Dormand-Prince as an Integrator.

/// Wraps a right-hand side and records the evaluations and the latest time
/// at which it was evaluated (in the direction of integration).
struct Recording<F> {
    f: F,
    evals: Cell<u64>,
    times: Cell<(f64, f64)>,
}

impl<F> Recording<F> {
    fn new(f: F) -> Self {
        Recording {
            f,
            evals: Cell::new(0),
            times: Cell::new((f64::INFINITY, f64::NEG_INFINITY)),
        }
    }
}

impl<F: Rhs> Rhs for Recording<F> {
    fn dim(&self) -> usize {
        self.f.dim()
    }
    fn rhs(&self, t: f64, y: &[f64], dydt: &mut [f64]) {
        self.evals.set(self.evals.get() + 1);
        let (lo, hi) = self.times.get();
        self.times.set((lo.min(t), hi.max(t)));
        self.f.rhs(t, y, dydt);
    }
}

/// Evaluations an embedded pair spends on a call, from its counts: the
/// first `k_1`, the starting-step guess (adaptive calls only), the new
/// stages of every attempt, and an evaluation per accepted step where the
/// pair does not reuse its last stage (DOP853's 13th evaluation).
#[derive(Clone, Copy)]
struct Cost {
    per_attempt: u64,
    per_accepted: u64,
}

/// Dormand-Prince 5(4) with FSAL: 6 new stages per attempt, nothing more on
/// acceptance (Dormand and Prince 1980).
const DP5_COST: Cost = Cost {
    per_attempt: 6,
    per_accepted: 0,
};

/// DOP853: 11 new stages per attempt, `f(t + h, y_new)` after acceptance
/// (HNW I, II.10, the code DOP853).
const DOP853_COST: Cost = Cost {
    per_attempt: 11,
    per_accepted: 1,
};

impl Cost {
    fn adaptive(self, c: drift::Counts) -> u64 {
        2 + self.per_attempt * (c.steps + c.rejected) + self.per_accepted * c.steps
    }
}

fn meets_tolerance_and_lands_on_t1<P: EmbeddedPair>(cost: Cost) {
    let f = Recording::new(Growth);
    let mut y = [1.0];
    let tol = Control::Tolerance {
        rtol: 1e-10,
        atol: 1e-10,
    };
    let counts = Adaptive::<P>::default()
        .integrate(&f, 0.0, 1.0, &mut y, tol)
        .unwrap();
    // True error against e: common practice (no source) is that the global
    // error of a well-behaved problem over a unit interval stays within about
    // 10 times the requested local tolerance; here |y - e| / e <= 1e-9.
    let err = (y[0] - 1f64.exp()).abs() / 1f64.exp();
    assert!(err <= 1e-9, "relative error {err:e}");
    assert!(counts.steps > 2 && counts.steps < 200, "{counts:?}");
    // No stage is evaluated beyond t1, and the last evaluation (FSAL, or
    // the new point of DOP853) is exactly at t1.
    assert_eq!(f.times.get(), (0.0, 1.0));
    assert_eq!(f.evals.get(), cost.adaptive(counts));
}

#[test]
fn embedded_pairs_meet_tolerance_and_land_on_t1() {
    meets_tolerance_and_lands_on_t1::<Dp5Pair>(DP5_COST);
    meets_tolerance_and_lands_on_t1::<Dop853Pair>(DOP853_COST);
}

fn lands_on_an_awkward_end_and_runs_backward<P: EmbeddedPair>() {
    // t1 = 0.3 is not a binary fraction; the last step is shortened so that
    // t reaches it exactly.
    let f = Recording::new(CosGrowth);
    let mut y = [1.0];
    let tol = Control::Tolerance {
        rtol: 1e-8,
        atol: 1e-8,
    };
    Adaptive::<P>::default()
        .integrate(&f, 0.0, 0.3, &mut y, tol)
        .unwrap();
    assert_eq!(f.times.get(), (0.0, 0.3));
    assert!((y[0] - 0.3f64.sin().exp()).abs() < 1e-7);
    // Backward from t = 1 (y = e) to 0 (y = 1).
    let f = Recording::new(Growth);
    let mut y = [1f64.exp()];
    let counts = Adaptive::<P>::default()
        .integrate(&f, 1.0, 0.0, &mut y, tol)
        .unwrap();
    assert_eq!(f.times.get(), (0.0, 1.0));
    assert!((y[0] - 1.0).abs() < 1e-7, "{} {counts:?}", y[0]);
}

#[test]
fn embedded_pairs_land_on_an_awkward_end_and_run_backward() {
    lands_on_an_awkward_end_and_runs_backward::<Dp5Pair>();
    lands_on_an_awkward_end_and_runs_backward::<Dop853Pair>();
}

fn counts_rejected_steps<P: EmbeddedPair>(cost: Cost) {
    // A mildly stiff relaxation y' = -50 (y - cos t): over a long interval
    // the controller runs into the explicit stability bound (about
    // h = 3.3/50 for Dormand-Prince 5(4), from memory; HNW II, IV.2; DOP853's
    // is of the same size) and must reject steps. The counts report them,
    // and the answer still meets a loose bound.
    struct Relax;
    impl Rhs for Relax {
        fn dim(&self) -> usize {
            1
        }
        fn rhs(&self, t: f64, y: &[f64], dydt: &mut [f64]) {
            dydt[0] = -50.0 * (y[0] - t.cos());
        }
    }
    let f = Recording::new(Relax);
    let mut y = [0.0];
    let tol = Control::Tolerance {
        rtol: 1e-6,
        atol: 1e-6,
    };
    let counts = Adaptive::<P>::default()
        .integrate(&f, 0.0, 10.0, &mut y, tol)
        .unwrap();
    assert!(counts.rejected > 0, "{counts:?}");
    assert_eq!(f.evals.get(), cost.adaptive(counts));
    // Exact solution of y' = -k (y - cos t), y(0) = 0 (linear first-order
    // ODE, integrating factor): y = k (k cos t + sin t - k e^{-k t}) / (k^2 + 1).
    let k = 50.0f64;
    let exact = k * (k * 10f64.cos() + 10f64.sin() - k * (-k * 10.0).exp()) / (k * k + 1.0);
    assert!((y[0] - exact).abs() < 1e-5, "{} vs {exact}", y[0]);
}

#[test]
fn embedded_pairs_count_rejected_steps() {
    counts_rejected_steps::<Dp5Pair>(DP5_COST);
    counts_rejected_steps::<Dop853Pair>(DOP853_COST);
}

/// Error of `n` equal steps (`Control::Steps`) on y' = cos(t) y over
/// [0, 2], checking the counts and the evaluations (no starting-step guess).
fn fixed_step_error<P: EmbeddedPair>(cost: Cost, n: u64) -> f64 {
    let f = Recording::new(CosGrowth);
    let mut y = [1.0];
    let counts = Adaptive::<P>::default()
        .integrate(&f, 0.0, 2.0, &mut y, Control::Steps(n))
        .unwrap();
    assert_eq!((counts.steps, counts.rejected), (n, 0));
    assert_eq!(
        f.evals.get(),
        1 + (cost.per_attempt + cost.per_accepted) * n
    );
    assert_eq!(f.times.get().1, 2.0);
    (y[0] - 2f64.sin().exp()).abs()
}

#[test]
fn dormand_prince_fixed_steps_are_fifth_order() {
    // Control::Steps(n) uses the 5th-order weights (Dormand and Prince
    // 1980): the error ratio is about 2^5 = 32 when n doubles.
    let err = |n| fixed_step_error::<Dp5Pair>(DP5_COST, n);
    let (e16, e32, e64) = (err(16), err(32), err(64));
    assert_order("Dormand-Prince, Steps 16 -> 32", e16 / e32, 5);
    assert_order("Dormand-Prince, Steps 32 -> 64", e32 / e64, 5);
}

#[test]
fn dop853_fixed_steps_are_eighth_order() {
    // HNW I, II.10: the propagated solution of DOP853 has order 8. On the
    // non-autonomous y' = cos(t) y (so a wrong node would show) the
    // observed order log2(e(n) / e(2n)) is 8 within 0.3 (the band of the
    // brief; common practice, no source) while the error is far above
    // roundoff (checked: above 1e-13).
    let err = |n| fixed_step_error::<Dop853Pair>(DOP853_COST, n);
    let e: Vec<f64> = [4, 8, 16].into_iter().map(err).collect();
    for w in e.windows(2) {
        assert!(w[1] > 1e-13, "at roundoff already: {e:?}");
        let p = (w[0] / w[1]).log2();
        assert!((p - 8.0).abs() < 0.3, "observed order {p} from {e:?}");
    }
}

fn fails_with_the_time_reached<P: EmbeddedPair>() {
    // Too few step attempts allowed: Failed, at a time inside (t0, t1).
    let mut y = [1.0];
    let tol = Control::Tolerance {
        rtol: 1e-12,
        atol: 1e-12,
    };
    match Adaptive::<P>::with_max_steps(2).integrate(&Growth, 0.0, 1.0, &mut y, tol) {
        Err(IntegrateError::Failed { t, .. }) => assert!(t > 0.0 && t < 1.0, "{t}"),
        other => panic!("expected Failed, got {other:?}"),
    }
    // y' = y^2, y(0) = 1 blows up at t = 1 (y = 1/(1 - t)): the step size
    // collapses there and the integrator reports a failure near 1.
    struct Blowup;
    impl Rhs for Blowup {
        fn dim(&self) -> usize {
            1
        }
        fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) {
            dydt[0] = y[0] * y[0];
        }
    }
    let mut y = [1.0];
    let tol = Control::Tolerance {
        rtol: 1e-8,
        atol: 1e-8,
    };
    match Adaptive::<P>::default().integrate(&Blowup, 0.0, 2.0, &mut y, tol) {
        Err(IntegrateError::Failed { t, reason }) => {
            // The numerical blow-up sits within the tolerance of t = 1.
            assert!((t - 1.0).abs() < 1e-6, "failed at {t}: {reason}")
        }
        other => panic!("expected Failed, got {other:?}"),
    }
}

#[test]
fn embedded_pairs_fail_with_the_time_reached() {
    fails_with_the_time_reached::<Dp5Pair>();
    fails_with_the_time_reached::<Dop853Pair>();
}

fn refuses_meaningless_tolerances<P: EmbeddedPair>() {
    let mut y = [1.0];
    let bad = Control::Tolerance {
        rtol: 0.0,
        atol: 0.0,
    };
    let r = Adaptive::<P>::default().integrate(&Growth, 0.0, 1.0, &mut y, bad);
    assert_eq!(r, Err(IntegrateError::Unsupported(bad)));
    assert_eq!(y[0], 1.0);
}

#[test]
fn embedded_pairs_refuse_meaningless_tolerances() {
    refuses_meaningless_tolerances::<Dp5Pair>();
    refuses_meaningless_tolerances::<Dop853Pair>();
}

// ---------------------------------------------------------------------------
// Accuracy-neutral rewrites (tests/common/rewrites.rs) against their
// originals.

/// Problems with a second-order form, so every family runs on them:
/// linear, nonlinear (Kepler, e = 0.5) and non-autonomous (driven).
fn smooth_problems() -> Vec<Box<dyn drift::Problem>> {
    use drift::problem::{driven::Driven, harmonic::Harmonic, kepler::Kepler};
    vec![
        Box::new(Harmonic::default()),
        Box::new(Kepler::default()),
        Box::new(Driven::default()),
    ]
}

/// Largest component difference relative to the largest component of `b`.
fn rel_diff(a: &[f64], b: &[f64]) -> f64 {
    let scale = b.iter().fold(0.0f64, |m, x| m.max(x.abs()));
    let d = a
        .iter()
        .zip(b)
        .fold(0.0f64, |m, (x, y)| m.max((x - y).abs()));
    d / scale.max(f64::MIN_POSITIVE)
}

/// Runs `v` on `p` over `[t0, t1]` under `control` from the initial state.
fn run_variant(
    v: &Variant,
    p: &dyn drift::Problem,
    t1: f64,
    control: Control,
) -> (Vec<f64>, drift::Counts, u64) {
    let mut y = vec![0.0; p.dim()];
    p.initial(&mut y);
    let (counts, evals) =
        (v.run)(p, t1, control, &mut y).unwrap_or_else(|e| panic!("{}: {e}", v.name));
    (y, counts, evals)
}

#[test]
fn every_family_has_an_original_and_two_rewrites() {
    let fams = families();
    let names: Vec<&str> = fams.iter().map(|f| f.name).collect();
    assert_eq!(
        names,
        [
            "euler",
            "heun",
            "midpoint",
            "rk4",
            "leapfrog",
            "triple-jump",
            "dormand-prince",
            "dop853"
        ]
    );
    for f in &fams {
        assert!(f.variants.len() >= 3, "{}", f.name);
        let mut vn: Vec<&str> = f.variants.iter().map(|v| v.name).collect();
        vn.sort();
        vn.dedup();
        assert_eq!(vn.len(), f.variants.len(), "{}: duplicate names", f.name);
    }
    // Registering every variant under its own name gives a harness with no
    // clash (the harness refuses duplicate names when it runs).
    let mut h = drift::Harness::new();
    for f in &fams {
        for v in &f.variants {
            h = (v.register)(h, &format!("{}-{}", f.name, v.name));
        }
    }
    drop(h);
}

#[test]
fn rewrites_agree_with_their_originals_to_roundoff_but_not_bitwise() {
    // Over 256 fixed steps (a step of 0.1 time units, so a few periods),
    // a rewrite differs from its original by rounding only: the bound is
    // 100 x EPSILON x steps relative, the linear-accumulation rule the
    // order fit uses for the roundoff floor (DEVELOPERS.md; common
    // practice, no source). Same evaluations per step. And it is a rewrite,
    // not the original again: the final states differ in at least one bit
    // on at least one problem.
    let steps = 256;
    let t1 = 0.1 * steps as f64;
    let bound = 100.0 * f64::EPSILON * steps as f64;
    for fam in families() {
        let (original, rewrites) = fam.variants.split_first().unwrap();
        for v in rewrites {
            let mut differs = false;
            for p in smooth_problems() {
                let what = format!("{} {} on {}", fam.name, v.name, p.name());
                let (y0, c0, e0) = run_variant(original, p.as_ref(), t1, Control::Steps(steps));
                let (y1, c1, e1) = run_variant(v, p.as_ref(), t1, Control::Steps(steps));
                assert_eq!((c0, e0), (c1, e1), "{what}: counts or evaluations");
                let d = rel_diff(&y1, &y0);
                assert!(d <= bound, "{what}: differs by {d:e} (bound {bound:e})");
                differs |= y0 != y1;
            }
            assert!(
                differs,
                "{} {}: bit-identical to the original",
                fam.name, v.name
            );
        }
    }
}

#[test]
fn rewrites_differ_from_their_originals_within_one_step() {
    // One step of 0.1 from a few points of the Kepler orbit (the state after
    // 0, 1, ..., 7 steps of the original): every rewrite agrees to 16 ulp
    // relative (common practice, no source) and differs in the last bits on
    // at least one of them.
    let p = drift::problem::kepler::Kepler::default();
    for fam in families() {
        let (original, rewrites) = fam.variants.split_first().unwrap();
        for v in rewrites {
            let mut differs = false;
            for k in 0..8u64 {
                let t = 0.1 * k as f64;
                let mut start = vec![0.0; 4];
                p.initial(&mut start);
                if k > 0 {
                    (original.run)(&p, t, Control::Steps(k), &mut start).unwrap();
                }
                let moved = Shifted {
                    p: &p,
                    t0: t,
                    y0: start.clone(),
                };
                let one = |var: &Variant| {
                    let mut y = start.clone();
                    (var.run)(&moved, t + 0.1, Control::Steps(1), &mut y).unwrap();
                    y
                };
                let (y0, y1) = (one(original), one(v));
                let d = rel_diff(&y1, &y0);
                assert!(
                    d <= 16.0 * f64::EPSILON,
                    "{} {} at step {k}: {d:e}",
                    fam.name,
                    v.name
                );
                differs |= y0 != y1;
            }
            assert!(
                differs,
                "{} {}: bit-identical on every one-step case",
                fam.name, v.name
            );
        }
    }
}

/// A problem started at another time (`t0`) and state (`y0`).
struct Shifted<'a, P> {
    p: &'a P,
    t0: f64,
    y0: Vec<f64>,
}

impl<P: drift::Problem> drift::Problem for Shifted<'_, P> {
    fn name(&self) -> &str {
        self.p.name()
    }
    fn t0(&self) -> f64 {
        self.t0
    }
    fn initial(&self, y0: &mut [f64]) {
        y0.copy_from_slice(&self.y0);
    }
    fn time_unit(&self) -> f64 {
        self.p.time_unit()
    }
    fn accel(&self, t: f64, q: &[f64], a: &mut [f64]) -> bool {
        self.p.accel(t, q, a)
    }
}

impl<P: drift::Problem> Rhs for Shifted<'_, P> {
    fn dim(&self) -> usize {
        Rhs::dim(self.p)
    }
    fn rhs(&self, t: f64, y: &[f64], dydt: &mut [f64]) {
        self.p.rhs(t, y, dydt)
    }
}

#[test]
fn integrator_rewrites_take_the_same_adaptive_path() {
    // The adaptive rewrites keep the controller (shared driver, same error
    // weights): at tolerance 1e-8 on each smooth problem over 10 time units
    // they take the same accepted and rejected steps and end within
    // 1e-10 relative of the original (common practice, no source: rounding
    // moves the step sizes by a few ulp, well below the tolerance).
    let tol = Control::Tolerance {
        rtol: 1e-8,
        atol: 1e-8,
    };
    for fam in families().into_iter().filter(|f| f.order >= 5.0) {
        let (original, rewrites) = fam.variants.split_first().unwrap();
        for v in rewrites {
            for p in smooth_problems() {
                let what = format!("{} {} on {}", fam.name, v.name, p.name());
                let (y0, c0, e0) = run_variant(original, p.as_ref(), 10.0, tol);
                let (y1, c1, e1) = run_variant(v, p.as_ref(), 10.0, tol);
                assert_eq!((c0, e0), (c1, e1), "{what}");
                let d = rel_diff(&y1, &y0);
                assert!(d <= 1e-10, "{what}: {d:e}");
            }
        }
    }
}
