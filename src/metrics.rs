//! Pure functions that turn measured errors into figures: digits, the order
//! fit over the asymptotic part of a ladder, the roundoff floor and plateaus,
//! the drift exponent of an invariant, and small helpers. Nothing here does IO
//! or runs a stepper.

/// Largest number of digits a measurement can report. An error of exactly
/// zero reads as this clamp (double precision cannot resolve more than about
/// 16 digits, so 17 means "no error seen at all").
pub const MAX_DIGITS: f64 = 17.0;

/// Rungs whose relative error exceeds 10 percent (fewer than 1 digit) are
/// pre-asymptotic and excluded from order fits (DESIGN.md, "Measurement").
pub const PRE_ASYMPTOTIC_DIGITS: f64 = 1.0;

/// A rung "stops improving" when its digits grow by less than this many per
/// decade of steps (a local order below 0.5). Common practice, no source: any
/// method worth measuring has order 1 or more.
pub const STALL_SLOPE: f64 = 0.5;

/// A stalled rung counts as the roundoff floor when its error is at most this
/// factor times `f64::EPSILON * steps` (linear accumulation of rounding, the
/// pessimistic bound; random-walk rounding gives its square root). Common
/// practice, no source: the factor leaves two decades for the conditioning
/// of the problem.
pub const FLOOR_FACTOR: f64 = 100.0;

/// Near the floor a slope below this fraction of the order seen so far
/// counts as the stall that marks the floor (the roll-off into rounding is
/// gradual: 3.5, 0.85, 0.66 for RK4). Common practice, no source.
pub const STALL_FRACTION: f64 = 0.5;

/// Rungs within this many digits of the floor are partly rounding and are
/// left out of the order fit. Common practice, no source.
pub const FLOOR_BAND: f64 = 2.0;

/// Local slopes (digits per decade of resolution between neighbouring
/// usable rungs) agree "within a band" when their spread, largest minus
/// smallest, is at most `max(ORDER_BAND, ORDER_BAND_RELATIVE * slope)`.
/// Common practice, no source: a method in its asymptotic range shows the
/// same slope rung after rung to a few hundredths, and a band of 0.1 keeps
/// a still-falling slope (4.35, 4.22, 4.14) out while letting last-bit
/// noise in.
pub const ORDER_BAND: f64 = 0.1;

/// The band grows with the order for high-order methods (see [`ORDER_BAND`]).
pub const ORDER_BAND_RELATIVE: f64 = 0.03;

/// Local slopes an asymptotic range needs at least (four rungs): with two,
/// a steady trend cannot be told from agreement. Common practice, no source.
pub const MIN_RANGE_SLOPES: usize = 3;

/// The least uncertainty an order reading is given, in orders: the
/// rounding of stored figures to 3 decimals alone moves a slope over one
/// doubling by up to 0.003 / log10(2). Common practice, no source.
pub const MIN_ORDER_UNCERTAINTY: f64 = 0.01;

/// The least uncertainty of a figure read at the roundoff floor, in
/// digits: equivalent orderings of the same arithmetic move the rounding
/// error of a run by a factor of 2 or so (measured on the neutral rewrites
/// of the test steppers; common practice, no source).
pub const FLOOR_NOISE: f64 = 0.3;

/// Digits of a relative error: `-log10(err)`, clamped to `[0, MAX_DIGITS]`.
/// An exact zero reads as [`MAX_DIGITS`]; a NaN or infinite error reads as 0.
///
/// ```
/// use drift::metrics::{digits, MAX_DIGITS};
/// assert!((digits(1e-6) - 6.0).abs() < 1e-12);
/// assert_eq!(digits(0.0), MAX_DIGITS);
/// assert_eq!(digits(5.0), 0.0);
/// assert_eq!(digits(f64::NAN), 0.0);
/// ```
pub fn digits(err: f64) -> f64 {
    if err.is_nan() || err.is_infinite() {
        return 0.0;
    }
    let err = err.abs();
    if err == 0.0 {
        return MAX_DIGITS;
    }
    (-err.log10()).clamp(0.0, MAX_DIGITS)
}

/// The digits of the roundoff bound for a run of `steps` steps, the level at
/// or above which a stalled rung is taken for the floor:
/// `digits(FLOOR_FACTOR * EPSILON * steps)`.
///
/// ```
/// let d = drift::metrics::rounding_digits(1_000_000);
/// assert!((d - 7.65).abs() < 0.01);
/// ```
pub fn rounding_digits(steps: u64) -> f64 {
    digits(FLOOR_FACTOR * f64::EPSILON * steps.max(1) as f64)
}

/// The digits of random-walk rounding over `steps` steps,
/// `digits(EPSILON * sqrt(steps))`: unbiased rounding errors add up like a
/// random walk (Brouwer, Astron. J. 46 (1937) 149; Henrici, Discrete
/// Variable Methods in ODEs, 1962), biased ones up to linearly. A figure
/// within [`FLOOR_BAND`] digits of this level is partly rounding, whether or
/// not the ladder has shown a stall yet.
///
/// ```
/// let d = drift::metrics::roundoff_digits(1_000_000);
/// assert!((d - 12.65).abs() < 0.01);
/// ```
pub fn roundoff_digits(steps: u64) -> f64 {
    digits(f64::EPSILON * (steps.max(1) as f64).sqrt())
}

