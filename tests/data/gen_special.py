#!/usr/bin/env python3
"""Generates tests/data/special_table.txt: reference values for
src/special.rs and the pendulum, power-law and Kepler problems, computed with
mpmath (arbitrary precision, mp.dps = 50).

Run from the repository root:  python3 tests/data/gen_special.py
The Rust tests only read the table; no Python is needed at test time.

Every input is written as the shortest repr of an f64, and every reference
value is the exact mathematical value at that f64 input, printed with 25
significant digits.  Where our Rust code uses a closed form, the script
checks that closed form here against an independent mpmath computation
(numerical quadrature or ODE integration) before writing it.
"""

import math
import os
import random

from mpmath import mp, mpf

mp.dps = 50
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "special_table.txt")


def r(x):
    """A reference value, 25 significant digits."""
    return mp.nstr(mpf(x), 25, min_fixed=-5, max_fixed=5)


def f(x):
    """An f64 input, exactly (shortest round-trip repr)."""
    return repr(float(x))


rows = []


def row(tag, *fields):
    rows.append(" ".join([tag] + list(fields)))


# ---------------------------------------------------------------- gamma
POWERS = [1.1, 1.5, 2.0, 2.5, 3.0, 4.0, 6.0, 7.3]
rng = random.Random(20240611)
gamma_x = [1e-300, 1e-10, 1e-3, 0.01, 0.1, 0.5, 1.0, 1.5, 2.0, 3.0, 10.0, 20.0]
gamma_x += [k / 8 for k in range(1, 161)]
gamma_x += [rng.uniform(0.0, 20.0) for _ in range(150)]
gamma_x += [rng.uniform(0.0, 1.0) for _ in range(50)]
gamma_x += [rng.uniform(20.0, 171.0) for _ in range(20)]
for p in POWERS:
    a = 1.0 / p
    gamma_x += [a, a + 0.5]
for x in sorted(set(gamma_x)):
    row("gamma", f(x), r(mp.gamma(mpf(x))))
# Gamma(a) / Gamma(a + 1/2) with a + 1/2 exact.
for a in sorted(set([1.0 / p for p in POWERS] + [rng.uniform(0.0, 20.0) for _ in range(40)])):
    row("gamma_ratio_half", f(a), r(mp.gamma(mpf(a)) / mp.gamma(mpf(a) + mpf(1) / 2)))

# ---------------------------------------------------------------- K
K_M = [0.0, 1e-12, 1e-8, 1e-5, 1e-3, 0.01, 0.1, 0.2, 0.25, 0.3, 0.4, 0.5, 0.6, 0.7, 0.75, 0.8, 0.9]
K_M1 = [0.5, 0.3, 0.1, 0.05, 0.01, 1e-3, 1e-4, 1e-5, 1e-6, 1e-8, 1e-10, 1e-12, 1e-15, 1e-20, 1e-100, 1e-300]
for m in K_M:
    row("ellipk_m", f(m), r(mp.ellipk(mpf(m))))
for m1 in K_M1:
    with mp.workdps(400):  # 1 - m1 exactly, even for m1 = 1e-300
        row("ellipk_m1", f(m1), r(mp.ellipk(1 - mpf(m1))))

# ---------------------------------------------------------------- sn, cn, dn
FRACTIONS = [0.01, 0.1, 0.25, 0.5, 0.75, 0.9, 0.99, 1.0, 1.3, 1.7, 2.5, 3.3, -0.4, -1.9, 7.9]
ABSOLUTE = [0.5, 1.0, 3.0, 10.0]


def jacobi_rows(tag, param, m):
    kk = mp.ellipk(m)
    us = [float(fr * kk) for fr in FRACTIONS] + ABSOLUTE
    for u in us:
        sn, cn, dn = (mp.ellipfun(kind, mpf(u), m=m) for kind in ("sn", "cn", "dn"))
        row(tag, f(u), f(param), r(sn), r(cn), r(dn))


for m in [0.0, 1e-8, 0.01, 0.1, 0.3, 0.5, 0.7, 0.9]:
    jacobi_rows("sncndn_m", m, mpf(m))
for m1 in [0.05, 1e-2, 1e-3, 1e-5, 1e-8, 1e-10]:
    jacobi_rows("sncndn_m1", m1, 1 - mpf(m1))

# ---------------------------------------------------------------- Kepler E


