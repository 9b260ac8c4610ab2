#!/usr/bin/env python3
"""Simulation of transfer functions with dead time, checked against scipy.

Usage: simulate_vs_scipy.py PATH_TO_lw_simulate_driver

Draws 24 random stable models (seeded numpy RNG; orders 1..4, real and complex poles, some
zeros, a few biproper, dead times that are mostly not whole samples) and simulates each for
three held inputs (a few steps, a PRBS, a random column) on a uniform and on a jittered grid.

The reference is built independently of loopwright: an observer canonical realisation written
here with numpy (loopwright uses a balanced controllable form) and
scipy.signal.cont2discrete(method='zoh') over every sub-interval between the sample times and
the delayed switching times t[i] + T, where the delayed input u(t - T) is constant; so the dead
time is exact. For a few models the same response is also integrated with
scipy.integrate.solve_ivp (DOP853, tight tolerances) over those sub-intervals. Closed loops are
checked too: with T = 0 against the rational closed loop N/(D+N) built with numpy polynomial
arithmetic, and with T > 0 (P and PI controllers) against a method-of-steps integration of the
delay differential equation with solve_ivp, the delayed actuator value read from the dense
output of the earlier steps.

Prints a table of max errors relative to the output's range and exits 1 when an open-loop or
T = 0 error exceeds 1e-8 (the solve_ivp comparisons are limited by the integrator tolerance:
1e-7 for both the open loop and the closed loop with dead time).
"""
import subprocess
import sys
from math import factorial

import numpy as np
from scipy import integrate, signal

TOL_EXACT = 1e-8
TOL_IVP = 1e-7
TOL_DDE = 1e-7


def run_driver(driver, num, den, delay, t, u, closed=None):
    lines = ["num " + " ".join(repr(float(c)) for c in num),
             "den " + " ".join(repr(float(c)) for c in den),
             f"delay {delay!r}", "initial steady"]
    if closed:
        lines.append(f"closed {closed[0]} {closed[1]!r}")
    else:
        lines.append("open")
    lines.append(f"samples {len(t)}")
    lines += [f"{ti!r} {ui!r}" for ti, ui in zip(t.tolist(), u.tolist())]
    out = subprocess.run([driver], input="\n".join(lines) + "\n", capture_output=True, text=True,
                         check=True).stdout
    data = np.array([[float(v) for v in row.split()] for row in out.strip().splitlines()])
    return data[:, 0] if not closed else (data[:, 0], data[:, 1])


def random_model(rng, i):
    order = 1 + i % 4
    poles = []
    while len(poles) < order:
        if order - len(poles) >= 2 and rng.random() < 0.5:
            sigma = 10 ** rng.uniform(-0.6, 0.6)
            omega = sigma * rng.uniform(0.3, 3.0)
            poles += [complex(-sigma, omega), complex(-sigma, -omega)]
        else:
            poles.append(-(10 ** rng.uniform(-0.7, 0.8)))
    den = np.real(np.poly(poles))
    n_zeros = order if i % 7 == 3 else int(rng.integers(0, order))
    zeros = [z if abs(z) > 0.2 else 0.2 * np.sign(z) + z for z in rng.uniform(-4, 4, n_zeros)]
    num = np.real(np.poly(zeros)) if n_zeros else np.array([1.0])
    gain = 10 ** rng.uniform(-0.5, 0.8) * (1 if rng.random() < 0.8 else -1)
    num = num * gain * den[-1] / num[-1]  # dc gain = gain
    fastest = max(abs(p) for p in poles)
    slowest = min(abs(np.real(p)) for p in poles)
    h = min(0.05, 0.25 / fastest)
    delay = h * (int(rng.integers(0, 25)) + (0.0 if i % 5 == 0 else rng.uniform(0.05, 0.95)))
    duration = 8.0 / slowest + delay
    return num, den, delay, h, duration


def inputs(rng, t, h):
    end = t[-1]
    steps = np.zeros_like(t)
    levels = [0.3, 1.3, -0.4, 0.8]
    times = [0.0, 0.1 * end + 0.37 * h, 0.45 * end, 0.7 * end + 0.5 * h]
    for level, at in zip(levels, times):
        steps[t >= at] = level
    bit = 7 * h
    bits = rng.integers(0, 2, int(end / bit) + 2)
    prbs = np.where(bits[np.floor((t - t[0]) / bit + 1e-9).astype(int)] == 1, 1.5, -0.5)
    column = rng.normal(0.0, 1.0, t.size)
    return {"steps": steps, "prbs": prbs, "column": column}