/// The uncertainty of a figure of `d` digits that rounding decides, over a
/// run of `steps` steps: rounding accumulates somewhere between a random
/// walk (`EPSILON sqrt(N)`) and linear growth (`EPSILON N`) depending on its
/// bias, which equivalent orderings of the same arithmetic change; half
/// that band is `log10(N) / 4`, and at least [`FLOOR_NOISE`]. Digits beyond
/// the random-walk level ([`roundoff_digits`]) are a lucky cancellation and
/// count in full. (Higham, Accuracy and Stability of Numerical Algorithms,
/// 2nd ed., 2002, sections 2.8 and 3.1, on worst-case against statistical
/// accumulation; from memory.)
///
/// ```
/// use drift::metrics::{rounding_uncertainty, FLOOR_NOISE};
/// assert!((rounding_uncertainty(1_000_000, 10.0) - 1.5).abs() < 1e-12);
/// assert_eq!(rounding_uncertainty(10, 12.0), FLOOR_NOISE);
/// // 15.2 digits over 5000 steps: 1.4 beyond random-walk rounding (13.8).
/// assert!((rounding_uncertainty(5000, 15.2) - 1.7).abs() < 0.05);
/// ```
pub fn rounding_uncertainty(steps: u64, d: f64) -> f64 {
    let band = ((steps.max(1) as f64).log10() / 4.0).max(FLOOR_NOISE);
    let beyond = d - roundoff_digits(steps);
    band.max(beyond + FLOOR_NOISE)
}

/// Least-squares straight line through `(x, y)`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Line {
    /// Slope dy/dx.
    pub slope: f64,
    /// Value at x = 0.
    pub intercept: f64,
    /// Root-mean-square residual.
    pub residual: f64,
}

/// Fits a least-squares line; `None` with fewer than two points or when all
/// `x` coincide.
///
/// ```
/// let l = drift::metrics::fit_line(&[0.0, 1.0, 2.0], &[1.0, 3.0, 5.0]).unwrap();
/// assert!((l.slope - 2.0).abs() < 1e-12 && l.residual < 1e-12);
/// ```
pub fn fit_line(x: &[f64], y: &[f64]) -> Option<Line> {
    let n = x.len().min(y.len());
    if n < 2 {
        return None;
    }
    let nf = n as f64;
    let mx = x[..n].iter().sum::<f64>() / nf;
    let my = y[..n].iter().sum::<f64>() / nf;
    let sxx: f64 = x[..n].iter().map(|a| (a - mx) * (a - mx)).sum();
    if sxx <= 0.0 || !sxx.is_finite() {
        return None;
    }
    let sxy: f64 = x[..n]
        .iter()
        .zip(&y[..n])
        .map(|(a, b)| (a - mx) * (b - my))
        .sum();
    let slope = sxy / sxx;
    let intercept = my - slope * mx;
    let ss: f64 = x[..n]
        .iter()
        .zip(&y[..n])
        .map(|(a, b)| (b - intercept - slope * a).powi(2))
        .sum();
    Some(Line {
        slope,
        intercept,
        residual: (ss / nf).sqrt(),
    })
}

/// Least-squares fit of `y = p x + b + c 10^(-x)`, returning `(p, rms
/// residual)`: the order with the leading correction of the error expansion
/// taken out. With `x = log10(N)` the last term is `c h` for step size
/// `h ~ 1/N`: an error `C h^p (1 + a h + ...)` has digits
/// `p log10 N - log10 C - a h / ln 10 + ...`, so the fitted `p` is the
/// asymptotic order rather than an average of the pre-asymptotic local
/// slopes (Richardson's idea applied to the order estimate). `None` with
/// fewer than four points or a singular system.
///
/// ```
/// // digits of e = h^4 (1 + 3 h) at N = 8 .. 256
/// let x: Vec<f64> = (3..9).map(|k| (2f64.powi(k)).log10()).collect();
/// let y: Vec<f64> = x.iter().map(|x| { let h = 10f64.powf(-x); -(h.powi(4) * (1.0 + 3.0 * h)).log10() }).collect();
/// let (p, _) = drift::metrics::fit_with_correction(&x, &y).unwrap();
/// assert!((p - 4.0).abs() < 0.01, "{p}");
/// assert!((drift::metrics::fit_line(&x, &y).unwrap().slope - 4.0).abs() > 0.05);
/// ```
pub fn fit_with_correction(x: &[f64], y: &[f64]) -> Option<(f64, f64)> {
    let n = x.len().min(y.len());
    if n < 4 {
        return None;
    }
    // Normal equations of the three basis functions x, 1, 10^-x.
    let basis = |xi: f64| [xi, 1.0, 10f64.powf(-xi)];
    let mut a = [[0.0f64; 4]; 3];
    for i in 0..n {
        let f = basis(x[i]);
        for r in 0..3 {
            for c in 0..3 {
                a[r][c] += f[r] * f[c];
            }
            a[r][3] += f[r] * y[i];
        }
    }
    // Gaussian elimination with partial pivoting on the 3 x 4 system.
    for col in 0..3 {
        let piv = (col..3).max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))?;
        a.swap(col, piv);
        let d = a[col][col];
        if d.abs() < 1e-300 || !d.is_finite() {
            return None;
        }
        let pivot_row = a[col];
        for (r, row) in a.iter_mut().enumerate() {
            if r != col {
                let m = row[col] / d;
                for (v, p) in row.iter_mut().zip(pivot_row).skip(col) {
                    *v -= m * p;
                }
            }
        }
    }
    let coef: Vec<f64> = (0..3).map(|r| a[r][3] / a[r][r]).collect();
    if coef.iter().any(|c| !c.is_finite()) {
        return None;
    }
    let ss: f64 = (0..n)
        .map(|i| {
            let f = basis(x[i]);
            (y[i] - coef[0] * f[0] - coef[1] * f[1] - coef[2] * f[2]).powi(2)
        })
        .sum();
    Some((coef[0], (ss / n as f64).sqrt()))
}

