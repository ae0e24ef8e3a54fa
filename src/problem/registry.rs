//! The catalogue of built-in reference problems: their names, parameters
//! with defaults, and construction from a parameter table; and [`Builtin`],
//! one enum over all of them so that measuring a built-in problem is
//! monomorphised (no virtual call per right-hand-side evaluation).

use std::collections::BTreeMap;

use super::{
    arenstorf::Arenstorf, damped::Damped, driven::Driven, harmonic::Harmonic, kepler::Kepler,
    linear::Linear, lotka_volterra::LotkaVolterra, pendulum::Pendulum, power_law::PowerLaw,
    ParamError, Problem,
};
use crate::measure::{measure, Config, MeasureError, Measurement, Method};

/// One parameter of a built-in problem.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ParamInfo {
    /// Its key in `drift.toml`.
    pub name: &'static str,
    /// Value used when not given.
    pub default: f64,
    /// What it means and its allowed range.
    pub doc: &'static str,
}

/// A built-in problem as the catalogue lists it.
#[derive(Clone, Copy, Debug)]
pub struct BuiltinInfo {
    /// Its name in `drift.toml`.
    pub name: &'static str,
    /// One line on what it is and what it catches.
    pub summary: &'static str,
    /// Its parameters, in constructor order.
    pub params: &'static [ParamInfo],
    /// Whether it has a velocity-independent second-order form (split
    /// steppers can run on it).
    pub second_order: bool,
    /// Default horizon of a check, in time units of the problem.
    pub periods: f64,
    /// A longer default horizon for integrators, where an adaptive
    /// controller needs more time units to settle into its asymptotic
    /// regime than fixed steps need (`None`: the same as `periods`).
    pub integrator_periods: Option<f64>,
    make: fn(&[f64]) -> Result<Builtin, ParamError>,
}

impl BuiltinInfo {
    /// The default horizon of a check of a method of `kind`.
    ///
    /// ```
    /// use drift::measure::MethodKind;
    /// let kepler = drift::problem::registry::find("kepler").unwrap();
    /// assert_eq!(kepler.periods_for(MethodKind::Fixed), 1.0);
    /// assert_eq!(kepler.periods_for(MethodKind::Whole), 10.0);
    /// ```
    pub fn periods_for(&self, kind: crate::measure::MethodKind) -> f64 {
        match (kind, self.integrator_periods) {
            (crate::measure::MethodKind::Whole, Some(p)) => p,
            _ => self.periods,
        }
    }
}

/// Why a built-in problem could not be built from a parameter table.
#[derive(Clone, Debug, PartialEq)]
pub enum BuildError {
    /// A key that is not a parameter of this problem.
    UnknownParam {
        /// The problem.
        problem: &'static str,
        /// The key given.
        key: String,
        /// The valid keys.
        known: Vec<&'static str>,
    },
    /// A value outside its range.
    Param(ParamError),
}

impl std::fmt::Display for BuildError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            BuildError::UnknownParam {
                problem,
                key,
                known,
            } => {
                write!(
                    f,
                    "problem `{problem}` has no parameter `{key}`; its parameters are: {}",
                    known.join(", ")
                )
            }
            BuildError::Param(e) => write!(f, "{e}"),
        }
    }
}

impl std::error::Error for BuildError {}

impl BuiltinInfo {
    /// Builds the problem from `params` (missing keys take their defaults).
    ///
    /// ```
    /// use std::collections::BTreeMap;
    /// use drift::Problem;
    /// let info = drift::problem::registry::find("kepler").unwrap();
    /// let p = info.build(&BTreeMap::from([("e".to_string(), 0.9)])).unwrap();
    /// assert_eq!(p.as_problem().name(), "kepler");
    /// assert!(info.build(&BTreeMap::from([("e".to_string(), 1.0)])).is_err());
    /// ```
    pub fn build(&self, params: &BTreeMap<String, f64>) -> Result<Builtin, BuildError> {
        if let Some(key) = params
            .keys()
            .find(|k| !self.params.iter().any(|p| p.name == k.as_str()))
        {
            return Err(BuildError::UnknownParam {
                problem: self.name,
                key: key.clone(),
                known: self.params.iter().map(|p| p.name).collect(),
            });
        }
        let values: Vec<f64> = self
            .params
            .iter()
            .map(|p| params.get(p.name).copied().unwrap_or(p.default))
            .collect();
        (self.make)(&values).map_err(BuildError::Param)
    }

    /// Builds the problem at its default parameters.
    ///
    /// ```
    /// let p = drift::problem::registry::find("pendulum").unwrap().build_default();
    /// assert!(p.is_ok());
    /// ```
    pub fn build_default(&self) -> Result<Builtin, BuildError> {
        self.build(&BTreeMap::new())
    }
}

const fn param(name: &'static str, default: f64, doc: &'static str) -> ParamInfo {
    ParamInfo { name, default, doc }
}

