//! Test steppers for the integration tests: textbook explicit Runge-Kutta
//! methods built on one Butcher-tableau engine, Stormer-Verlet and its
//! fourth-order triple-jump composition, and an adaptive Dormand-Prince 5(4)
//! integrator. They are not public API; they exist so the measuring code can
//! be tested against methods whose orders are known from the literature.
//!
//! Some variants are wrong ON PURPOSE: [`Rk4WrongCoef`], [`Rk4WrongTime`] and
//! [`Rk4F32`] each carry one planted bug of a kind that survives ordinary unit
//! tests (a mistyped stage coefficient, a wrong stage time, an f32 round trip).
//! Tests use them to show that the instrument notices such bugs. Do not "fix"
//! them.

use std::marker::PhantomData;

use drift::{Accel, Rhs, SplitStepper, Stepper};

pub use super::adaptive::{Adaptive, EmbeddedPair, StepControl, Tol};

/// A Butcher tableau of an explicit Runge-Kutta method with `S` stages
/// (Hairer, Norsett and Wanner I, section II.1, (1.8)-(1.9)): `a` strictly
/// lower triangular, weights `b`, nodes (stage times) `c`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Tableau<const S: usize> {
    /// Stage matrix, strictly lower triangular.
    pub a: [[f64; S]; S],
    /// Weights of the result.
    pub b: [f64; S],
    /// Nodes: stage `i` is evaluated at `t + c[i] h`.
    pub c: [f64; S],
    /// The order the method is published with (for a planted variant: the
    /// order of the method it imitates, which it does not reach).
    pub claimed_order: u32,
}

/// A type that names a tableau, so the engine is monomorphised over the
/// coefficients and the compiler sees them as constants.
pub trait Coefficients<const S: usize> {
    /// The coefficients.
    const TABLEAU: Tableau<S>;
}

/// How the engine stores a stage value `y + h sum_j a_ij k_j` before the
/// right-hand side sees it: the hook behind the planted [`Rk4F32`].
pub trait StageRounding {
    /// False when [`StageRounding::round`] is the identity.
    const ROUNDS: bool;
    /// Rounds one component of a stage value.
    fn round(x: f64) -> f64;
}

/// Stage values kept in full f64 (every correct method).
pub struct Exact;

impl StageRounding for Exact {
    const ROUNDS: bool = false;
    #[inline(always)]
    fn round(x: f64) -> f64 {
        x
    }
}

/// Planted bug: stage values rounded through f32, as if a stage buffer had
/// been made `Vec<f32>` for speed.
pub struct ThroughF32;

impl StageRounding for ThroughF32 {
    const ROUNDS: bool = true;
    #[inline(always)]
    fn round(x: f64) -> f64 {
        x as f32 as f64
    }
}

/// How the engine forms `a x + y` when it adds a weighted stage: as written
/// (two roundings) or fused (`f64::mul_add`, one rounding). The same
/// method either way; only the rounding differs (the fused form is one of
/// the accuracy-neutral rewrites in tests/common/rewrites.rs).
pub trait Axpy {
    /// `a x + y`.
    fn axpy(a: f64, x: f64, y: f64) -> f64;
}

/// `a * x + y` with two roundings (every original stepper).
pub struct Plain;

impl Axpy for Plain {
    #[inline(always)]
    fn axpy(a: f64, x: f64, y: f64) -> f64 {
        y + a * x
    }
}

/// `a.mul_add(x, y)`: one rounding (IEEE 754 fusedMultiplyAdd).
pub struct Fused;

impl Axpy for Fused {
    #[inline(always)]
    fn axpy(a: f64, x: f64, y: f64) -> f64 {
        a.mul_add(x, y)
    }
}

/// `y + (a/2) x + (a/2) x`: the weight split in two equal halves (exact
/// in binary), added one after the other; the same sum with other roundings.
pub struct Halved;