/// How one rung of a ladder was read.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum RungClass {
    /// Error above 10 percent, or coarser than the asymptotic range.
    #[serde(rename = "pre")]
    PreAsymptotic,
    /// In the range the order is read from.
    #[serde(rename = "fit")]
    Fitted,
    /// Within [`FLOOR_BAND`] of the floor.
    #[serde(rename = "near-floor")]
    NearFloor,
    /// Stopped improving at a level rounding explains.
    #[serde(rename = "floor")]
    Floor,
    /// Stopped improving far above what rounding explains, and stayed
    /// there: a consistency error. Counts as order 0 and stays in the fit.
    #[serde(rename = "plateau")]
    Plateau,
    /// A single rung that fell back while its neighbours on both sides
    /// agree on the trend (an isolated dip): noise, left out of the fit.
    #[serde(rename = "dip")]
    Dip,
    /// No figure at this rung (for example the finest rung of a
    /// self-convergence study).
    #[serde(rename = "none")]
    Missing,
}

/// What an order reading rests on.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum FitStatus {
    /// The local slopes agree within a band over at least
    /// [`MIN_RANGE_SLOPES`] slopes at the fine end: the asymptotic range.
    Asymptotic,
    /// The local slopes still move at the fine end: the order shown is the
    /// finest local slope, and the interval spans the last few slopes.
    Converging,
    /// A plateau far above rounding: the order counts as 0 from there.
    Plateau,
}

impl FitStatus {
    /// A lower-case name: `asymptotic`, `converging`, `plateau`.
    ///
    /// ```
    /// assert_eq!(drift::metrics::FitStatus::Converging.name(), "converging");
    /// ```
    pub fn name(self) -> &'static str {
        match self {
            FitStatus::Asymptotic => "asymptotic",
            FitStatus::Converging => "converging",
            FitStatus::Plateau => "plateau",
        }
    }
}

/// The order read off a series of rungs, with the interval it lies in.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct OrderFit {
    /// The order of convergence: digits per decade of resolution.
    pub order: f64,
    /// RMS residual of the straight line over the range, in digits.
    pub residual: f64,
    /// Index of the first rung of the range.
    pub first: usize,
    /// Index of the last rung of the range.
    pub last: usize,
    /// Lower end of the interval the order lies in.
    pub low: f64,
    /// Upper end of the interval the order lies in.
    pub high: f64,
    /// What the reading rests on.
    pub status: FitStatus,
}

impl OrderFit {
    /// Half the width of the interval: the reading's uncertainty.
    ///
    /// ```
    /// use drift::metrics::{FitStatus, OrderFit};
    /// let f = OrderFit { order: 4.0, residual: 0.0, first: 0, last: 5, low: 3.98, high: 4.02, status: FitStatus::Asymptotic };
    /// assert!((f.uncertainty() - 0.02).abs() < 1e-12);
    /// ```
    pub fn uncertainty(&self) -> f64 {
        ((self.high - self.low) / 2.0).max(0.0)
    }
}

/// The best accuracy a series reached.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Best {
    /// Most digits reached.
    pub digits: f64,
    /// At which rung.
    pub rung: usize,
    /// Its uncertainty in digits: 0 when the best rung is truncation error
    /// (stable under rewrites), at least [`FLOOR_NOISE`] when it lies at
    /// the roundoff floor (rounding decides it).
    pub uncertainty: f64,
}

/// Everything read off one series of digits over a ladder.
#[derive(Clone, Debug, PartialEq)]
pub struct SeriesAnalysis {
    /// One class per rung.
    pub classes: Vec<RungClass>,
    /// The order reading, when at least two rungs qualify.
    pub fit: Option<OrderFit>,
    /// The best digits reached anywhere on the ladder.
    pub best: Option<Best>,
    /// First rung of the roundoff floor, if the ladder reached it.
    pub floor_from: Option<usize>,
    /// First rung of a plateau far above rounding (a consistency error).
    pub plateau_from: Option<usize>,
}