static CATALOG: &[BuiltinInfo] = &[
    BuiltinInfo {
        name: "harmonic",
        summary: "harmonic oscillator x'' = -omega^2 x: exact solution, energy, period, virial",
        params: &[
            param("omega", 1.0, "angular frequency, > 0"),
            param("x0", 1.0, "initial position"),
            param("v0", 0.0, "initial velocity (x0, v0 not both 0)"),
        ],
        second_order: true,
        periods: 10.0,
        integrator_periods: None,
        make: |v| Harmonic::new(v[0], v[1], v[2]).map(Builtin::Harmonic),
    },
    BuiltinInfo {
        name: "power_law",
        summary: "oscillator in V = k|x|^p: energy, exact amplitude-dependent period, virial 2<T> = p<V>",
        params: &[
            param("p", 4.0, "exponent, > 1 (real)"),
            param("k", 1.0, "stiffness, > 0"),
            param("m", 1.0, "mass, > 0"),
            param("amplitude", 1.0, "turning point, > 0"),
        ],
        second_order: true,
        periods: 10.0,
        integrator_periods: None,
        make: |v| PowerLaw::new(v[0], v[1], v[2], v[3]).map(Builtin::PowerLaw),
    },
    BuiltinInfo {
        name: "pendulum",
        summary: "pendulum theta'' = -omega0^2 sin theta: exact solution (Jacobi sn), period (AGM), energy",
        params: &[
            param("amplitude_deg", 60.0, "release angle in degrees, 0 < a < 180"),
            param("omega0", 1.0, "small-amplitude angular frequency, > 0"),
        ],
        second_order: true,
        periods: 10.0,
        integrator_periods: None,
        make: |v| Pendulum::new(v[0], v[1]).map(Builtin::Pendulum),
    },
    BuiltinInfo {
        name: "kepler",
        summary: "Kepler orbit: exact solution, energy, angular momentum, Laplace-Runge-Lenz vector, period",
        params: &[
            param("mu", 1.0, "gravitational parameter, > 0"),
            param("a", 1.0, "semi-major axis, > 0"),
            param("e", 0.5, "eccentricity, 0 <= e < 1"),
        ],
        second_order: true,
        // One orbit: over ten, the phase error grows faster than rounding
        // and RK4 meets the floor (about 10.8 digits) while its local slope
        // still falls (4.8 to 4.2); over one orbit it settles at 4.0 first.
        periods: 1.0,
        // Dormand-Prince 5(4) reads 5.46 against evaluations over one orbit
        // (1000 to 2500 evaluations) and 4.9 to 5.05 over ten.
        integrator_periods: Some(10.0),
        make: |v| Kepler::new(v[0], v[1], v[2]).map(Builtin::Kepler),
    },
    BuiltinInfo {
        name: "damped",
        summary: "damped oscillator x'' + 2 gamma x' + omega0^2 x = 0 (under-, critically, over-damped)",
        params: &[
            param("omega0", 1.0, "natural angular frequency, > 0"),
            param("gamma", 0.1, "damping rate, >= 0"),
            param("x0", 1.0, "initial position"),
            param("v0", 0.0, "initial velocity"),
        ],
        second_order: false,
        periods: 10.0,
        integrator_periods: None,
        make: |v| Damped::new(v[0], v[1], v[2], v[3]).map(Builtin::Damped),
    },
    BuiltinInfo {
        name: "driven",
        summary: "driven oscillator x'' + omega0^2 x = F cos(W t): non-autonomous, catches wrong stage times",
        params: &[
            param("omega0", 1.0, "natural angular frequency, > 0"),
            param("omega_drive", 2.0, "drive angular frequency W, >= 0 (W = omega0 is resonance)"),
            param("force", 1.0, "drive amplitude F"),
            param("x0", 1.0, "initial position"),
            param("v0", 0.0, "initial velocity"),
        ],
        second_order: true,
        periods: 10.0,
        integrator_periods: None,
        make: |v| Driven::new(v[0], v[1], v[2], v[3], v[4]).map(Builtin::Driven),
    },
    BuiltinInfo {
        name: "linear",
        summary: "linear test equation y' = lambda y with complex lambda = re + i im",
        params: &[
            param("re", -0.1, "real part of lambda"),
            param("im", 1.0, "imaginary part of lambda (lambda != 0)"),
            param("y0_re", 1.0, "real part of y(0)"),
            param("y0_im", 0.0, "imaginary part of y(0)"),
        ],
        second_order: false,
        periods: 10.0,
        integrator_periods: None,
        make: |v| Linear::with_initial(v[0], v[1], v[2], v[3]).map(Builtin::Linear),
    },
    BuiltinInfo {
        name: "arenstorf",
        summary: "Arenstorf periodic orbit of the restricted three-body problem (Hairer-Norsett-Wanner I, II.0)",
        params: &[],
        second_order: false,
        periods: 1.0,
        integrator_periods: None,
        make: |_| Ok(Builtin::Arenstorf(Arenstorf::new())),
    },
    BuiltinInfo {
        name: "lotka_volterra",
        summary: "Lotka-Volterra u' = u (v - b), v' = v (a - u): first integral, self-convergence",
        params: &[
            param("a", 1.0, "prey parameter, > 0"),
            param("b", 2.0, "predator parameter, > 0"),
            param("u0", 2.0, "initial prey, > 0"),
            param("v0", 2.0, "initial predators, > 0"),
        ],
        second_order: false,
        periods: 10.0,
        integrator_periods: None,
        make: |v| LotkaVolterra::new(v[0], v[1], v[2], v[3]).map(Builtin::LotkaVolterra),
    },
];