def realise(num, den):
    """Observer canonical form of num/den: (A, B, C, D) with A = [-a | I; 0], C = e1."""
    den = np.asarray(den, float)
    num = np.asarray(num, float)
    num, den = num / den[0], den / den[0]
    n = den.size - 1
    num = np.concatenate([np.zeros(n + 1 - num.size), num])
    d = num[0]
    rest = num[1:] - d * den[1:]
    a = np.zeros((n, n))
    if n:
        a[:, 0] = -den[1:]
    if n > 1:
        a[:n - 1, 1:] = np.eye(n - 1)
    b = rest.reshape(n, 1)
    c = np.zeros((1, n))
    if n:
        c[0, 0] = 1.0
    return a, b, c, np.array([[d]])


def sub_intervals(t, delay):
    """Sorted times of t and t + delay inside [t0, tN], merging points closer than 1e-9 h."""
    h = np.min(np.diff(t)) if t.size > 1 else 1.0
    pts = np.sort(np.concatenate([t, t[(t + delay) < t[-1]] + delay]))
    keep = [pts[0]]
    for p in pts[1:]:
        if p - keep[-1] > 1e-9 * h:
            keep.append(p)
    return np.array(keep), 1e-9 * h


def delayed_index(t, delay, s, tol):
    """Index j of the held input in force at time s for the delayed signal (-1: before t0)."""
    return int(np.searchsorted(t + delay, s + tol, side="right")) - 1


def reference_zoh(num, den, delay, t, u, cache):
    a, b, c, d = realise(num, den)
    n = a.shape[0]
    x = np.linalg.solve(a, -b[:, 0] * u[0]) if n else np.zeros(0)
    events, tol = sub_intervals(t, delay)
    value = lambda j: u[0] if j < 0 else u[j]
    y = np.empty(t.size)
    k = 0
    for e_i, s in enumerate(events):
        j = delayed_index(t, delay, s, tol)
        while k < t.size and abs(t[k] - s) <= tol:
            y[k] = (c @ x)[0] + d[0, 0] * value(j) if n else d[0, 0] * value(j)
            k += 1
        if e_i + 1 == events.size or n == 0:
            continue
        dt = events[e_i + 1] - s
        key = round(dt / tol)
        if key not in cache:
            cache[key] = signal.cont2discrete((a, b, c, d), dt, method="zoh")[:2]
        ad, bd = cache[key]
        x = ad @ x + bd[:, 0] * value(j)
    assert k == t.size
    return y


def reference_ivp(num, den, delay, t, u):
    a, b, c, d = realise(num, den)
    x = np.linalg.solve(a, -b[:, 0] * u[0])
    events, tol = sub_intervals(t, delay)
    value = lambda j: u[0] if j < 0 else u[j]
    y = np.empty(t.size)
    k = 0
    scale = max(1.0, np.max(np.abs(x)))
    for e_i, s in enumerate(events):
        j = delayed_index(t, delay, s, tol)
        while k < t.size and abs(t[k] - s) <= tol:
            y[k] = (c @ x)[0] + d[0, 0] * value(j)
            k += 1
        if e_i + 1 == events.size:
            continue
        v = value(j)
        sol = integrate.solve_ivp(lambda _, z: a @ z + b[:, 0] * v, (s, events[e_i + 1]), x,
                                  method="DOP853", rtol=1e-12, atol=1e-14 * scale)
        x = sol.y[:, -1]
    return y


def closed_loop_rational(num, den, knum, kden):
    """(Y/R, U/R) of unity negative feedback, as (num, den) pairs."""
    char = np.polyadd(np.polymul(den, kden), np.polymul(num, knum))
    return (np.polymul(num, knum), char), (np.polymul(knum, den), char)