/// Reads a series of digits over a ladder (DESIGN.md, "Measurement";
/// DEVELOPERS.md, "Numerical rules in the order reading").
///
/// `x[k]` is log10 of the resolution of rung k (steps per time unit, or
/// right-hand-side evaluations), `d[k]` its digits (`None` where unknown) and
/// `steps[k]` the total steps of its run, which sets the roundoff bound.
///
/// The rules, each in a function of its own:
/// 1. leading rungs below [`PRE_ASYMPTOTIC_DIGITS`] are
///    pre-asymptotic; a rung whose local slope falls below [`STALL_SLOPE`]
///    has stopped improving: the floor when its digits reach
///    [`rounding_digits`] of its run, an isolated dip when the next rung
///    recovers the trend, and a plateau otherwise.
/// 2. rungs within [`FLOOR_BAND`] digits of the floor level are near the
///    floor and left out.
/// 3. the order: with a plateau, the straight line through the usable and
///    plateau rungs (at least 0); else the asymptotic range is the longest
///    run of local slopes ending at the finest usable rung that agree within
///    [`ORDER_BAND`], and it needs [`MIN_RANGE_SLOPES`] slopes. The order is
///    then the fit with the leading correction of the error expansion
///    ([`fit_with_correction`]) over that range, its interval the larger of
///    half the slopes' spread, the correction's size, twice the slope's
///    standard error and [`MIN_ORDER_UNCERTAINTY`]. Without such a range the
///    reading is [`FitStatus::Converging`]: the finest local slope, its
///    interval continuing the trend of the last three slopes (falling: at
///    most the finest, by up to their spread; rising: at least; else their
///    range).
///
/// ```
/// use drift::metrics::{analyse_series, FitStatus, RungClass};
/// // A fourth-order method: 1.2 more digits per doubling, floor at 12.
/// let x: Vec<f64> = (0..11).map(|k| (16.0 * 2f64.powi(k)).log10()).collect();
/// let d: Vec<Option<f64>> = (0..11).map(|k| Some((2.0 + 1.204 * k as f64).min(12.0))).collect();
/// let steps: Vec<u64> = (0..11).map(|k| 1600 << k).collect();
/// let a = analyse_series(&x, &d, &steps);
/// let fit = a.fit.unwrap();
/// assert_eq!(fit.status, FitStatus::Asymptotic);
/// assert!((fit.order - 4.0).abs() < 0.01 && fit.low <= 4.0 && 4.0 <= fit.high);
/// // The slope halves into the floor at rung 9; rungs within 2 digits of
/// // it are near the floor.
/// assert_eq!(a.floor_from, Some(9));
/// assert_eq!(a.classes[10], RungClass::Floor);
/// assert_eq!(a.classes[8], RungClass::NearFloor);
/// assert!(a.plateau_from.is_none());
/// ```
pub fn analyse_series(x: &[f64], d: &[Option<f64>], steps: &[u64]) -> SeriesAnalysis {
    let n = x.len().min(d.len()).min(steps.len());
    let known: Vec<usize> = (0..n)
        .filter(|&k| d[k].is_some_and(f64::is_finite))
        .collect();
    let digit = |k: usize| d[k].unwrap_or(0.0);
    let mut classes = vec![RungClass::Missing; n];
    let (floor_from, plateau_from) = classify(x, &digit, steps, &known, &mut classes);
    let level = floor_from.map(|f| floor_level(&digit, &known, f));
    for &k in &known {
        let near_level = level.is_some_and(|l| digit(k) > l - FLOOR_BAND);
        let near_roundoff = digit(k) > roundoff_digits(steps[k]) - FLOOR_BAND;
        if classes[k] == RungClass::Fitted && (near_level || near_roundoff) {
            classes[k] = RungClass::NearFloor;
        }
    }
    let fit = match plateau_from {
        Some(_) => plateau_reading(x, &digit, &known, &classes),
        None => order_reading(x, &digit, &known, &mut classes),
    };
    if fit.is_none() {
        // No order read: no rung was fitted either.
        for c in classes.iter_mut().filter(|c| **c == RungClass::Fitted) {
            *c = RungClass::PreAsymptotic;
        }
    }
    SeriesAnalysis {
        best: best_of(&digit, steps, &known, &classes),
        classes,
        fit,
        floor_from,
        plateau_from,
    }
}

/// Local slope between rungs `j` and `k`: digits per decade of resolution.
fn slope(x: &[f64], digit: &impl Fn(usize) -> f64, j: usize, k: usize) -> Option<f64> {
    let dx = x[k] - x[j];
    (dx > 0.0 && dx.is_finite()).then(|| (digit(k) - digit(j)) / dx)
}

/// Rule 1: pre-asymptotic rungs, the floor, plateaus and isolated dips.
/// Every other known rung is classed fitted (usable). Returns the first
/// floor and the first plateau rung.
fn classify(
    x: &[f64],
    digit: &impl Fn(usize) -> f64,
    steps: &[u64],
    known: &[usize],
    classes: &mut [RungClass],
) -> (Option<usize>, Option<usize>) {
    let (mut floor_from, mut plateau_from) = (None, None);
    let mut slopes: Vec<f64> = Vec::new();
    let mut started = false;
    let mut prev: Option<usize> = None;
    for (i, &k) in known.iter().enumerate() {
        if floor_from.is_some() {
            classes[k] = RungClass::Floor;
            continue;
        }
        if !started && digit(k) < PRE_ASYMPTOTIC_DIGITS {
            classes[k] = RungClass::PreAsymptotic;
            prev = Some(k);
            continue;
        }
        started = true;
        let s = prev.and_then(|j| slope(x, digit, j, k));
        // Near rounding level the slope rolls off gradually: a slope below
        // half the order so far already marks the floor there.
        let floor_stall =
            s.is_some_and(|s| s < STALL_SLOPE.max(STALL_FRACTION * order_so_far(&slopes)));
        if floor_stall && digit(k) >= rounding_digits(steps[k]) {
            floor_from = Some(k);
            classes[k] = RungClass::Floor;
            continue;
        }
        if let Some(s) = s.filter(|_| classes_fitted(plateau_from)) {
            slopes.push(s);
        }
        if !s.is_some_and(|s| s < STALL_SLOPE) {
            classes[k] = if plateau_from.is_some() {
                RungClass::Plateau
            } else {
                RungClass::Fitted
            };
            prev = Some(k);
            continue;
        }
        // A dip: the next rung improves on both this one and the rung
        // before it, so the trend never stopped.
        let recovers = known.get(i + 1).is_some_and(|&next| {
            let up = |j: usize| slope(x, digit, j, next).is_some_and(|s| s >= STALL_SLOPE);
            up(k) && prev.is_some_and(up)
        });
        if recovers && plateau_from.is_none() {
            classes[k] = RungClass::Dip;
            continue;
        }
        plateau_from.get_or_insert(k);
        classes[k] = RungClass::Plateau;
        prev = Some(k);
    }
    (floor_from, plateau_from)
}