impl Axpy for Halved {
    #[inline(always)]
    fn axpy(a: f64, x: f64, y: f64) -> f64 {
        let half = 0.5 * a * x;
        y + half + half
    }
}

/// The one explicit Runge-Kutta engine (Hairer, Norsett and Wanner I,
/// section II.1, (1.8)): `k_i = f(t + c_i h, y + h sum_{j<i} a_ij k_j)`,
/// `y <- y + h sum_i b_i k_i`. Scratch buffers are sized on first use and
/// reused for every later step of the same dimension. `R` rounds stage
/// values (the planted [`Rk4F32`]), `A` forms each weighted addition.
pub struct ExplicitRk<const S: usize, M, R = Exact, A = Plain> {
    pub(crate) k: [Vec<f64>; S],
    pub(crate) stage: Vec<f64>,
    _method: PhantomData<(M, R, A)>,
}

impl<const S: usize, M, R, A> Default for ExplicitRk<S, M, R, A> {
    fn default() -> Self {
        ExplicitRk {
            k: std::array::from_fn(|_| Vec::new()),
            stage: Vec::new(),
            _method: PhantomData,
        }
    }
}

impl<const S: usize, M: Coefficients<S>, R: StageRounding, A: Axpy> ExplicitRk<S, M, R, A> {
    /// Sizes the scratch buffers for states of length `n` (allocates only
    /// when `n` changes).
    pub(crate) fn ensure(&mut self, n: usize) {
        if self.stage.len() != n {
            self.stage.resize(n, 0.0);
            for k in &mut self.k {
                k.resize(n, 0.0);
            }
        }
    }

    /// Computes the stages `first..S` at `(t, y)` with step `h`; the stages
    /// before `first` must already be in `self.k` (FSAL reuse of `k_1`).
    /// Afterwards `self.stage` holds the last stage value.
    #[inline(always)]
    pub(crate) fn stages<F: Rhs + ?Sized>(
        &mut self,
        f: &F,
        t: f64,
        y: &[f64],
        h: f64,
        first: usize,
    ) {
        let tab = M::TABLEAU;
        let n = y.len();
        for i in first..S {
            let (done, rest) = self.k.split_at_mut(i);
            let ki = &mut rest[0][..n];
            if i == 0 {
                // a_1j = 0: the first stage value is y itself.
                f.rhs(t + tab.c[0] * h, y, ki);
                continue;
            }
            // stage = y + h sum_j a_ij k_j: the first nonzero term fused with
            // the copy of y (one pass for RK4's single-term rows), the others
            // added one by one.
            let stage = &mut self.stage[..n];
            let row = &tab.a[i][..i];
            match row.iter().position(|aij| *aij != 0.0) {
                Some(j0) => {
                    let c = h * row[j0];
                    for ((s, yv), k) in stage.iter_mut().zip(y).zip(done[j0].iter()) {
                        *s = A::axpy(c, *k, *yv);
                    }
                    for (aij, kj) in row.iter().zip(done.iter()).skip(j0 + 1) {
                        if *aij != 0.0 {
                            let c = h * aij;
                            for (s, k) in stage.iter_mut().zip(kj.iter()) {
                                *s = A::axpy(c, *k, *s);
                            }
                        }
                    }
                }
                None => stage.copy_from_slice(y),
            }
            if R::ROUNDS {
                for s in stage.iter_mut() {
                    *s = R::round(*s);
                }
            }
            f.rhs(t + tab.c[i] * h, stage, ki);
        }
    }

    /// Replaces `y` by `y + h sum_i w_i k_i`, rounding `y` once per step.
    #[inline(always)]
    pub(crate) fn combine_in_place(&self, y: &mut [f64], h: f64, w: &[f64; S]) {
        let n = y.len();
        let k: [&[f64]; S] = std::array::from_fn(|i| &self.k[i][..n]);
        for (m, ym) in y.iter_mut().enumerate() {
            let mut acc = 0.0;
            for (wi, ki) in w.iter().zip(&k) {
                acc = A::axpy(*wi, ki[m], acc);
            }
            *ym = A::axpy(h, acc, *ym);
        }
    }
}

