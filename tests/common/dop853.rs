//! The explicit Runge-Kutta pair of Dormand and Prince of order 8(5,3), the
//! method of Hairer's code DOP853 (Hairer, Norsett and Wanner I, 2nd ed.,
//! section II.10), as an adaptive [`drift::Integrator`] on the shared
//! driver of adaptive.rs: its coefficients, the combined error estimate and
//! the controller constants.
//!
//! The coefficients are the 30-digit decimals of the DOP853 code, cross-read
//! from the crate `ode_solvers` 0.6.2 (`src/butcher_tableau.rs`, module
//! `dopri853`; read only, not a dependency). One departure from that file:
//! it stores `c_12 = 0`, while the method has `c_12 = 1` (the row sum of
//! `a_12j`, and the DOP853 code evaluates the 12th stage at `x + h`); we use
//! `c_12 = 1`. tests/steppers.rs verifies every coefficient against the
//! order conditions of all rooted trees up to order 8.

use drift::Rhs;

use super::adaptive::{Adaptive, EmbeddedPair, StepControl, Tol};
use super::steppers::{weights_minus, Axpy, Coefficients, Exact, ExplicitRk, Plain, Tableau};

/// The 12 stages and 8th-order weights of DOP853 (Hairer, Norsett and
/// Wanner I, II.10; coefficients of the DOP853 code as given in
/// `ode_solvers` 0.6.2).
pub struct Dop853Tableau;

#[allow(clippy::excessive_precision)] // the published digits, kept verbatim
const A: [[f64; 12]; 12] = [
    [0.0; 12],
    [
        5.26001519587677318785587544488E-2,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        1.97250569845378994544595329183E-2,
        5.91751709536136983633785987549E-2,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        2.95875854768068491816892993775E-2,
        0.0,
        8.87627564304205475450678981324E-2,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        2.41365134159266685502369798665E-1,
        0.0,
        -8.84549479328286085344864962717E-1,
        9.24834003261792003115737966543E-1,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        3.7037037037037037037037037037E-2,
        0.0,
        0.0,
        1.70828608729473871279604482173E-1,
        1.25467687566822425016691814123E-1,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        3.7109375E-2,
        0.0,
        0.0,
        1.70252211019544039314978060272E-1,
        6.02165389804559606850219397283E-2,
        -1.7578125E-2,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        3.70920001185047927108779319836E-2,
        0.0,
        0.0,
        1.70383925712239993810214054705E-1,
        1.07262030446373284651809199168E-1,
        -1.53194377486244017527936158236E-2,
        8.27378916381402288758473766002E-3,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        6.24110958716075717114429577812E-1,
        0.0,
        0.0,
        -3.36089262944694129406857109825E0,
        -8.68219346841726006818189891453E-1,
        2.75920996994467083049415600797E1,
        2.01540675504778934086186788979E1,
        -4.34898841810699588477366255144E1,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        4.77662536438264365890433908527E-1,
        0.0,
        0.0,
        -2.48811461997166764192642586468E0,
        -5.90290826836842996371446475743E-1,
        2.12300514481811942347288949897E1,
        1.52792336328824235832596922938E1,
        -3.32882109689848629194453265587E1,
        -2.03312017085086261358222928593E-2,
        0.0,
        0.0,
        0.0,
    ],
    [
        -9.3714243008598732571704021658E-1,
        0.0,
        0.0,
        5.18637242884406370830023853209E0,
        1.09143734899672957818500254654E0,
        -8.14978701074692612513997267357E0,
        -1.85200656599969598641566180701E1,
        2.27394870993505042818970056734E1,
        2.49360555267965238987089396762E0,
        -3.0467644718982195003823669022E0,
        0.0,
        0.0,
    ],
    [
        2.27331014751653820792359768449E0,
        0.0,
        0.0,
        -1.05344954667372501984066689879E1,
        -2.00087205822486249909675718444E0,
        -1.79589318631187989172765950534E1,
        2.79488845294199600508499808837E1,
        -2.85899827713502369474065508674E0,
        -8.87285693353062954433549289258E0,
        1.23605671757943030647266201528E1,
        6.43392746015763530355970484046E-1,
        0.0,
    ],
];

/// 8th-order weights.
#[allow(clippy::excessive_precision)]
const B: [f64; 12] = [
    5.42937341165687622380535766363E-2,
    0.0,
    0.0,
    0.0,
    0.0,
    4.45031289275240888144113950566E0,
    1.89151789931450038304281599044E0,
    -5.8012039600105847814672114227E0,
    3.1116436695781989440891606237E-1,
    -1.52160949662516078556178806805E-1,
    2.01365400804030348374776537501E-1,
    4.47106157277725905176885569043E-2,
];

/// Nodes; `c_12 = 1` (see the module comment).
#[allow(clippy::excessive_precision)]
const C: [f64; 12] = [
    0.0,
    0.526001519587677318785587544488E-01,
    0.789002279381515978178381316732E-01,
    0.118350341907227396726757197510E+00,
    0.281649658092772603273242802490E+00,
    0.333333333333333333333333333333E+00,
    0.25E+00,
    0.307692307692307692307692307692E+00,
    0.651282051282051282051282051282E+00,
    0.6E+00,
    0.857142857142857142857142857142E+00,
    1.0,
];