/// The order shown so far, for the floor's roll-off: the median of the
/// local slopes seen, or 0 before two of them.
fn order_so_far(slopes: &[f64]) -> f64 {
    if slopes.len() < 2 {
        return 0.0;
    }
    let mut v = slopes.to_vec();
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// Whether the rungs so far are still usable (no plateau yet).
fn classes_fitted(plateau_from: Option<usize>) -> bool {
    plateau_from.is_none()
}

/// The floor level: the most digits on the floor.
fn floor_level(digit: &impl Fn(usize) -> f64, known: &[usize], floor_from: usize) -> f64 {
    known
        .iter()
        .filter(|&&k| k >= floor_from)
        .map(|&k| digit(k))
        .fold(f64::MIN, f64::max)
}

/// The best digits and their uncertainty: when the best rung lies at or
/// near the floor, the larger of [`rounding_uncertainty`] of its run and
/// half the spread between it and the floor rungs; 0 when truncation error
/// decides it.
fn best_of(
    digit: &impl Fn(usize) -> f64,
    steps: &[u64],
    known: &[usize],
    classes: &[RungClass],
) -> Option<Best> {
    let &rung = known
        .iter()
        .fold(None, |acc: Option<&usize>, k| match acc {
            Some(a) if digit(*a) >= digit(*k) => Some(a),
            _ => Some(k),
        })?;
    let uncertainty = if matches!(classes[rung], RungClass::Floor | RungClass::NearFloor) {
        let lowest = known
            .iter()
            .filter(|&&k| classes[k] == RungClass::Floor)
            .map(|&k| digit(k))
            .fold(digit(rung), f64::min);
        ((digit(rung) - lowest) / 2.0).max(rounding_uncertainty(steps[rung], digit(rung)))
    } else {
        0.0
    };
    Some(Best {
        digits: digit(rung),
        rung,
        uncertainty,
    })
}

/// Straight line through rungs `idx`.
fn line_through(x: &[f64], digit: &impl Fn(usize) -> f64, idx: &[usize]) -> Option<Line> {
    let xs: Vec<f64> = idx.iter().map(|&k| x[k]).collect();
    let ys: Vec<f64> = idx.iter().map(|&k| digit(k)).collect();
    fit_line(&xs, &ys)
}

/// Rule 3 with a plateau: the line through the usable and plateau rungs,
/// read as at least 0 (a plateau counts as order 0).
fn plateau_reading(
    x: &[f64],
    digit: &impl Fn(usize) -> f64,
    known: &[usize],
    classes: &[RungClass],
) -> Option<OrderFit> {
    let used: Vec<usize> = known
        .iter()
        .copied()
        .filter(|&k| matches!(classes[k], RungClass::Fitted | RungClass::Plateau))
        .collect();
    let line = line_through(x, digit, &used)?;
    let order = line.slope.max(0.0);
    Some(OrderFit {
        order,
        residual: line.residual,
        first: used[0],
        last: used[used.len() - 1],
        low: order,
        high: order,
        status: FitStatus::Plateau,
    })
}

/// The band local slopes around `p` must agree within.
fn band(p: f64) -> f64 {
    ORDER_BAND.max(ORDER_BAND_RELATIVE * p.abs())
}

/// The asymptotic run of local slopes, as `(first rung, last rung, least
/// slope, largest slope)` with rungs counted in the usable ones: the longest
/// run ending at the finest slope whose spread stays within the band.
fn asymptotic_run(slopes: &[f64]) -> (usize, usize, f64, f64) {
    let e = slopes.len() - 1;
    let (mut lo, mut hi, mut b) = (slopes[e], slopes[e], e);
    while b > 0 {
        let s = slopes[b - 1];
        let (l, h) = (lo.min(s), hi.max(s));
        if h - l > band((l + h) / 2.0) {
            break;
        }
        (lo, hi, b) = (l, h, b - 1);
    }
    (b, e + 1, lo, hi)
}

/// Rule 3 without a plateau: the asymptotic range at the fine end, or a
/// converging reading. Usable rungs coarser than an asymptotic range are
/// reclassed pre-asymptotic.
fn order_reading(
    x: &[f64],
    digit: &impl Fn(usize) -> f64,
    known: &[usize],
    classes: &mut [RungClass],
) -> Option<OrderFit> {
    let used: Vec<usize> = known
        .iter()
        .copied()
        .filter(|&k| classes[k] == RungClass::Fitted)
        .collect();
    let slopes: Vec<f64> = used
        .windows(2)
        .map(|w| slope(x, digit, w[0], w[1]))
        .collect::<Option<_>>()?;
    let last_slope = *slopes.last()?;
    let (start, end, lo, hi) = asymptotic_run(&slopes);
    if end - start < MIN_RANGE_SLOPES {
        let (low, high) = converging_interval(&slopes[slopes.len().saturating_sub(3)..]);
        let all = line_through(x, digit, &used)?;
        return Some(OrderFit {
            order: last_slope,
            residual: all.residual,
            first: used[0],
            last: used[used.len() - 1],
            low,
            high,
            status: FitStatus::Converging,
        });
    }
    let range = &used[start..=end];
    let line = line_through(x, digit, range)?;
    for &k in &used[..start] {
        classes[k] = RungClass::PreAsymptotic;
    }
    let xs: Vec<f64> = range.iter().map(|&k| x[k]).collect();
    let ys: Vec<f64> = range.iter().map(|&k| digit(k)).collect();
    // The correction term is trusted only while it stays inside the band.
    let corrected = fit_with_correction(&xs, &ys)
        .map(|(p, _)| p)
        .filter(|p| p.is_finite() && (p - line.slope).abs() <= band(line.slope));
    let order = corrected.unwrap_or(line.slope);
    let u = [
        (hi - lo) / 2.0,
        (order - line.slope).abs(),
        2.0 * slope_standard_error(&xs, &ys, &line),
        MIN_ORDER_UNCERTAINTY,
    ]
    .into_iter()
    .fold(0.0, f64::max);
    Some(OrderFit {
        order,
        residual: line.residual,
        first: range[0],
        last: range[range.len() - 1],
        low: order - u,
        high: order + u,
        status: FitStatus::Asymptotic,
    })
}

/// The interval of a converging reading from its last local slopes: a
/// monotone trend goes on the way it goes (falling slopes: the order is at
/// most the finest one, by up to the spread; rising: at least), any other
/// tail spans its slopes. Common practice, no source.
fn converging_interval(tail: &[f64]) -> (f64, f64) {
    let (lo, hi) = tail
        .iter()
        .fold((f64::MAX, f64::MIN), |(l, h), &s| (l.min(s), h.max(s)));
    let finest = tail.last().copied().unwrap_or(lo);
    let spread = hi - lo;
    if tail.windows(2).all(|w| w[1] <= w[0]) {
        (finest - spread, finest)
    } else if tail.windows(2).all(|w| w[1] >= w[0]) {
        (finest, finest + spread)
    } else {
        (lo, hi)
    }
}

/// Standard error of a least-squares slope (0 with two points, where the
/// line is exact).
fn slope_standard_error(x: &[f64], y: &[f64], line: &Line) -> f64 {
    let n = x.len().min(y.len());
    if n < 3 {
        return 0.0;
    }
    let mx = x[..n].iter().sum::<f64>() / n as f64;
    let sxx: f64 = x[..n].iter().map(|a| (a - mx).powi(2)).sum();
    let ss = line.residual.powi(2) * n as f64;
    if sxx > 0.0 {
        (ss / (n - 2) as f64 / sxx).sqrt()
    } else {
        0.0
    }
}

/// [`analyse_series`] over the rungs from `start` on only: the rungs before
/// it are classed pre-asymptotic and never enter the fit, floor or plateau
/// (the caller knows they are outside the asymptotic regime, for example
/// the coarse tolerance rungs of an adaptive controller). Indices in the
/// result refer to the whole series.
///
/// ```
/// use drift::metrics::{analyse_series_from, RungClass};
/// let x: Vec<f64> = (0..7).map(|k| (16.0 * 2f64.powi(k)).log10()).collect();
/// let d = [Some(3.0), Some(2.0), Some(2.6), Some(3.2), Some(3.8), Some(4.4), Some(5.0)];
/// let a = analyse_series_from(&x, &d, &[100, 200, 400, 800, 1600, 3200, 6400], 2);
/// assert_eq!(a.classes[0], RungClass::PreAsymptotic);
/// assert_eq!(a.fit.unwrap().first, 2);
/// assert!((a.fit.unwrap().order - 2.0).abs() < 0.01);
/// ```
pub fn analyse_series_from(
    x: &[f64],
    d: &[Option<f64>],
    steps: &[u64],
    start: usize,
) -> SeriesAnalysis {
    let n = x.len().min(d.len()).min(steps.len());
    let start = start.min(n);
    let mut a = analyse_series(&x[start..n], &d[start..n], &steps[start..n]);
    a.shift(start, n);
    a
}

impl SeriesAnalysis {
    /// Re-indexes an analysis of `series[start..n]` to the whole series:
    /// the first `start` rungs become pre-asymptotic.
    fn shift(&mut self, start: usize, n: usize) {
        if start == 0 {
            return;
        }
        let mut classes = vec![RungClass::PreAsymptotic; start];
        classes.append(&mut self.classes);
        classes.truncate(n);
        self.classes = classes;
        if let Some(f) = &mut self.fit {
            f.first += start;
            f.last += start;
        }
        if let Some(b) = &mut self.best {
            b.rung += start;
        }
        self.floor_from = self.floor_from.map(|k| k + start);
        self.plateau_from = self.plateau_from.map(|k| k + start);
    }
}

/// How the error of a conserved quantity grows over a long run.
#[derive(
    Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, serde::Serialize, serde::Deserialize,
)]
#[serde(rename_all = "kebab-case")]
pub enum DriftClass {
    /// Stays bounded (exponent below 0.25): symplectic methods, or exact.
    Bounded,
    /// Grows like sqrt(t) (exponent 0.25 to 0.75): unbiased rounding
    /// (Brouwer, Astron. J. 46 (1937) 149).
    RandomWalk,
    /// Grows like t (exponent 0.75 to 1.3): non-symplectic fixed-step methods.
    Linear,
    /// Grows faster than linearly.
    Growing,
}

