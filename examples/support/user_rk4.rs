//! A classical RK4 written the way a user of cargo-drift writes one, shared
//! by `examples/tour.rs` and `benches/overhead.rs` (included by path).

use drift::{Rhs, Stepper};

/// Classical fourth-order Runge-Kutta (Hairer-Norsett-Wanner I, II.1),
/// written as a user writes it.
#[derive(Default)]
pub struct Rk4 {
    k: [Vec<f64>; 4],
    tmp: Vec<f64>,
}

impl Stepper for Rk4 {
    fn step<F: Rhs + ?Sized>(&mut self, f: &F, t: f64, y: &mut [f64], h: f64) {
        let n = y.len();
        for k in &mut self.k {
            k.resize(n, 0.0);
        }
        self.tmp.resize(n, 0.0);
        let [k1, k2, k3, k4] = &mut self.k;
        f.rhs(t, y, k1);
        for i in 0..n {
            self.tmp[i] = y[i] + 0.5 * h * k1[i];
        }
        f.rhs(t + 0.5 * h, &self.tmp, k2);
        for i in 0..n {
            self.tmp[i] = y[i] + 0.5 * h * k2[i];
        }
        f.rhs(t + 0.5 * h, &self.tmp, k3);
        for i in 0..n {
            self.tmp[i] = y[i] + h * k3[i];
        }
        f.rhs(t + h, &self.tmp, k4);
        for i in 0..n {
            y[i] += h / 6.0 * (k1[i] + 2.0 * k2[i] + 2.0 * k3[i] + k4[i]);
        }
    }
}
