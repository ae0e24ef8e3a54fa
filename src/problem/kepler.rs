//! The Kepler problem: relative two-body motion in the plane on an ellipse
//! of any eccentricity below 1, exact at every time through Kepler's
//! equation; energy, angular momentum, Laplace-Runge-Lenz vector and the
//! virial theorem.

use crate::problem::{check_param, Invariant, ParamError, Problem};
use crate::special::kepler_eccentric_anomaly;
use crate::stepper::Rhs;

const NAME: &str = "kepler";

/// r'' = -mu r / |r|^3 in the plane, state `[x, y, vx, vy]`, starting at
/// periapsis on the +x axis and moving in +y, on the ellipse with
/// semi-major axis `a` and eccentricity `e`.
///
/// Exact solution (mean motion n = sqrt(mu / a^3), period 2 pi / n; `t` is
/// reduced modulo the period exactly, by `%`, and E solves Kepler's equation
/// E - e sin E = n t, see [`kepler_eccentric_anomaly`]):
/// x = a (cos E - e), y = a sqrt(1 - e^2) sin E,
/// vx = -a n sin E / (1 - e cos E), vy = a n sqrt(1 - e^2) cos E / (1 - e cos E)
/// (Danby, Fundamentals of Celestial Mechanics, 2nd ed. (1988), ch. 6).
/// cos E - e and 1 - e cos E are evaluated as (1 - e) - 2 sin^2(E/2) and
/// (1 - e) + 2 e sin^2(E/2), and sqrt(1 - e^2) as sqrt((1 - e)(1 + e)), so
/// periapsis passages at e close to 1 keep their digits.
///
/// Invariants, each with its scale:
/// - `energy` v^2/2 - mu/r = -mu/(2a), scale mu/(2a);
/// - `angular_momentum` x vy - y vx = sqrt(mu a (1 - e^2)), scale its value;
/// - `lrl_x`, `lrl_y`: the Laplace-Runge-Lenz vector A = v x L - mu r/|r|
///   = (mu e, 0), scale mu (so a circular orbit, A = 0, is covered).
///
/// Virial terms (2T, pV) with V = -mu/r homogeneous of degree p = -1:
/// (v^2, mu/r); their period averages are equal (2 <T> = -<V>).
///
/// ```
/// use drift::Problem;
/// use drift::problem::kepler::Kepler;
/// let k = Kepler::new(1.0, 1.0, 0.5).unwrap();
/// assert!((k.period().unwrap() - 2.0 * std::f64::consts::PI).abs() < 1e-15);
/// let mut y = [0.0; 4];
/// assert!(k.exact(0.0, &mut y));
/// assert_eq!(y[0], 0.5); // periapsis a (1 - e)
/// assert!(Kepler::new(1.0, 1.0, 1.0).is_err());
/// ```
#[derive(Clone, Debug)]
pub struct Kepler {
    mu: f64,
    a: f64,
    e: f64,
    n: f64,
    period: f64,
    one_minus_e: f64,
    /// sqrt(1 - e^2).
    root: f64,
    invariants: [Invariant; 4],
}

impl Kepler {
    /// The orbit with gravitational parameter `mu > 0`, semi-major axis
    /// `a > 0` and eccentricity `0 <= e < 1`.
    ///
    /// ```
    /// use drift::problem::kepler::Kepler;
    /// assert_eq!(Kepler::new(-1.0, 1.0, 0.1).unwrap_err().parameter, "mu");
    /// assert!(Kepler::new(1.0, 1.0, 1.0).unwrap_err().to_string().contains("0 <= e < 1"));
    /// ```
    pub fn new(mu: f64, a: f64, e: f64) -> Result<Self, ParamError> {
        check_param(NAME, "mu", mu, mu > 0.0, "mu > 0")?;
        check_param(NAME, "a", a, a > 0.0, "a > 0")?;
        check_param(NAME, "e", e, (0.0..1.0).contains(&e), "0 <= e < 1")?;
        let n = (mu / (a * a * a)).sqrt();
        let period = std::f64::consts::TAU / n;
        let one_minus_e = 1.0 - e;
        let root = (one_minus_e * (1.0 + e)).sqrt();
        let l = (mu * a).sqrt() * root;
        check_param(
            NAME,
            "a",
            a,
            n > 0.0 && period.is_finite() && l > 0.0 && l.is_finite() && (a * n).is_finite(),
            "a > 0 with positive finite mean motion sqrt(mu/a^3), period and angular momentum",
        )?;
        let invariant = |name, scale| Invariant { name, scale };
        Ok(Kepler {
            mu,
            a,
            e,
            n,
            period,
            one_minus_e,
            root,
            invariants: [
                invariant("energy", 0.5 * mu / a),
                invariant("angular_momentum", l),
                invariant("lrl_x", mu),
                invariant("lrl_y", mu),
            ],
        })
    }