def kepler_e(mean, e):
    """E - e sin E = M for the exact M reduced to (-pi, pi]; E in [-pi, pi]."""
    mean, e = mpf(mean), mpf(e)
    mr = mean - 2 * mp.pi * mp.nint(mean / (2 * mp.pi))
    if mr == 0 or e == 0:
        return mr
    sign = 1 if mr > 0 else -1
    ma = abs(mr)
    g = lambda x: x - e * mp.sin(x) - ma
    lo, hi = ma, min(ma + e, mp.pi)
    # bisection to the full working precision, then a polishing Newton step
    for _ in range(400):
        mid = (lo + hi) / 2
        if g(mid) > 0:
            hi = mid
        else:
            lo = mid
    x = (lo + hi) / 2
    x = x - g(x) / (1 - e * mp.cos(x))
    return sign * x


KEPLER_E = [0.0, 0.01, 0.1, 0.3, 0.5, 0.7, 0.9, 0.99, 0.995, 0.999]
KEPLER_M = [1e-12, 1e-8, 1e-4, 0.01, 0.1, 0.5, 1.0, 2.0, 3.0, 3.14159, -1.0, -3.1, 7.0, 100.0, 1e4]
for e in KEPLER_E:
    for mean in KEPLER_M:
        row("kepler", f(mean), f(e), r(kepler_e(mean, e)))

# ---------------------------------------------------------------- pendulum


def pendulum_state(theta0, omega0, t):
    """theta(t), theta_dot(t) released from rest at theta0 (Belendez et al.
    2007), through mpmath's own ellipk and ellipfun."""
    k = mp.sin(theta0 / 2)
    m = k * k
    u = mp.ellipk(m) - omega0 * t
    return 2 * mp.asin(k * mp.ellipfun("sn", u, m=m)), -2 * k * omega0 * mp.ellipfun("cn", u, m=m)


def check_against_ode(rhs, y0, t, closed_form, what):
    """The closed form agrees with mpmath's Taylor-series ODE solver."""
    with mp.workdps(30):
        sol = mp.odefun(rhs, 0, [mpf(v) for v in y0])(mpf(t))
    for a, b in zip(sol, closed_form):
        assert abs(a - b) < mpf(10) ** -24, (what, a, b)


PENDULUM = [(1e-3, 1.0), (1.0, 1.0), (10.0, 2.5), (45.0, 1.0), (90.0, 1.0), (120.0, 0.7),
            (150.0, 1.0), (170.0, 1.0), (179.0, 1.0), (179.9, 1.0), (179.999, 3.0)]
PENDULUM_T = [0.0, 0.1, 0.25, 0.37, 0.5, 0.75, 0.9, 1.3, 10.6, 100.25, 1000.7]
for deg, omega0 in PENDULUM:
    theta0 = mpf(deg * (math.pi / 180.0))  # exactly Rust's f64::to_radians
    period = 4 * mp.ellipk(mp.sin(theta0 / 2) ** 2) / omega0
    row("pendulum_period", f(deg), f(omega0), f(theta0), r(period))
    for fr in PENDULUM_T:
        t = float(fr * period)
        th, thd = pendulum_state(theta0, mpf(omega0), mpf(t))
        row("pendulum_state", f(deg), f(omega0), f(t), r(th), r(thd))
for deg, t in [(150.0, 3.0), (179.9, 2.0)]:
    theta0 = mpf(deg * (math.pi / 180.0))
    check_against_ode(lambda _t, y: [y[1], -mp.sin(y[0])], [theta0, 0], t,
                      pendulum_state(theta0, 1, mpf(t)), "pendulum")

# ---------------------------------------------------------------- power law


def power_law_period(p, k, m, amp):
    """Landau-Lifshitz closed form."""
    return (2 / p) * mp.sqrt(2 * mp.pi * m / k) * amp ** (1 - p / 2) * mp.gamma(1 / p) / mp.gamma(1 / p + mpf(1) / 2)


def power_law_state(p, k, m, amp, t):
    """Exact state at any t by inverting t(x) = integral dx / |v(x)|, with
    |v(x)| = sqrt(2 k (A^p - |x|^p) / m); independent of the Gamma formula."""
    speed = lambda x: mp.sqrt(2 * k * (amp ** p - abs(x) ** p) / m)
    quarter = mp.quad(lambda x: 1 / speed(x), [0, amp])
    tau = t - 4 * quarter * mp.floor(t / (4 * quarter))
    # position reached a time s after leaving x = 0 (s <= quarter): Newton on
    # integral_0^X dx/speed = s, derivative 1/speed(X).
    def from_zero(s):
        if s == 0:
            return mpf(0)
        x = min(speed(0) * s, amp * (1 - mpf(10) ** -30))
        for _ in range(60):
            g = mp.quad(lambda z: 1 / speed(z), [0, x]) - s
            x_new = x - g * speed(x)
            x_new = min(max(x_new, x / 2), (x + amp) / 2)
            if abs(x_new - x) < mpf(10) ** -40 * amp:
                return x_new
            x = x_new
        raise RuntimeError("power-law inversion did not converge")
    phase = int(mp.floor(tau / quarter))
    s = tau - phase * quarter
    if phase == 0:
        x, sign = from_zero(quarter - s), -1
    elif phase == 1:
        x, sign = -from_zero(s), -1
    elif phase == 2:
        x, sign = -from_zero(quarter - s), 1
    else:
        x, sign = from_zero(s), 1
    return x, sign * speed(x), 4 * quarter