impl Coefficients<12> for Dop853Tableau {
    const TABLEAU: Tableau<12> = Tableau {
        a: A,
        b: B,
        c: C,
        claimed_order: 8,
    };
}

/// Weights `b - b^(5)` of the 5th-order error estimate (the `ER`
/// coefficients of the DOP853 code; `ode_solvers` 0.6.2, `dopri853::E`).
#[allow(clippy::excessive_precision)]
pub const DOP853_E5: [f64; 12] = [
    0.1312004499419488073250102996E-01,
    0.0,
    0.0,
    0.0,
    0.0,
    -0.1225156446376204440720569753E+01,
    -0.4957589496572501915214079952E+00,
    0.1664377182454986536961530415E+01,
    -0.3503288487499736816886487290E+00,
    0.3341791187130174790297318841E+00,
    0.8192320648511571246570742613E-01,
    -0.2235530786388629525884427845E-01,
];

/// The 3rd-order embedded weights `bhh` of the DOP853 code, on stages 1, 9
/// and 12 (`ode_solvers` 0.6.2, `dopri853::BHH`), spread over all stages.
#[allow(clippy::excessive_precision)]
pub const DOP853_B3: [f64; 12] = [
    0.244094488188976377952755905512E+00,
    0.0,
    0.0,
    0.0,
    0.0,
    0.0,
    0.0,
    0.0,
    0.733846688281611857341361741547E+00,
    0.0,
    0.0,
    0.220588235294117647058823529412E-01,
];

/// Weights `b - bhh` of the 3rd-order error estimate.
pub const DOP853_E3: [f64; 12] = weights_minus(B, DOP853_B3);

/// The 5th-order weights `b^(5) = b - e5` (for the order-condition test).
pub const DOP853_B5: [f64; 12] = weights_minus(B, DOP853_E5);

/// Controller constants of the DOP853 code (Hairer, Norsett and Wanner I,
/// II.10 and the code's defaults): safety 0.9, step-size factors in
/// [1/3 (fac1 = 0.333), 6 (fac2 = 6)], exponent 1/8 (the code's `expo1`
/// with its default beta = 0, i.e. no PI term).
pub const DOP853_CONTROL: StepControl = StepControl {
    safety: 0.9,
    fac_min: 0.333,
    fac_max: 6.0,
    exponent: 1.0 / 8.0,
};

/// DOP853 as an [`EmbeddedPair`] on the tableau engine: 11 new stages per
/// attempt (`k_1` is the previous step's end point), the 8th-order result
/// propagated, and after acceptance one evaluation `f(t + h, y_new)`,
/// which is the next step's `k_1` (the DOP853 code's 13th evaluation).
/// `A` forms the weighted additions ([`Plain`] in the original).
pub struct Dop853Pair<A = Plain> {
    rk: ExplicitRk<12, Dop853Tableau, Exact, A>,
    y_new: Vec<f64>,
}

impl<A> Default for Dop853Pair<A> {
    fn default() -> Self {
        Dop853Pair {
            rk: ExplicitRk::default(),
            y_new: Vec::new(),
        }
    }
}

impl<A: Axpy> EmbeddedPair for Dop853Pair<A> {
    const CONTROL: StepControl = DOP853_CONTROL;
    fn resize(&mut self, n: usize) {
        self.rk.ensure(n);
        self.y_new.resize(n, 0.0);
    }
    fn k1(&mut self) -> &mut [f64] {
        &mut self.rk.k[0]
    }
    fn attempt<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &[f64], h: f64) {
        self.rk.stages(f, t, y, h, 1);
        self.y_new.copy_from_slice(y);
        self.rk.combine_in_place(&mut self.y_new, h, &B);
    }
    /// The combined estimate of the DOP853 code (Hairer, Norsett and Wanner
    /// I, II.10): with `r5`, `r3` the scaled RMS norms of the 5th- and
    /// 3rd-order estimates, `err = r5^2 / sqrt(r5^2 + 0.01 r3^2)` (the
    /// code's `err5^2 / sqrt(err5^2 + 0.01 err3^2)`, its sums written as
    /// means). Zero when both vanish; not finite when either is.
    fn error_norm(&self, y: &[f64], h: f64, tol: Tol) -> f64 {
        let k = &self.rk.k;
        let r5 = tol.estimate(y, &self.y_new, h, &DOP853_E5, |i, m| k[i][m]);
        let r3 = tol.estimate(y, &self.y_new, h, &DOP853_E3, |i, m| k[i][m]);
        let deno = r5 * r5 + 0.01 * r3 * r3;
        if !deno.is_finite() {
            f64::INFINITY
        } else if deno == 0.0 {
            0.0
        } else {
            r5 * r5 / deno.sqrt()
        }
    }
    fn accept<F: Rhs + ?Sized>(&mut self, f: &F, t_new: f64, y: &mut [f64]) {
        y.copy_from_slice(&self.y_new);
        f.rhs(t_new, y, &mut self.rk.k[0]);
    }
}

/// Adaptive DOP853 integrator (8th-order result, combined 5th/3rd-order
/// error estimate, controller [`DOP853_CONTROL`]); `Control::Steps(n)` is
/// `n` equal 8th-order steps. `Dop853::default()` or
/// `Dop853::with_max_steps(n)`.
pub type Dop853 = Adaptive<Dop853Pair>;