def reference_dde(num, den, knum, kden, delay, t, r):
    """Method of steps for the loop with the dead time in the plant (plant strictly proper)."""
    ap, bp, cp, _ = realise(num, den)
    ac, bc, cc, dc = realise(knum, kden)
    np_, nc = ap.shape[0], ac.shape[0]
    a = np.zeros((np_ + nc, np_ + nc))
    a[:np_, :np_] = ap
    a[np_:, :np_] = -bc @ cp
    a[np_:, np_:] = ac
    cu = np.concatenate([-dc[0, 0] * cp[0], cc[0]])
    cy = np.concatenate([cp[0], np.zeros(nc)])
    # Equilibrium for r[0]: plant at rest for u0, controller at rest for e0.
    m = np.zeros((np_ + nc + 1, np_ + nc + 1))
    m[:np_ + nc, :np_ + nc] = a
    m[:np_, -1] = bp[:, 0]
    m[-1, :np_ + nc] = cu
    m[-1, -1] = -1.0
    rhs = np.zeros(np_ + nc + 1)
    rhs[np_:np_ + nc] = -bc[:, 0] * r[0]
    rhs[-1] = -dc[0, 0] * r[0]
    sol0 = np.linalg.solve(m, rhs)
    z = sol0[:-1]
    u_before = sol0[-1]
    events, tol = sub_intervals(t, delay)
    pieces = []  # (start, end, dense solution, r value)

    def u_at(s):
        # Before t0 the loop is at rest; the solver's trial evaluations may also look a little
        # past the newest piece, which is then extended.
        if s < t[0] or not pieces:
            return u_before
        lo, hi = 0, len(pieces) - 1
        while lo < hi:
            mid = (lo + hi + 1) // 2
            if pieces[mid][0] <= s:
                lo = mid
            else:
                hi = mid - 1
        start, end, dense, rv = pieces[lo]
        return cu @ dense(min(s, end)) + dc[0, 0] * rv

    y = np.empty(t.size)
    k = 0
    for e_i, s in enumerate(events):
        rk = r[int(np.searchsorted(t, s + tol, side="right")) - 1]
        while k < t.size and abs(t[k] - s) <= tol:
            y[k] = cy @ z
            k += 1
        if e_i + 1 == events.size:
            continue
        end = events[e_i + 1]
        bw = np.concatenate([bp[:, 0], np.zeros(nc)])
        br = np.concatenate([np.zeros(np_), bc[:, 0]])
        sol = integrate.solve_ivp(lambda x_, zz: a @ zz + br * rk + bw * u_at(x_ - delay),
                                  (s, end), z, method="DOP853", rtol=1e-11, atol=1e-13,
                                  dense_output=True)
        pieces.append((s, end, sol.sol, rk))
        z = sol.y[:, -1]
    return y


def pade_polys(delay, order=8):
    """[n/n] Padé approximant of exp(-T s) (closed form, e.g. Franklin, Powell & Emami-Naeini;
    from memory): numerator and denominator in descending powers."""
    c = [factorial(2 * order - k) * factorial(order)
         / (factorial(2 * order) * factorial(k) * factorial(order - k)) for k in range(order + 1)]
    num = [c[k] * (-delay) ** k for k in range(order + 1)][::-1]
    den = [c[k] * delay ** k for k in range(order + 1)][::-1]
    return np.array(num), np.array(den)


def stable_pi(num, den, delay, gain):
    """A PI zero and gain whose loop is stable by the Padé [8/8] closed-loop poles (margin 0.01
    of the slowest plant pole), halving the gain until it is."""
    slowest = min(abs(np.real(p)) for p in np.roots(den))
    zero = 0.3 * slowest
    gain = abs(gain) * np.sign(np.polyval(num, 0.0) / np.polyval(den, 0.0))  # K G(0) > 0
    pn, pd = pade_polys(delay)
    for _ in range(20):
        char = np.polyadd(np.polymul(np.polymul(den, [1.0, 0.0]), pd),
                          np.polymul(np.polymul(num, [gain, gain * zero]), pn))
        if np.max(np.real(np.roots(char))) < -0.01 * slowest:
            return zero, gain
        gain *= 0.5
    raise RuntimeError("no stable PI gain found")


def jittered(rng, h, end):
    steps = rng.uniform(0.3 * h, 1.7 * h, int(end / h * 1.2) + 10)
    t = np.concatenate([[0.0], np.cumsum(steps)])
    return t[t <= end]