impl DriftClass {
    /// The class of a drift exponent (thresholds: common practice, no source,
    /// placed between the ideal exponents 0, 1/2 and 1).
    ///
    /// ```
    /// use drift::metrics::DriftClass;
    /// assert_eq!(DriftClass::of_exponent(0.02), DriftClass::Bounded);
    /// assert_eq!(DriftClass::of_exponent(0.5), DriftClass::RandomWalk);
    /// assert_eq!(DriftClass::of_exponent(1.0), DriftClass::Linear);
    /// assert_eq!(DriftClass::of_exponent(2.0), DriftClass::Growing);
    /// ```
    pub fn of_exponent(e: f64) -> DriftClass {
        [
            DriftClass::Bounded,
            DriftClass::RandomWalk,
            DriftClass::Linear,
        ]
        .into_iter()
        .find(|c| e < c.upper_exponent())
        .unwrap_or(DriftClass::Growing)
    }

    /// The largest exponent of the class (the boundary to the next):
    /// 0.25, 0.75, 1.3, and infinity for `growing`.
    ///
    /// ```
    /// use drift::metrics::DriftClass;
    /// assert_eq!(DriftClass::Bounded.upper_exponent(), 0.25);
    /// assert_eq!(DriftClass::of_exponent(DriftClass::Linear.upper_exponent() - 1e-9), DriftClass::Linear);
    /// ```
    pub fn upper_exponent(self) -> f64 {
        match self {
            DriftClass::Bounded => 0.25,
            DriftClass::RandomWalk => 0.75,
            DriftClass::Linear => 1.3,
            DriftClass::Growing => f64::INFINITY,
        }
    }