    /// The eccentricity e.
    ///
    /// ```
    /// assert_eq!(drift::problem::kepler::Kepler::default().eccentricity(), 0.5);
    /// ```
    pub fn eccentricity(&self) -> f64 {
        self.e
    }
}

impl Default for Kepler {
    /// mu = 1, a = 1, e = 0.5.
    fn default() -> Self {
        Kepler::new(1.0, 1.0, 0.5).expect("default Kepler parameters are in range")
    }
}

/// -mu q / |q|^3.
fn gravity(mu: f64, q: &[f64], a: &mut [f64]) {
    let r2 = q[0] * q[0] + q[1] * q[1];
    let c = -mu / (r2 * r2.sqrt());
    a[0] = c * q[0];
    a[1] = c * q[1];
}

impl Rhs for Kepler {
    fn dim(&self) -> usize {
        4
    }
    fn rhs(&self, _t: f64, y: &[f64], dydt: &mut [f64]) {
        dydt[0] = y[2];
        dydt[1] = y[3];
        gravity(self.mu, &y[..2], &mut dydt[2..]);
    }
}

impl Problem for Kepler {
    fn name(&self) -> &str {
        NAME
    }

    fn initial(&self, y0: &mut [f64]) {
        y0[0] = self.a * self.one_minus_e;
        y0[1] = 0.0;
        y0[2] = 0.0;
        y0[3] = self.a * self.n * self.root / self.one_minus_e;
    }

    /// The period.
    fn time_unit(&self) -> f64 {
        self.period
    }

    /// a for the positions, a n for the velocities.
    fn scales(&self, s: &mut [f64]) {
        s[..2].fill(self.a);
        s[2..].fill(self.a * self.n);
    }

    fn exact(&self, t: f64, y: &mut [f64]) -> bool {
        let mean = self.n * (t % self.period);
        let Ok(ecc) = kepler_eccentric_anomaly(mean, self.e) else {
            return false; // t not finite
        };
        let (s, c) = ecc.sin_cos();
        let h = (0.5 * ecc).sin();
        let h2 = 2.0 * h * h;
        let den = self.one_minus_e + self.e * h2; // 1 - e cos E
        let an = self.a * self.n;
        y[0] = self.a * (self.one_minus_e - h2);
        y[1] = self.a * self.root * s;
        y[2] = -an * s / den;
        y[3] = an * self.root * c / den;
        true
    }

    fn invariants(&self) -> &[Invariant] {
        &self.invariants
    }

    fn invariant_values(&self, _t: f64, y: &[f64], out: &mut [f64]) {
        let (x, yy, vx, vy) = (y[0], y[1], y[2], y[3]);
        let r = (x * x + yy * yy).sqrt();
        let l = x * vy - yy * vx;
        out[0] = 0.5 * (vx * vx + vy * vy) - self.mu / r;
        out[1] = l;
        out[2] = vy * l - self.mu * x / r;
        out[3] = -vx * l - self.mu * yy / r;
    }

    fn period(&self) -> Option<f64> {
        Some(self.period)
    }

    /// y: it crosses zero upwards once per period, at each periapsis passage.
    fn crossing(&self, y: &[f64]) -> f64 {
        y[1]
    }

    fn accel(&self, _t: f64, q: &[f64], a: &mut [f64]) -> bool {
        gravity(self.mu, q, a);
        true
    }

    fn virial_terms(&self, y: &[f64]) -> Option<(f64, f64)> {
        let r = (y[0] * y[0] + y[1] * y[1]).sqrt();
        Some((y[2] * y[2] + y[3] * y[3], self.mu / r))
    }
}