def rel_err(y, ref):
    return float(np.max(np.abs(y - ref)) / max(np.ptp(ref), 1e-300))


def main():
    driver = sys.argv[1]
    rng = np.random.default_rng(20261201)
    failures = []
    rows = []
    for i in range(24):
        num, den, delay, h, duration = random_model(rng, i)
        grids = {"uniform": np.arange(int(duration / h) + 1) * h,
                 "jittered": jittered(rng, h, duration)}
        worst = {}
        for grid_name, t in grids.items():
            cache = {}
            for input_name, u in inputs(rng, t, h).items():
                y = run_driver(driver, num, den, delay, t, u)
                err = rel_err(y, reference_zoh(num, den, delay, t, u, cache))
                worst[grid_name] = max(worst.get(grid_name, 0.0), err)
                if err > TOL_EXACT:
                    failures.append(f"model {i} {grid_name} {input_name}: {err:.2e}")
                if i < 5 and grid_name == "uniform" and input_name == "steps":
                    err_ivp = rel_err(y, reference_ivp(num, den, delay, t, u))
                    worst["ivp"] = err_ivp
                    if err_ivp > TOL_IVP:
                        failures.append(f"model {i} solve_ivp: {err_ivp:.2e}")
        # Closed loop with a proportional controller whose gain keeps |K G| < 0.5 (stable for
        # any dead time by the small-gain theorem).
        w = np.logspace(-3, 3, 2000)
        peak = np.max(np.abs(np.polyval(num, 1j * w) / np.polyval(den, 1j * w)))
        kp = 0.5 / peak
        t = grids["uniform"]
        r = inputs(rng, t, h)["steps"]
        (yn, yd), (un, ud) = closed_loop_rational(num, den, [kp], [1.0])
        y0, u0 = run_driver(driver, num, den, 0.0, t, r, closed=("p", kp))
        cache = {}
        err_cl0 = max(rel_err(y0, reference_zoh(yn, yd, 0.0, t, r, cache)),
                      rel_err(u0, reference_zoh(un, ud, 0.0, t, r, {})))
        if err_cl0 > TOL_EXACT:
            failures.append(f"model {i} closed loop T=0: {err_cl0:.2e}")
        err_dde = err_pi = float("nan")
        if i < 5 and len(num) < len(den) and delay > 0:
            yc, _ = run_driver(driver, num, den, delay, t, r, closed=("p", kp))
            err_dde = rel_err(yc, reference_dde(num, den, [kp], [1.0], delay, t, r))
            if i < 3:  # and a PI loop, whose controller has a state
                z_pi, k_pi = stable_pi(num, den, delay, kp)
                yc, _ = run_driver(driver, num, den, delay, t, r, closed=(f"pi:{z_pi!r}", k_pi))
                ref = reference_dde(num, den, [k_pi, k_pi * z_pi], [1.0, 0.0], delay, t, r)
                err_pi = rel_err(yc, ref)
            if max(err_dde, 0.0 if np.isnan(err_pi) else err_pi) > TOL_DDE:
                failures.append(f"model {i} closed loop with dead time: P {err_dde:.2e}, "
                                f"PI {err_pi:.2e}")
        rows.append((i, len(den) - 1, len(num) - 1, delay / h, len(t), worst["uniform"],
                     worst["jittered"], worst.get("ivp", float("nan")), err_cl0, err_dde, err_pi))

    print(f"{'model':>5} {'order':>5} {'zeros':>5} {'T/h':>7} {'samples':>7} "
          f"{'uniform':>10} {'jittered':>10} {'solve_ivp':>10} {'loop T=0':>10} {'P DDE':>10} "
          f"{'PI DDE':>10}")
    for row in rows:
        print(f"{row[0]:5d} {row[1]:5d} {row[2]:5d} {row[3]:7.3f} {row[4]:7d} "
              + " ".join(f"{v:10.2e}" for v in row[5:]))
    print("max errors relative to the output range; exact routes must stay below "
          f"{TOL_EXACT:g}, solve_ivp below {TOL_IVP:g}, the delayed loop below {TOL_DDE:g}")
    if failures:
        print("FAILED:\n  " + "\n  ".join(failures))
        return 1
    print(f"all {len(rows)} models agree")
    return 0


if __name__ == "__main__":
    sys.exit(main())