POWER_PARAMS = [(p, 1.0, 1.0, 1.0) for p in POWERS] + [(3.0, 2.5, 0.7, 1.9), (1.5, 0.3, 2.0, 0.6)]
for p, k, m, amp in POWER_PARAMS:
    P, K_, M_, A_ = (mpf(v) for v in (p, k, m, amp))
    period = power_law_period(P, K_, M_, A_)
    _, _, period_quad = power_law_state(P, K_, M_, A_, mpf(0))
    assert abs(period_quad / period - 1) < mpf(10) ** -25, (p, period, period_quad)
    row("powerlaw_period", f(p), f(k), f(m), f(amp), r(period))
    for j in [0, 1, 2, 3, 5, 6, -1, 401]:
        for delta in [0.0, 1e-15, -1e-13, 1e-11]:
            t = float(j * period / 4 + delta * period)
            x, v, _ = power_law_state(P, K_, M_, A_, mpf(t))
            row("powerlaw_state", f(p), f(k), f(m), f(amp), f(t), r(x), r(v))

# ---------------------------------------------------------------- Kepler orbit


def kepler_state(mu, a, e, t):
    n = mp.sqrt(mu / a ** 3)
    big_e = kepler_e(n * t, e)
    e = mpf(e)
    den = 1 - e * mp.cos(big_e)
    root = mp.sqrt(1 - e * e)
    return (a * (mp.cos(big_e) - e), a * root * mp.sin(big_e),
            -a * n * mp.sin(big_e) / den, a * n * root * mp.cos(big_e) / den)


def kepler_rhs(_t, y):
    r3 = (y[0] ** 2 + y[1] ** 2) ** mpf(1.5)
    return [y[2], y[3], -y[0] / r3, -y[1] / r3]


KEPLER_ORBITS = [(1.0, 1.0, 0.0), (1.0, 1.0, 0.5), (1.0, 1.0, 0.9), (1.0, 1.0, 0.999), (2.5, 1.7, 0.3)]
KEPLER_T = [0.0, 1e-6, 0.01, 0.1, 0.25, 0.5, 0.77, 0.999, 1.5, 10.3, 1000.1]
for mu, a, e in KEPLER_ORBITS:
    MU, A_ = mpf(mu), mpf(a)
    period = 2 * mp.pi / mp.sqrt(MU / A_ ** 3)
    row("kepler_period", f(mu), f(a), f(e), r(period))
    for fr in KEPLER_T:
        t = float(fr * period)
        row("kepler_state", f(mu), f(a), f(e), f(t), *(r(v) for v in kepler_state(MU, A_, e, mpf(t))))
check_against_ode(kepler_rhs, kepler_state(1, 1, 0.5, 0), 1.3, kepler_state(1, 1, 0.5, mpf(1.3)), "kepler")

# ---------------------------------------------------------------- write
HEADER = """\
# Reference values for cargo-drift, generated by tests/data/gen_special.py
# with mpmath (mp.dps = 50). Inputs are exact f64 values (shortest repr);
# references are the exact values at those inputs, to 25 digits.
# Rows, by first field:
#   gamma x Gamma(x)
#   gamma_ratio_half a Gamma(a)/Gamma(a+1/2)        (a + 1/2 exact)
#   ellipk_m m K(m)
#   ellipk_m1 m1 K(1 - m1)                           (m1 exact)
#   sncndn_m u m sn(u|m) cn(u|m) dn(u|m)
#   sncndn_m1 u m1 sn cn dn  at parameter m = 1 - m1 (m1 exact)
#   kepler M e E      E - e sin E = M after reducing M to (-pi, pi]; E in [-pi, pi]
#   pendulum_period amplitude_deg omega0 theta0 T    theta0 = f64 amplitude_deg.to_radians()
#   pendulum_state amplitude_deg omega0 t theta theta_dot
#   powerlaw_period p k m A T        (closed form, checked against quadrature)
#   powerlaw_state p k m A t x v     (by inverting the quadrature t(x))
#   kepler_period mu a e T
#   kepler_state mu a e t x y vx vy  (released at periapsis on +x, moving +y)
"""

with open(OUT, "w") as fh:
    fh.write(HEADER)
    for line in rows:
        fh.write(line + "\n")
print(f"wrote {len(rows)} rows to {OUT}")
