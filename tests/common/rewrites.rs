//! Accuracy-neutral rewrites of every test stepper, and the table
//! ([`families`]) a matrix test iterates.
//!
//! A rewrite is the same method as its original (same stage times, same
//! number of right-hand-side evaluations per step, same order and error
//! constant) computed by other floating-point expressions that are equal in
//! exact arithmetic: the kind of refactor a user makes for speed (fused
//! multiply-add, a hand-written loop instead of the tableau engine, weights
//! split or regrouped, one flat scratch buffer). Each differs from its
//! original in rounding only, so a measuring tool must read the same digits
//! and order for both; tests/steppers.rs checks that each agrees with its
//! original to roundoff and is not bit-identical to it.

use drift::measure::{Counted, Fixed, Method, Split, Whole};
use drift::{Accel, Control, Counts, Harness, IntegrateError, Integrator, Problem, Rhs};
use drift::{SplitStepper, Stepper};

use super::adaptive::{Adaptive, EmbeddedPair, Tol};
use super::dop853::{Dop853, Dop853Pair};
use super::steppers::{
    Coefficients, DormandPrince, DormandPrinceTableau, Dp5Pair, EulerTableau, Exact, ExplicitRk,
    Fused, Halved, Heun, HeunTableau, Leapfrog, Midpoint, MidpointTableau, Rk4, Rk4Tableau,
    TripleJump, TripleJumpOf, DORMAND_PRINCE_CONTROL, DORMAND_PRINCE_E,
};

// ---------------------------------------------------------------------------
// Fused multiply-add through the tableau engine (one rounding per a x + y).

/// Explicit Euler with `y <- fma(h, k, y)`.
pub type EulerFused = ExplicitRk<1, EulerTableau, Exact, Fused>;
/// Heun's method with fused stage and result sums.
pub type HeunFused = ExplicitRk<2, HeunTableau, Exact, Fused>;
/// Explicit midpoint rule with fused stage and result sums.
pub type MidpointFused = ExplicitRk<2, MidpointTableau, Exact, Fused>;
/// Classical RK4 with fused stage and result sums.
pub type Rk4Fused = ExplicitRk<4, Rk4Tableau, Exact, Fused>;
/// Dormand-Prince 5(4) with fused stage sums (same controller).
pub type DormandPrinceFused = Adaptive<Dp5Pair<Fused>>;
/// DOP853 with fused stage sums (same controller).
pub type Dop853Fused = Adaptive<Dop853Pair<Fused>>;
/// DOP853 with every weight added in two halves (same controller).
pub type Dop853Halved = Adaptive<Dop853Pair<Halved>>;

/// Sizes `buf` to `n` components.
fn sized(buf: &mut Vec<f64>, n: usize) -> &mut [f64] {
    buf.resize(n, 0.0);
    buf
}

// ---------------------------------------------------------------------------
// Hand-written loops.

/// Explicit Euler with the increment added in two equal halves,
/// `y <- (y + (h/2) k) + (h/2) k`, as a loop accumulating sub-increments
/// does: the same slope, one evaluation per step, an extra rounding.
#[derive(Default)]
pub struct EulerHalves {
    k: Vec<f64>,
}

impl Stepper for EulerHalves {
    fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
        let k = sized(&mut self.k, y.len());
        f.rhs(t, y, k);
        let hh = 0.5 * h;
        for (yi, ki) in y.iter_mut().zip(k.iter()) {
            *yi += hh * ki;
            *yi += hh * ki;
        }
    }
}

/// Heun's method written as the average of the start and the Euler
/// predictor corrected by the end slope: `p = y + h k1`, `k2 = f(t + h, p)`,
/// `y <- ((y + p) + h k2) / 2` (equal to `y + h/2 (k1 + k2)`).
#[derive(Default)]
pub struct HeunAverage {
    k: Vec<f64>,
    p: Vec<f64>,
}