impl<const S: usize, M: Coefficients<S>, R: StageRounding, A: Axpy> Stepper
    for ExplicitRk<S, M, R, A>
{
    fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
        self.ensure(y.len());
        self.stages(f, t, y, h, 0);
        self.combine_in_place(y, h, &M::TABLEAU.b);
    }
}

/// Explicit Euler (Hairer, Norsett and Wanner I, section II.1), order 1.
pub struct EulerTableau;
impl Coefficients<1> for EulerTableau {
    const TABLEAU: Tableau<1> = Tableau {
        a: [[0.0]],
        b: [1.0],
        c: [0.0],
        claimed_order: 1,
    };
}
/// Explicit Euler, order 1.
pub type Euler = ExplicitRk<1, EulerTableau>;

/// Heun's method, the explicit trapezoidal rule (Hairer, Norsett and Wanner I,
/// section II.1, (1.6)), order 2.
pub struct HeunTableau;
impl Coefficients<2> for HeunTableau {
    const TABLEAU: Tableau<2> = Tableau {
        a: [[0.0, 0.0], [1.0, 0.0]],
        b: [0.5, 0.5],
        c: [0.0, 1.0],
        claimed_order: 2,
    };
}
/// Heun's method, order 2.
pub type Heun = ExplicitRk<2, HeunTableau>;

/// Explicit midpoint rule, Runge's method (Hairer, Norsett and Wanner I,
/// section II.1, (1.5)), order 2.
pub struct MidpointTableau;
impl Coefficients<2> for MidpointTableau {
    const TABLEAU: Tableau<2> = Tableau {
        a: [[0.0, 0.0], [0.5, 0.0]],
        b: [0.0, 1.0],
        c: [0.0, 0.5],
        claimed_order: 2,
    };
}
/// Explicit midpoint rule, order 2.
pub type Midpoint = ExplicitRk<2, MidpointTableau>;

/// The classical Runge-Kutta method (Kutta 1901; Hairer, Norsett and Wanner
/// I, section II.1, Table 1.2 left), order 4.
pub struct Rk4Tableau;
impl Coefficients<4> for Rk4Tableau {
    const TABLEAU: Tableau<4> = RK4;
}
const RK4: Tableau<4> = Tableau {
    a: [
        [0.0, 0.0, 0.0, 0.0],
        [0.5, 0.0, 0.0, 0.0],
        [0.0, 0.5, 0.0, 0.0],
        [0.0, 0.0, 1.0, 0.0],
    ],
    b: [1.0 / 6.0, 1.0 / 3.0, 1.0 / 3.0, 1.0 / 6.0],
    c: [0.0, 0.5, 0.5, 1.0],
    claimed_order: 4,
};
/// Classical RK4, order 4.
pub type Rk4 = ExplicitRk<4, Rk4Tableau>;

/// PLANTED BUG: classical RK4 with `a32 = 0.5` mistyped as `0.49` (nodes
/// and weights left correct).
///
/// Order drops to 1, on every problem, autonomous or not: the third stage
/// value is now `y + 0.49 h k_2`, i.e. its effective node is the row sum
/// `a31 + a32 = 0.49`, not `c3 = 0.5`. The second-order condition
/// `sum_i b_i sum_j a_ij = 1/2` (Hairer, Norsett and Wanner I, II.2,
/// Table 2.2) becomes `1/3 * 0.5 + 1/3 * 0.49 + 1/6 * 1 = 1/2 - 1/300`, so
/// the local error keeps an `h^2 y''/300` term and the global error is O(h).
/// (For y' = y this is visible directly: the `z^2` coefficient of the
/// stability function is `b A 1 = 1/2 - 1/300`.) On a non-autonomous
/// problem the stage time `c3 = 0.5` no longer matches the row sum either,
/// which also breaks the condition `c = A 1`; still order 1.
pub struct Rk4WrongCoefTableau;
impl Coefficients<4> for Rk4WrongCoefTableau {
    const TABLEAU: Tableau<4> = {
        let mut t = RK4;
        t.a[2][1] = 0.49;
        t
    };
}
/// Planted bug: RK4 with a mistyped stage coefficient (order 1).
pub type Rk4WrongCoef = ExplicitRk<4, Rk4WrongCoefTableau>;