    /// A short lower-case name (`bounded`, `random-walk`, `linear`, `growing`).
    ///
    /// ```
    /// assert_eq!(drift::metrics::DriftClass::RandomWalk.name(), "random-walk");
    /// ```
    pub fn name(self) -> &'static str {
        match self {
            DriftClass::Bounded => "bounded",
            DriftClass::RandomWalk => "random-walk",
            DriftClass::Linear => "linear",
            DriftClass::Growing => "growing",
        }
    }
}

/// The growth law fitted to an invariant's error over a long run.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DriftFit {
    /// Exponent a of err ~ t^a, fitted to the running maximum of the error.
    pub exponent: f64,
    /// Its class.
    pub class: DriftClass,
    /// Largest relative error seen over the run.
    pub max_error: f64,
}

/// Fits the drift exponent of an invariant's relative error `err[i]` at
/// times `t[i]` (elapsed since the start, all positive and increasing).
///
/// The running maximum of the error is fitted in log-log over the last two
/// decades of time (t from t_end/100 on), so an oscillating bounded error
/// reads as exponent 0. Returns `None` with fewer than two usable samples.
/// An error that is exactly zero throughout reads as bounded.
///
/// ```
/// use drift::metrics::{drift_fit, DriftClass};
/// let t: Vec<f64> = (1..=1000).map(|i| i as f64).collect();
/// let lin: Vec<f64> = t.iter().map(|t| 1e-9 * t).collect();
/// assert_eq!(drift_fit(&t, &lin).unwrap().class, DriftClass::Linear);
/// let osc: Vec<f64> = t.iter().map(|t| 1e-6 * (t * 0.7).sin().abs()).collect();
/// assert_eq!(drift_fit(&t, &osc).unwrap().class, DriftClass::Bounded);
/// ```
pub fn drift_fit(t: &[f64], err: &[f64]) -> Option<DriftFit> {
    let n = t.len().min(err.len());
    let t_end = *t[..n].last()?;
    let mut running = 0.0f64;
    let (mut xs, mut ys) = (Vec::new(), Vec::new());
    for i in 0..n {
        running = running.max(err[i].abs());
        if t[i] > 0.0 && t[i] >= t_end / 100.0 && running > 0.0 {
            xs.push(t[i].log10());
            ys.push(running.log10());
        }
    }
    if running == 0.0 {
        return Some(DriftFit {
            exponent: 0.0,
            class: DriftClass::Bounded,
            max_error: 0.0,
        });
    }
    let line = fit_line(&xs, &ys)?;
    Some(DriftFit {
        exponent: line.slope,
        class: DriftClass::of_exponent(line.slope),
        max_error: running,
    })
}