impl Stepper for HeunAverage {
    fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
        let n = y.len();
        let (k, p) = (sized(&mut self.k, n), sized(&mut self.p, n));
        f.rhs(t, y, k);
        for ((pi, yi), ki) in p.iter_mut().zip(y.iter()).zip(k.iter()) {
            *pi = yi + h * ki;
        }
        f.rhs(t + h, p, k);
        for ((yi, pi), ki) in y.iter_mut().zip(p.iter()).zip(k.iter()) {
            *yi = 0.5 * ((*yi + pi) + h * ki);
        }
    }
}

/// The midpoint rule updated from its stage value instead of from `y`:
/// `m = y + (h/2) k1`, `k2 = f(t + h/2, m)`, `y <- m + (h k2 - (h/2) k1)`
/// (equal to `y + h k2`).
#[derive(Default)]
pub struct MidpointFromStage {
    k1: Vec<f64>,
    k2: Vec<f64>,
    m: Vec<f64>,
}

impl Stepper for MidpointFromStage {
    fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
        let n = y.len();
        let (k1, k2, m) = (
            sized(&mut self.k1, n),
            sized(&mut self.k2, n),
            sized(&mut self.m, n),
        );
        let hh = 0.5 * h;
        f.rhs(t, y, k1);
        for ((mi, yi), ki) in m.iter_mut().zip(y.iter()).zip(k1.iter()) {
            *mi = yi + hh * ki;
        }
        f.rhs(t + hh, m, k2);
        for (i, yi) in y.iter_mut().enumerate() {
            *yi = m[i] + (h * k2[i] - hh * k1[i]);
        }
    }
}

/// Stage slopes of classical RK4 in one flat buffer `[k1 | k2 | k3 | k4]`,
/// stage values `y + (h/2) k` with `h/2` computed once; `combine` forms the
/// result. The two RK4 rewrites below differ only there.
#[derive(Default)]
struct Rk4Flat {
    k: Vec<f64>,
    stage: Vec<f64>,
}

impl Rk4Flat {
    /// The four slopes at `(t, y)` with step `h`, as `(k1, k2, k3, k4)`.
    fn slopes<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &[f64], h: f64) -> [&[f64]; 4] {
        let n = y.len();
        self.k.resize(4 * n, 0.0);
        let stage = sized(&mut self.stage, n);
        let hh = 0.5 * h;
        let (k1, rest) = self.k.split_at_mut(n);
        let (k2, rest) = rest.split_at_mut(n);
        let (k3, k4) = rest.split_at_mut(n);
        f.rhs(t, y, k1);
        stage_slope(f, t + hh, y, hh, k1, stage, k2);
        stage_slope(f, t + hh, y, hh, k2, stage, k3);
        stage_slope(f, t + h, y, h, k3, stage, k4);
        let k = &self.k;
        [&k[..n], &k[n..2 * n], &k[2 * n..3 * n], &k[3 * n..]]
    }
}

/// `next = f(t, y + c prev)`, the stage value formed in `stage`.
fn stage_slope<F: Rhs + ?Sized>(
    f: &F,
    t: f64,
    y: &[f64],
    c: f64,
    prev: &[f64],
    stage: &mut [f64],
    next: &mut [f64],
) {
    for ((s, yi), ki) in stage.iter_mut().zip(y).zip(prev) {
        *s = yi + c * ki;
    }
    f.rhs(t, stage, next);
}

/// Classical RK4 with the weights split into step-scaled terms added one by
/// one: `y <- y + (h/6) k1 + (h/3) k2 + (h/3) k3 + (h/6) k4`.
#[derive(Default)]
pub struct Rk4SplitWeights {
    rk: Rk4Flat,
}

impl Stepper for Rk4SplitWeights {
    fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
        let [k1, k2, k3, k4] = self.rk.slopes(f, t, y, h);
        let (h6, h3) = (h / 6.0, h / 3.0);
        for (i, yi) in y.iter_mut().enumerate() {
            *yi = *yi + h6 * k1[i] + h3 * k2[i] + h3 * k3[i] + h6 * k4[i];
        }
    }
}