/// PLANTED BUG: classical RK4 with the third stage evaluated at `t` instead
/// of `t + h/2` (`c3 = 0.5` mistyped as `0.0`; stage matrix and weights
/// correct).
///
/// An autonomous problem never looks at `c`, so there it is still order 4.
/// On a non-autonomous problem order drops to 1: for `y' = g(t)` a step is
/// the quadrature `h sum_i b_i g(t + c_i h) = h g + h^2 g' sum_i b_i c_i +
/// ...`, and `sum_i b_i c_i = 1/3 * 0.5 + 1/3 * 0 + 1/6 * 1 = 1/3` instead
/// of 1/2, so the local error keeps an `h^2 g'/6` term and the global error
/// is O(h). (Any single wrong node of RK4 does this, because every `b_i` is
/// nonzero.)
pub struct Rk4WrongTimeTableau;
impl Coefficients<4> for Rk4WrongTimeTableau {
    const TABLEAU: Tableau<4> = {
        let mut t = RK4;
        t.c[2] = 0.0;
        t
    };
}
/// Planted bug: RK4 with a wrong stage time (order 4 autonomous, 1 otherwise).
pub type Rk4WrongTime = ExplicitRk<4, Rk4WrongTimeTableau>;

/// PLANTED BUG: correct classical RK4 whose stage values `y + h sum a k`
/// are rounded through f32, as if the stage buffer were `Vec<f32>`. Order 4
/// until the error meets a floor of about 9 to 10 digits instead of 15 to
/// 16: each rounded stage value is off by up to 2^-24 |y| (6e-8 relative),
/// which perturbs the step's increment by about `h L 6e-8 |y|` (L the
/// Lipschitz constant); over `N = T/h` steps these unbiased errors add up
/// like a random walk to about `6e-8 L |y| sqrt(T h)`. On y' = y over
/// [0, 1] that is 1e-9 to 1e-10 between 200 and 10000 steps (measured in
/// tests/steppers.rs), far above the f64 roundoff of a correct RK4.
pub type Rk4F32 = ExplicitRk<4, Rk4Tableau, ThroughF32>;

/// Dormand-Prince 5(4) (Dormand and Prince, J. Comput. Appl. Math. 6 (1980)
/// 19; Hairer, Norsett and Wanner I, section II.5, Table 5.2): the stage
/// matrix, nodes and 5th-order weights `b`. The last row of `a` equals `b`
/// (first same as last). The embedded 4th-order weights are
/// [`DORMAND_PRINCE_B_HAT`]. Verified by the order conditions in
/// tests/steppers.rs.
pub struct DormandPrinceTableau;
impl Coefficients<7> for DormandPrinceTableau {
    const TABLEAU: Tableau<7> = Tableau {
        a: [
            [0.0; 7],
            [1.0 / 5.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0],
            [3.0 / 40.0, 9.0 / 40.0, 0.0, 0.0, 0.0, 0.0, 0.0],
            [44.0 / 45.0, -56.0 / 15.0, 32.0 / 9.0, 0.0, 0.0, 0.0, 0.0],
            [
                19372.0 / 6561.0,
                -25360.0 / 2187.0,
                64448.0 / 6561.0,
                -212.0 / 729.0,
                0.0,
                0.0,
                0.0,
            ],
            [
                9017.0 / 3168.0,
                -355.0 / 33.0,
                46732.0 / 5247.0,
                49.0 / 176.0,
                -5103.0 / 18656.0,
                0.0,
                0.0,
            ],
            DP_B,
        ],
        b: DP_B,
        c: [0.0, 1.0 / 5.0, 3.0 / 10.0, 4.0 / 5.0, 8.0 / 9.0, 1.0, 1.0],
        claimed_order: 5,
    };
}
const DP_B: [f64; 7] = [
    35.0 / 384.0,
    0.0,
    500.0 / 1113.0,
    125.0 / 192.0,
    -2187.0 / 6784.0,
    11.0 / 84.0,
    0.0,
];