/// Every built-in problem, in the order of the standard battery.
///
/// ```
/// let names: Vec<_> = drift::problem::registry::catalog().iter().map(|p| p.name).collect();
/// assert!(names.contains(&"driven"));
/// ```
pub fn catalog() -> &'static [BuiltinInfo] {
    CATALOG
}

/// The built-in problem called `name`.
///
/// ```
/// assert!(drift::problem::registry::find("harmonic").is_some());
/// assert!(drift::problem::registry::find("harmonix").is_none());
/// ```
pub fn find(name: &str) -> Option<&'static BuiltinInfo> {
    CATALOG.iter().find(|p| p.name == name)
}

/// A built-in problem of any kind. Measuring through
/// [`Builtin::measure_with`] dispatches once per check and then runs fully
/// monomorphised code.
#[derive(Clone, Debug)]
#[allow(missing_docs)] // each variant is the problem of the same name
pub enum Builtin {
    Harmonic(Harmonic),
    PowerLaw(PowerLaw),
    Pendulum(Pendulum),
    Kepler(Kepler),
    Damped(Damped),
    Driven(Driven),
    Linear(Linear),
    Arenstorf(Arenstorf),
    LotkaVolterra(LotkaVolterra),
}

macro_rules! each_builtin {
    ($value:expr, $p:ident => $body:expr) => {
        match $value {
            Builtin::Harmonic($p) => $body,
            Builtin::PowerLaw($p) => $body,
            Builtin::Pendulum($p) => $body,
            Builtin::Kepler($p) => $body,
            Builtin::Damped($p) => $body,
            Builtin::Driven($p) => $body,
            Builtin::Linear($p) => $body,
            Builtin::Arenstorf($p) => $body,
            Builtin::LotkaVolterra($p) => $body,
        }
    };
}

impl Builtin {
    /// The problem as a trait object (for inspection; measuring goes through
    /// [`Builtin::measure_with`]).
    pub fn as_problem(&self) -> &dyn Problem {
        each_builtin!(self, p => p)
    }

    /// Measures `method` on this problem with the concrete problem type.
    ///
    /// ```
    /// use drift::measure::{Config, Fixed, Ladder};
    /// use drift::{Rhs, Stepper};
    /// #[derive(Default)]
    /// struct Euler(Vec<f64>);
    /// impl Stepper for Euler {
    ///     fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
    ///         self.0.resize(y.len(), 0.0);
    ///         f.rhs(t, y, &mut self.0);
    ///         for (a, b) in y.iter_mut().zip(&self.0) { *a += h * b; }
    ///     }
    /// }
    /// let p = drift::problem::registry::find("linear").unwrap().build_default().unwrap();
    /// let cfg = Config { ladder: Ladder::Steps(vec![256, 512]), long_run: None, ..Config::default() };
    /// let m = p.measure_with(&mut Fixed(Euler::default()), &cfg).unwrap();
    /// assert!((m.solution.fit.unwrap().order - 1.0).abs() < 0.1);
    /// ```
    pub fn measure_with<M: Method>(
        &self,
        method: &mut M,
        config: &Config,
    ) -> Result<Measurement, MeasureError> {
        each_builtin!(self, p => measure(method, p, config))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_entry_builds_at_its_defaults_under_its_own_name() {
        for info in catalog() {
            let p = info
                .build_default()
                .unwrap_or_else(|e| panic!("{}: {e}", info.name));
            let p = p.as_problem();
            assert_eq!(p.name(), info.name);
            let n = p.dim();
            let mut y = vec![0.0; n];
            p.initial(&mut y);
            let mut a = vec![0.0; n / 2];
            assert_eq!(
                n % 2 == 0 && p.accel(p.t0(), &y[..n / 2], &mut a),
                info.second_order,
                "{}",
                info.name
            );
        }
    }

    #[test]
    fn unknown_parameter_names_the_valid_ones() {
        let err = find("pendulum")
            .unwrap()
            .build(&BTreeMap::from([("amplitude".to_string(), 10.0)]))
            .unwrap_err();
        assert!(err.to_string().contains("amplitude_deg"), "{err}");
    }
}