/// Classical RK4 with the weights regrouped:
/// `y <- y + h/6 (k1 + k4 + 2 (k2 + k3))`.
#[derive(Default)]
pub struct Rk4Regrouped {
    rk: Rk4Flat,
}

impl Stepper for Rk4Regrouped {
    fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
        let [k1, k2, k3, k4] = self.rk.slopes(f, t, y, h);
        let h6 = h / 6.0;
        for (i, yi) in y.iter_mut().enumerate() {
            *yi += h6 * (k1[i] + k4[i] + 2.0 * (k2[i] + k3[i]));
        }
    }
}

/// Stormer-Verlet (kick-drift-kick, as [`Leapfrog`]) with every update
/// fused: `v <- fma(h/2, a, v)`, `q <- fma(h, v, q)`.
#[derive(Default)]
pub struct LeapfrogFused {
    a: Vec<f64>,
}

impl SplitStepper for LeapfrogFused {
    fn step<A: Accel + ?Sized>(&mut self, f: &A, t: f64, q: &mut [f64], v: &mut [f64], h: f64) {
        let a = sized(&mut self.a, q.len());
        let half = 0.5 * h;
        f.accel(t, q, a);
        for (vi, ai) in v.iter_mut().zip(a.iter()) {
            *vi = half.mul_add(*ai, *vi);
        }
        for (qi, vi) in q.iter_mut().zip(v.iter()) {
            *qi = h.mul_add(*vi, *qi);
        }
        f.accel(t + h, q, a);
        for (vi, ai) in v.iter_mut().zip(a.iter()) {
            *vi = half.mul_add(*ai, *vi);
        }
    }
}

/// Stormer-Verlet in the "velocity Verlet" textbook form (Hairer, Lubich
/// and Wanner, Geometric Numerical Integration, I.1.4, (1.17)):
/// `q <- q + h v + (h^2/2) a0`, `a1 = a(t + h, q)`, `v <- v + (h/2)(a0 + a1)`.
/// The same map as kick-drift-kick (substitute the half-step velocity), two
/// force evaluations per step, other roundings.
#[derive(Default)]
pub struct LeapfrogTaylor {
    a0: Vec<f64>,
    a1: Vec<f64>,
}

impl SplitStepper for LeapfrogTaylor {
    fn step<A: Accel + ?Sized>(&mut self, f: &A, t: f64, q: &mut [f64], v: &mut [f64], h: f64) {
        let n = q.len();
        let (a0, a1) = (sized(&mut self.a0, n), sized(&mut self.a1, n));
        let half = 0.5 * h;
        let hh2 = half * h;
        f.accel(t, q, a0);
        for ((qi, vi), ai) in q.iter_mut().zip(v.iter()).zip(a0.iter()) {
            *qi += h * vi + hh2 * ai;
        }
        f.accel(t + h, q, a1);
        for ((vi, x), y) in v.iter_mut().zip(a0.iter()).zip(a1.iter()) {
            *vi += half * (x + y);
        }
    }
}

/// The triple jump over [`LeapfrogFused`].
pub type TripleJumpFused = TripleJumpOf<LeapfrogFused>;

/// The triple jump with the middle weight taken as the remainder of the
/// consistency condition, `w0 = 1 - 2 w1` (Yoshida 1990; equal to
/// `-2^(1/3)/(2 - 2^(1/3))`, one ulp apart in f64): substeps `h1 = w1 h`,
/// `h0 = (1 - 2 w1) h`, starting at `t`, `t + h1`, `t + (h1 + h0)`.
#[derive(Default)]
pub struct TripleJumpRemainder {
    inner: Leapfrog,
}

impl SplitStepper for TripleJumpRemainder {
    fn step<A: Accel + ?Sized>(&mut self, f: &A, t: f64, q: &mut [f64], v: &mut [f64], h: f64) {
        let (_, w1) = TripleJump::weights();
        let h1 = w1 * h;
        let h0 = (1.0 - 2.0 * w1) * h;
        self.inner.step(f, t, q, v, h1);
        self.inner.step(f, t + h1, q, v, h0);
        self.inner.step(f, t + (h1 + h0), q, v, h1);
    }
}