/// Relative residual of the virial theorem from time averages of `2T` and
/// `pV`: `|<2T> - <pV>| / max(|<2T>|, |<pV>|)`, or `None` if both vanish.
///
/// ```
/// let r = drift::metrics::virial_residual(1.0, 1.0 + 1e-9).unwrap();
/// assert!((r - 1e-9).abs() < 1e-15);
/// ```
pub fn virial_residual(mean_2t: f64, mean_pv: f64) -> Option<f64> {
    let scale = mean_2t.abs().max(mean_pv.abs());
    (scale > 0.0 && scale.is_finite()).then(|| (mean_2t - mean_pv).abs() / scale)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ladder(n: usize) -> (Vec<f64>, Vec<u64>) {
        let x = (0..n)
            .map(|k| (16.0 * 2f64.powi(k as i32)).log10())
            .collect();
        let s = (0..n).map(|k| 1600u64 << k).collect();
        (x, s)
    }

    #[test]
    fn plateau_far_above_rounding_is_not_floor() {
        // Order 4 until 5 digits, then stuck: a consistency error.
        let (x, s) = ladder(10);
        let d: Vec<Option<f64>> = (0..10)
            .map(|k| Some((1.5 + 1.204 * k as f64).min(5.0)))
            .collect();
        let a = analyse_series(&x, &d, &s);
        assert!(a.floor_from.is_none());
        assert_eq!(a.plateau_from, Some(4));
        assert!(a.fit.unwrap().order < 2.0, "{:?}", a.fit);
    }

    #[test]
    fn pre_asymptotic_rungs_are_excluded() {
        let (x, s) = ladder(8);
        // Second order with a large coarse-end curvature.
        let d: Vec<Option<f64>> = (0..8)
            .map(|k| Some(0.3 * k as f64 + 0.602 * k as f64 - 0.5))
            .collect();
        let a = analyse_series(&x, &d, &s);
        assert_eq!(a.classes[0], RungClass::PreAsymptotic);
        assert!(a.fit.unwrap().first >= 1);
    }

    #[test]
    fn missing_rungs_are_skipped() {
        let (x, s) = ladder(6);
        let mut d: Vec<Option<f64>> = (0..6)
            .map(|k| Some(2.0 + 4f64.log10() * k as f64))
            .collect();
        d[5] = None;
        let a = analyse_series(&x, &d, &s);
        assert_eq!(a.classes[5], RungClass::Missing);
        assert!((a.fit.unwrap().order - 2.0).abs() < 1e-9, "{a:?}");
    }

    #[test]
    fn too_few_points_give_no_fit() {
        let a = analyse_series(&[1.0], &[Some(3.0)], &[10]);
        assert!(a.fit.is_none());
        assert_eq!(a.best.unwrap().digits, 3.0);
    }

    /// Steps per unit 16 .. 65536 over 10 units: x and total steps.
    fn issue_ladder(n: usize) -> (Vec<f64>, Vec<u64>) {
        let x = (0..n)
            .map(|k| (16.0 * 2f64.powi(k as i32)).log10())
            .collect();
        let s = (0..n).map(|k| 160u64 << k).collect();
        (x, s)
    }

    #[test]
    fn a_lower_order_at_the_fine_end_is_not_read_off_the_coarse_end() {
        // The series of the issue: order 4 over 64..1024, then local slopes
        // 3.67 -> 3.09 two to four digits above the floor (an order-3 term
        // taking over). Before, the fit read 4.006 over 64..1024.
        let d = [
            0.0, 0.42, 1.563, 2.757, 3.959, 5.162, 6.366, 7.471, 8.468, 9.427, 10.365, 11.296,
            11.249,
        ];
        let (x, s) = issue_ladder(d.len());
        let d: Vec<Option<f64>> = d.iter().map(|&v| Some(v)).collect();
        let fit = analyse_series(&x, &d, &s).fit.unwrap();
        assert_ne!(fit.status, FitStatus::Asymptotic, "{fit:?}");
        // An order-4 claim (at least 3.8) cannot hold: the whole interval
        // lies below it.
        assert!(fit.high < 3.8, "{fit:?}");
    }

    #[test]
    fn an_isolated_dip_is_noise_not_a_plateau() {
        // Order 2 with one rung that fell back (1.67 -> 1.50) and recovered.
        let (x, s) = issue_ladder(8);
        let mut d: Vec<Option<f64>> = (0..8).map(|k| Some(1.07 + 0.602 * k as f64)).collect();
        d[2] = Some(1.50);
        let a = analyse_series(&x, &d, &s);
        assert!(a.plateau_from.is_none(), "{a:?}");
        assert_eq!(a.classes[2], RungClass::Dip);
        let fit = a.fit.unwrap();
        assert!((fit.order - 2.0).abs() < 0.01, "{fit:?}");
        // Two rungs stuck in a row are a plateau.
        d[3] = Some(1.52);
        assert!(analyse_series(&x, &d, &s).plateau_from.is_some());
    }

    #[test]
    fn the_gradual_roll_off_into_rounding_marks_the_floor() {
        // RK4 on y' = lambda y as a rewrite measured it on a ladder cut
        // before the stall: 3.5, 0.85 and 0.66 digits per doubling at the
        // end. Before, those rungs were fitted and the order read 0.66.
        let d = [
            3.126, 4.351, 5.571, 6.784, 7.993, 9.199, 10.405, 11.609, 12.813, 13.867, 14.122,
            14.321,
        ];
        let (x, s) = issue_ladder(d.len());
        let d: Vec<Option<f64>> = d.iter().map(|&v| Some(v)).collect();
        let a = analyse_series(&x, &d, &s);
        let fit = a.fit.unwrap();
        assert_eq!(fit.status, FitStatus::Asymptotic);
        assert!((fit.order - 4.0).abs() < 0.05, "{fit:?}");
        assert_eq!(a.floor_from, Some(10));
    }

    #[test]
    fn a_last_bit_change_keeps_the_order_inside_its_interval() {
        // RK4 on Kepler over one orbit, and the same with the digits at
        // and near the floor moved as a reordered sum moved them.
        let a = [
            0.0, 0.611, 2.007, 3.359, 4.659, 5.918, 7.152, 8.372, 9.585, 10.807, 12.156, 12.312,
            13.04, 12.822,
        ];
        let mut b = a;
        (b[10], b[11], b[12], b[13]) = (12.159, 12.305, 12.9, 12.5);
        let (x, s) = issue_ladder(a.len());
        let read = |d: &[f64]| {
            let d: Vec<Option<f64>> = d.iter().map(|&v| Some(v)).collect();
            analyse_series(&x, &d, &s).fit.unwrap()
        };
        let (fa, fb) = (read(&a), read(&b));
        assert_eq!(fa.status, FitStatus::Asymptotic);
        assert!(
            (fa.order - fb.order).abs() <= fa.uncertainty().max(fb.uncertainty()),
            "{fa:?} {fb:?}"
        );
        assert!(fa.low <= 4.0 && 4.0 <= fa.high, "{fa:?}");
    }

    #[test]
    fn a_plateau_reads_as_order_zero_not_below() {
        // Order 2 for one doubling, then falling back far above rounding:
        // the line through the rungs slopes down (an order such as -1.79
        // was shown before), but a plateau counts as order 0.
        let (x, s) = ladder(8);
        let d: Vec<Option<f64>> = [2.0, 2.6, 2.4, 2.0, 1.6, 1.3, 1.1, 1.05]
            .iter()
            .map(|&v| Some(v))
            .collect();
        let a = analyse_series(&x, &d, &s);
        let fit = a.fit.unwrap();
        assert_eq!(fit.status, FitStatus::Plateau);
        assert_eq!(fit.order, 0.0, "{fit:?}");
        assert!(a.plateau_from.is_some());
    }

    #[test]
    fn random_walk_drift() {
        // Deterministic sqrt(t) envelope.
        let t: Vec<f64> = (1..=2000).map(|i| i as f64).collect();
        let e: Vec<f64> = t.iter().map(|t| 1e-15 * t.sqrt()).collect();
        assert_eq!(drift_fit(&t, &e).unwrap().class, DriftClass::RandomWalk);
    }
}