/// Embedded 4th-order weights of Dormand-Prince 5(4) (Hairer, Norsett and
/// Wanner I, section II.5, Table 5.2, the `b^` row).
pub const DORMAND_PRINCE_B_HAT: [f64; 7] = [
    5179.0 / 57600.0,
    0.0,
    7571.0 / 16695.0,
    393.0 / 640.0,
    -92097.0 / 339200.0,
    187.0 / 2100.0,
    1.0 / 40.0,
];

/// `a - b` component by component, at compile time (the weights of an
/// embedded error estimate are differences of two weight rows).
pub const fn weights_minus<const S: usize>(a: [f64; S], b: [f64; S]) -> [f64; S] {
    let mut d = [0.0; S];
    let mut i = 0;
    while i < S {
        d[i] = a[i] - b[i];
        i += 1;
    }
    d
}

/// `b - b^` of Dormand-Prince 5(4): the weights of its error estimate.
pub const DORMAND_PRINCE_E: [f64; 7] = weights_minus(DP_B, DORMAND_PRINCE_B_HAT);

/// Controller constants of Dormand-Prince 5(4) (Hairer, Norsett and Wanner
/// I, section II.4, (4.13); the code DOPRI5 has fac1 = 0.2, fac2 = 10):
/// safety 0.9, factors in [0.2, 10], exponent 1/5 (error estimate of
/// order 4).
pub const DORMAND_PRINCE_CONTROL: StepControl = StepControl {
    safety: 0.9,
    fac_min: 0.2,
    fac_max: 10.0,
    exponent: 1.0 / 5.0,
};

/// Dormand-Prince 5(4) as an [`EmbeddedPair`], on the tableau engine with
/// FSAL: the 7th stage is `f(t + h, y_new)`, the next step's `k_1`. `A`
/// forms the weighted additions ([`Plain`] in the original).
pub struct Dp5Pair<A = Plain> {
    rk: ExplicitRk<7, DormandPrinceTableau, Exact, A>,
    y_new: Vec<f64>,
}

impl<A> Default for Dp5Pair<A> {
    fn default() -> Self {
        Dp5Pair {
            rk: ExplicitRk::default(),
            y_new: Vec::new(),
        }
    }
}

impl<A: Axpy> EmbeddedPair for Dp5Pair<A> {
    const CONTROL: StepControl = DORMAND_PRINCE_CONTROL;
    fn resize(&mut self, n: usize) {
        self.rk.ensure(n);
        self.y_new.resize(n, 0.0);
    }
    fn k1(&mut self) -> &mut [f64] {
        &mut self.rk.k[0]
    }
    fn attempt<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &[f64], h: f64) {
        self.rk.stages(f, t, y, h, 1);
        // Row 7 of `a` is `b`, so the last stage value is the new state.
        self.y_new.copy_from_slice(&self.rk.stage);
    }
    fn error_norm(&self, y: &[f64], h: f64, tol: Tol) -> f64 {
        let k = &self.rk.k;
        tol.estimate(y, &self.y_new, h, &DORMAND_PRINCE_E, |i, m| k[i][m])
    }
    fn accept<F: Rhs + ?Sized>(&mut self, _f: &F, _t_new: f64, y: &mut [f64]) {
        // FSAL: k_7 = f(t + h, y_new) is already there.
        y.copy_from_slice(&self.y_new);
        self.rk.k.swap(0, 6);
    }
}

