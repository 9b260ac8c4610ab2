"""Benchmark of `fit` against scipy.optimize.least_squares fitting the same structure (sopdt)
to the same data: one step recording with white noise (2 % of the step), 10^4 and 10^5 samples.

scipy is given its best case: the closed-form sopdt step response (valid for this single-step
recording) vectorised in numpy, bounds, default trust-region reflective method, started from
the same model-free two-point estimates loopwright computes. loopwright runs its whole pipeline
(recording analysis, starting values, multi-start, exact-kernel polish on every sample,
covariance). Prints a table: medians, the ratio, the parameter errors against the truth and the
residual sums of squares (equal or better accuracy means loopwright's RSS <= scipy's), and the
peak memory loopwright's fit added per sample. Timings are printed, never judged.

Usage: bench_fit.py BENCH_FIT_BINARY WORKDIR"""
import json
import os
import subprocess
import sys
import time

import numpy as np
from scipy.optimize import least_squares

TRUE = np.array([1.7, 6.0, 1.5, 0.75])  # gain, tau1, tau2, dead time
STEP_AT, DU, Y0 = 2.0, 3.0, 12.0


def model(p, t):
    k, t1, t2, dead = p
    s = np.maximum(t - STEP_AT - dead, 0.0)
    if abs(t1 - t2) < 1e-9 * t1:
        t2 = t1 * (1 - 1e-9)
    shape = 1 - (t1 * np.exp(-s / t1) - t2 * np.exp(-s / t2)) / (t1 - t2)
    return Y0 + DU * k * np.where(s > 0, shape, 0.0)


def scipy_fit(t, y, start):
    def resid(q):
        return Y0 * 0 + q[4] + model(q[:4], t) - Y0 - y

    x0 = np.concatenate([start, [Y0]])
    lo = [-np.inf, 1e-6, 1e-6, 0.0, -np.inf]
    hi = [np.inf, np.inf, np.inf, t[-1], np.inf]
    t0, c0 = time.perf_counter(), time.process_time()
    r = least_squares(resid, x0, bounds=(lo, hi), x_scale="jac")
    dt, dc = time.perf_counter() - t0, time.process_time() - c0
    p = r.x[:4].copy()
    if p[1] < p[2]:
        p[1], p[2] = p[2], p[1]
    return dt, dc, p, float(np.sum(r.fun ** 2))


def two_point(t, y):
    # Smith's 28.3 % / 63.2 % method (the same starting values loopwright derives).
    f = (y - Y0) / (y[-len(y) // 10:].mean() - Y0)
    after = t >= STEP_AT
    t28 = t[after][np.argmax(f[after] >= 0.283)] - STEP_AT
    t63 = t[after][np.argmax(f[after] >= 0.632)] - STEP_AT
    tau = 1.5 * (t63 - t28)
    k = (y[-len(y) // 10:].mean() - Y0) / DU
    return np.array([k, 0.7 * tau, 0.3 * tau, max(t63 - tau, 0.0)])


def main():
    binary, out = sys.argv[1], sys.argv[2]
    os.makedirs(out, exist_ok=True)
    rng = np.random.default_rng(99)
    rows = []
    for n in (10_000, 100_000):
        t = np.linspace(0.0, 60.0, n)
        u = np.where(t >= STEP_AT, DU, 0.0)
        # The first sample at or after the step carries it: make the step time a sample time.
        i = np.argmax(t >= STEP_AT)
        global_step = t[i]
        y = model(TRUE, t + (STEP_AT - global_step)) + rng.normal(0.0, 0.02 * DU * TRUE[0], n)
        path = os.path.join(out, f"sopdt_{n}.csv")
        with open(path, "w") as f:
            f.write("t,u,y\n")
            for a, b, c in zip(t, u, y):
                f.write(f"{a!r},{b!r},{c!r}\n")
        ours = json.loads(subprocess.run([binary, path, "sopdt", "7"], capture_output=True,
                                         text=True, check=True).stdout)
        yy = y.copy()
        tt = t + (STEP_AT - global_step)
        times, cpus, res = [], [], None
        for _ in range(3):
            dt, dc, p, rss = scipy_fit(tt, yy, two_point(tt, yy))
            times.append(dt)
            cpus.append(dc)
            res = (p, rss)
        rows.append((n, ours, float(np.median(times)), float(np.median(cpus)), res))
    print(f"{'samples':>8} {'ours wall':>10} {'ours cpu':>9} {'scipy wall':>11} {'scipy cpu':>10} "
          f"{'cpu ratio':>9} {'max param err ours':>19} {'scipy':>7} {'RSS ours/scipy':>15} "
          f"{'peak B/sample':>14}")
    for n, ours, st, sc, (sp, srss) in rows:
        err_o = np.max(np.abs(np.array(ours["parameters"]) - TRUE) / TRUE)
        err_s = np.max(np.abs(sp - TRUE) / TRUE)
        print(f"{n:8d} {1000 * ours['median_s']:7.1f} ms {1000 * ours['median_cpu_s']:6.1f} ms "
              f"{1000 * st:8.1f} ms {1000 * sc:7.1f} ms {sc / ours['median_cpu_s']:8.1f}x "
              f"{100 * err_o:18.3f}% {100 * err_s:6.3f}% {ours['rss'] / srss:15.8f} "
              f"{ours['peak_bytes_per_sample']:14.1f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