/// Dormand-Prince 5(4) with all stage slopes in one flat buffer
/// `[k1 | ... | k7]` and each stage value formed as
/// `y + h (sum_j a_ij k_j)`: the sum first, scaled by `h` once (the engine
/// scales every coefficient by `h`). FSAL, error estimate and controller as
/// [`DormandPrince`].
#[derive(Default)]
pub struct Dp5FlatPair {
    k: Vec<f64>,
    y_new: Vec<f64>,
    n: usize,
}

impl EmbeddedPair for Dp5FlatPair {
    const CONTROL: super::adaptive::StepControl = DORMAND_PRINCE_CONTROL;
    fn resize(&mut self, n: usize) {
        self.n = n;
        self.k.resize(7 * n, 0.0);
        self.y_new.resize(n, 0.0);
    }
    fn k1(&mut self) -> &mut [f64] {
        &mut self.k[..self.n]
    }
    fn attempt<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &[f64], h: f64) {
        let tab = DormandPrinceTableau::TABLEAU;
        let n = self.n;
        for i in 1..7 {
            let (done, rest) = self.k.split_at_mut(i * n);
            for m in 0..n {
                let mut sum = 0.0;
                for (j, aij) in tab.a[i][..i].iter().enumerate() {
                    sum += aij * done[j * n + m];
                }
                self.y_new[m] = y[m] + h * sum;
            }
            // Row 7 is b: after the last pass y_new is the new state.
            f.rhs(t + tab.c[i] * h, &self.y_new, &mut rest[..n]);
        }
    }
    fn error_norm(&self, y: &[f64], h: f64, tol: Tol) -> f64 {
        let (k, n) = (&self.k, self.n);
        tol.estimate(y, &self.y_new, h, &DORMAND_PRINCE_E, |i, m| k[i * n + m])
    }
    fn accept<F: Rhs + ?Sized>(&mut self, _f: &F, _t_new: f64, y: &mut [f64]) {
        y.copy_from_slice(&self.y_new);
        let n = self.n;
        self.k.copy_within(6 * n.., 0);
    }
}

/// Dormand-Prince 5(4) over [`Dp5FlatPair`].
pub type DormandPrinceFlat = Adaptive<Dp5FlatPair>;

// ---------------------------------------------------------------------------
// The table.

/// Runs a variant from the problem's initial state at `t0` to `t1` under
/// `control` (fixed-step methods support `Control::Steps` only), with the
/// right-hand side counting its evaluations; returns the counts and the
/// evaluations.
pub type Run = fn(&dyn Problem, f64, Control, &mut [f64]) -> Result<(Counts, u64), IntegrateError>;

/// One way of writing a method.
pub struct Variant {
    /// Short name, unique within its family.
    pub name: &'static str,
    /// Registers this variant with a harness under the given stepper name.
    pub register: fn(Harness, &str) -> Harness,
    /// Runs it directly (no harness).
    pub run: Run,
}

/// A method and its rewrites; the first variant is the original.
pub struct Family {
    /// The method.
    pub name: &'static str,
    /// Its published order.
    pub order: f64,
    /// The original first, then the rewrites.
    pub variants: Vec<Variant>,
}

/// Drives `method` over `[t0, t1]` on `p`, from `y` (its initial state).
fn drive<M: Method>(
    mut method: M,
    p: &dyn Problem,
    t1: f64,
    control: Control,
    y: &mut [f64],
) -> Result<(Counts, u64), IntegrateError> {
    let f = Counted::new(p);
    let t0 = p.t0();
    let counts = match control {
        Control::Steps(n) if n > 0 => {
            let h = (t1 - t0) / n as f64;
            let rejected = method.advance(&f, t0, h, 0, n, y)?;
            Counts { steps: n, rejected }
        }
        Control::Tolerance { rtol, atol } if rtol == atol => {
            method.adaptive(&f, t0, t1, y, rtol)?
        }
        _ => return Err(IntegrateError::Unsupported(control)),
    };
    Ok((counts, f.evals()))
}