/// Adaptive Dormand-Prince 5(4) integrator with FSAL and local
/// extrapolation (the 5th-order result is propagated), error control as in
/// Hairer, Norsett and Wanner I, section II.4. Also runs `Control::Steps(n)`
/// as `n` equal 5th-order steps.
///
/// Construct with `DormandPrince::default()` (at most `DEFAULT_MAX_STEPS`
/// of adaptive.rs step attempts per call) or `DormandPrince::with_max_steps`.
pub type DormandPrince = Adaptive<Dp5Pair>;

/// Stormer-Verlet in velocity form, kick-drift-kick (Hairer, Lubich and
/// Wanner, Geometric Numerical Integration, I.1.4):
/// `v += h/2 a(t, q); q += h v; v += h/2 a(t + h, q)`. Order 2, symmetric,
/// symplectic. Two force evaluations per step.
#[derive(Default)]
pub struct Leapfrog {
    a: Vec<f64>,
}

impl Leapfrog {
    fn kick<A: Accel + ?Sized>(&mut self, f: &A, t: f64, q: &[f64], v: &mut [f64], dt: f64) {
        f.accel(t, q, &mut self.a);
        for (vi, ai) in v.iter_mut().zip(&self.a) {
            *vi += dt * ai;
        }
    }
}

impl SplitStepper for Leapfrog {
    fn step<A: Accel + ?Sized>(&mut self, f: &A, t: f64, q: &mut [f64], v: &mut [f64], h: f64) {
        self.a.resize(q.len(), 0.0);
        let half = 0.5 * h;
        self.kick(f, t, q, v, half);
        for (qi, vi) in q.iter_mut().zip(v.iter()) {
            *qi += h * vi;
        }
        self.kick(f, t + h, q, v, half);
    }
}

/// Yoshida's triple jump: the symmetric composition of three Stormer-Verlet
/// steps of sizes `w1 h, w0 h, w1 h` with `w1 = 1/(2 - 2^(1/3))`,
/// `w0 = -2^(1/3)/(2 - 2^(1/3))` (Yoshida, Phys. Lett. A 150 (1990) 262;
/// Hairer, Lubich and Wanner, Geometric Numerical Integration, II.4).
/// Order 4, symmetric, symplectic. Substeps start at `t`,
/// `t + w1 h` and `t + (w1 + w0) h`. `L` is the Stormer-Verlet step
/// composed ([`Leapfrog`] in the original; a rewrite of it in
/// tests/common/rewrites.rs).
pub struct TripleJumpOf<L> {
    inner: L,
}

impl<L: Default> Default for TripleJumpOf<L> {
    fn default() -> Self {
        TripleJumpOf {
            inner: L::default(),
        }
    }
}

impl<L> TripleJumpOf<L> {
    /// The weights `(w0, w1)`.
    pub fn weights() -> (f64, f64) {
        let cbrt2 = 2f64.cbrt();
        let d = 2.0 - cbrt2; // 0.74, far from 0
        (-cbrt2 / d, 1.0 / d)
    }
}

impl<L: SplitStepper> SplitStepper for TripleJumpOf<L> {
    fn step<A: Accel + ?Sized>(&mut self, f: &A, t: f64, q: &mut [f64], v: &mut [f64], h: f64) {
        let (w0, w1) = Self::weights();
        self.inner.step(f, t, q, v, w1 * h);
        self.inner.step(f, t + w1 * h, q, v, w0 * h);
        self.inner.step(f, t + (w1 + w0) * h, q, v, w1 * h);
    }
}

/// The triple jump over [`Leapfrog`], order 4.
pub type TripleJump = TripleJumpOf<Leapfrog>;