fn fixed<S: Stepper + Default + 'static>() -> Variant {
    Variant {
        name: "",
        register: |h, n| h.stepper(n, S::default),
        run: |p, t1, c, y| drive(Fixed(S::default()), p, t1, c, y),
    }
}

fn split<S: SplitStepper + Default + 'static>() -> Variant {
    Variant {
        name: "",
        register: |h, n| h.split_stepper(n, S::default),
        run: |p, t1, c, y| drive(Split(S::default()), p, t1, c, y),
    }
}

fn whole<I: Integrator + Default + 'static>() -> Variant {
    Variant {
        name: "",
        register: |h, n| h.integrator(n, I::default),
        run: |p, t1, c, y| drive(Whole(I::default()), p, t1, c, y),
    }
}

fn named(name: &'static str, v: Variant) -> Variant {
    Variant { name, ..v }
}

/// Every test method with its accuracy-neutral rewrites.
pub fn families() -> Vec<Family> {
    let family = |name, order, variants| Family {
        name,
        order,
        variants,
    };
    vec![
        family(
            "euler",
            1.0,
            vec![
                named("tableau", fixed::<super::steppers::Euler>()),
                named("fused", fixed::<EulerFused>()),
                named("halves", fixed::<EulerHalves>()),
            ],
        ),
        family(
            "heun",
            2.0,
            vec![
                named("tableau", fixed::<Heun>()),
                named("fused", fixed::<HeunFused>()),
                named("average", fixed::<HeunAverage>()),
            ],
        ),
        family(
            "midpoint",
            2.0,
            vec![
                named("tableau", fixed::<Midpoint>()),
                named("fused", fixed::<MidpointFused>()),
                named("from-stage", fixed::<MidpointFromStage>()),
            ],
        ),
        family(
            "rk4",
            4.0,
            vec![
                named("tableau", fixed::<Rk4>()),
                named("fused", fixed::<Rk4Fused>()),
                named("split-weights", fixed::<Rk4SplitWeights>()),
                named("regrouped", fixed::<Rk4Regrouped>()),
            ],
        ),
        family(
            "leapfrog",
            2.0,
            vec![
                named("kick-drift-kick", split::<Leapfrog>()),
                named("fused", split::<LeapfrogFused>()),
                named("taylor", split::<LeapfrogTaylor>()),
            ],
        ),
        family(
            "triple-jump",
            4.0,
            vec![
                named("weights", split::<TripleJump>()),
                named("fused", split::<TripleJumpFused>()),
                named("remainder", split::<TripleJumpRemainder>()),
            ],
        ),
        family(
            "dormand-prince",
            5.0,
            vec![
                named("tableau", whole::<DormandPrince>()),
                named("fused", whole::<DormandPrinceFused>()),
                named("flat", whole::<DormandPrinceFlat>()),
            ],
        ),
        family(
            "dop853",
            8.0,
            vec![
                named("tableau", whole::<Dop853>()),
                named("fused", whole::<Dop853Fused>()),
                named("halved", whole::<Dop853Halved>()),
            ],
        ),
    ]
}

/// The planted bugs of tests/common/steppers.rs that imitate a family's
/// method, each registered like its variants: a suite with teeth fails
/// every one of them against the family's baseline.
pub fn planted(family: &str) -> Vec<Variant> {
    use super::steppers::{Rk4F32, Rk4WrongCoef, Rk4WrongTime};
    match family {
        "rk4" => vec![
            named("planted: a32 = 0.49", fixed::<Rk4WrongCoef>()),
            named("planted: c3 = 0", fixed::<Rk4WrongTime>()),
            named("planted: f32 stages", fixed::<Rk4F32>()),
        ],
        _ => Vec::new(),
    }
}
