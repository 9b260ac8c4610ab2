#!/usr/bin/env python3
"""Reference check of `loopwright band`'s exact locus band against a brute-force sweep.

For plants of our own, the closed-loop poles are computed independently with numpy.roots at
5000 log-spaced gains, judged with the region written out again here from the published
second-order formulas (Franklin, Powell & Emami-Naeini, Feedback Control of Dynamic Systems,
ch. 3; from memory), and every change of verdict in the sweep must match an edge of
loopwright's band within the sweep's resolution (one gain step), and vice versa. Each edge's
pole must also satisfy its boundary equation and the characteristic equation to 1e-9.

usage: design_sweep.py LOOPWRIGHT [--time]   (--time also prints the sweep's run time)
"""
import functools
import json
import math
import subprocess
import sys
import time

import numpy as np

# (formula for the CLI, num, den, delay, controller, spec arguments)
CASES = [
    ("3/((s+1)*(0.4*s+1)*(0.1*s+1))", [3.0], np.polymul(np.polymul([1, 1], [0.4, 1]), [0.1, 1]),
     0.0, "p", {"overshoot_max": 15.0, "rise_max": 0.8}),
    ("1.5*exp(-0.2*s)/((2*s+1)*(0.5*s+1))", [1.5], np.polymul([2, 1], [0.5, 1]), 0.2, "pi:0.4",
     {"zeta_min": 0.5, "settle_max": 20.0}),
    ("2/(s*(0.5*s+1)*(0.05*s+1))", [2.0], np.polymul(np.polymul([1, 0], [0.5, 1]), [0.05, 1]),
     0.0, "lead:3:15", {"wn_min": 1.5, "overshoot_max": 30.0, "peak_max": 3.0}),
    ("(0.5*s+1)/((s+0.3)*(s^2+0.8*s+4))", [0.5, 1.0], np.polymul([1, 0.3], [1, 0.8, 4]), 0.0,
     "p", {"zeta_min": 0.3}),
    ("4/((3*s+1)*(s+1)*(0.2*s+1))", [4.0], np.polymul(np.polymul([3, 1], [1, 1]), [0.2, 1]),
     0.0, "pid:0.5:1:20", {"overshoot_max": 10.0, "settle_max": 6.0, "decay_min": 0.5}),
    ("0.8*exp(-0.5*s)/(s*(s+1))", [0.8], [1, 1, 0], 0.5, "p", {"zeta_min": 0.6}),
    # High order with dead time (the benchmark's size): a lightly damped pair and eight lags.
    ("2*exp(-0.3*s)/((0.0625*s^2+0.15*s+1)*(0.5*s+1)*(0.4*s+1)*(0.3*s+1)*(0.25*s+1)"
     "*(0.2*s+1)*(0.15*s+1)*(0.1*s+1)*(0.05*s+1))", [2.0],
     np.polymul([0.0625, 0.15, 1], functools.reduce(np.polymul, [[t, 1] for t in (
         0.5, 0.4, 0.3, 0.25, 0.2, 0.15, 0.1, 0.05)])),
     0.3, "pi:0.3", {"overshoot_max": 20.0}),
    ("1.2*exp(-0.1*s)*(0.3*s+1)/((s+1)*(0.6*s+1)*(0.09*s^2+0.36*s+1)*(0.2*s+1)*(0.1*s+1))",
     [0.36, 1.2], np.polymul(np.polymul(np.polymul([1, 1], [0.6, 1]), [0.09, 0.36, 1]),
                             np.polymul([0.2, 1], [0.1, 1])),
     0.1, "pid:0.5:2:20", {"wn_min": 0.3, "zeta_min": 0.4, "decay_min": 0.2}),
]
PADE = 3
SWEEP = 5000  # gains per plant (the benchmark, tests/bench/bench_band.py, times 20 000)
OPTION = {"overshoot_max": "--overshoot-max", "rise_max": "--rise-max", "zeta_min": "--zeta-min",
          "settle_max": "--settle-max", "wn_min": "--wn-min", "peak_max": "--peak-max",
          "decay_min": "--decay-min"}


def pade(delay, n):
    """[n/n] approximant of exp(-T s): P(-Ts)/P(Ts), P(x) = sum (2n-k)! n!/((2n)! k! (n-k)!) x^k."""
    f = math.factorial
    c = [f(2 * n - k) * f(n) / (f(2 * n) * f(k) * f(n - k)) * delay ** k for k in range(n + 1)]
    den = c[::-1]
    num = [(-1) ** k * c[k] for k in range(n + 1)][::-1]
    return num, den


def controller_shape(text):
    parts = text.split(":")
    v = [float(x) for x in parts[1:]]
    if parts[0] == "p":
        return [1.0], [1.0]
    if parts[0] == "pi":
        return [1.0, v[0]], [1.0, 0.0]
    if parts[0] == "lead":
        return [1.0, v[0]], [1.0, v[1]]
    return np.polymul([1.0, v[0]], [1.0, v[1]]), [1.0, v[2], 0.0]


def region(specs):
    r = {"wn": 0.0, "zeta": 0.0, "sigma": 0.0, "wd": 0.0, "decay": specs.get("decay_min", 0.0)}
    if "rise_max" in specs:
        r["wn"] = max(r["wn"], 1.8 / specs["rise_max"])
    if "wn_min" in specs:
        r["wn"] = max(r["wn"], specs["wn_min"])
    if "overshoot_max" in specs:
        l = math.log(specs["overshoot_max"] / 100.0)
        r["zeta"] = max(r["zeta"], -l / math.sqrt(math.pi ** 2 + l * l))
    if "zeta_min" in specs:
        r["zeta"] = max(r["zeta"], specs["zeta_min"])
    if "settle_max" in specs:
        r["sigma"] = 4.0 / specs["settle_max"]  # 2 % band
    if "peak_max" in specs:
        r["wd"] = math.pi / specs["peak_max"]
    return r


def meets(roots, r):
    i = int(np.argmax(roots.real + 1e-15 * roots.imag))
    d = roots[i]
    if d.real >= 0:
        return False
    wn = abs(d)
    if wn < r["wn"] or -d.real < r["zeta"] * wn or -d.real < r["sigma"] or abs(d.imag) < r["wd"]:
        return False
    if r["decay"] > 0:
        others = np.delete(roots, i)
        if abs(d.imag) > 0:
            j = int(np.argmin(abs(others - np.conj(d))))
            others = np.delete(others, j)
        if np.any(-others.real < r["decay"]):
            return False
    return True


def on_boundary(kind, p, r):
    tol = 1e-9
    if kind == "imaginary_axis":
        return abs(p.real) <= tol * max(1.0, abs(p))
    if kind == "wn_circle":
        return abs(abs(p) - r["wn"]) <= tol * r["wn"]
    if kind == "zeta_ray":
        return abs(-p.real / abs(p) - r["zeta"]) <= tol
    if kind == "sigma_line":
        return abs(-p.real - r["sigma"]) <= tol * r["sigma"]
    if kind == "decay_line":
        return abs(-p.real - r["decay"]) <= tol * r["decay"]
    if kind == "wd_line":
        return abs(abs(p.imag) - r["wd"]) <= tol * r["wd"]
    return True  # dominance switch, open ends


def main():
    exe = sys.argv[1]
    show_time = "--time" in sys.argv
    failures = 0
    for formula, num, den, delay, ctrl, specs in CASES:
        args = [exe, "band", "--plant", formula, "--controller", ctrl, "--pade", str(PADE),
                "--json"]
        for k, v in specs.items():
            args += [OPTION[k], repr(v)]
        out = subprocess.run(args, capture_output=True, text=True)
        if out.returncode != 0:
            print(f"FAIL {formula} {ctrl}: exit {out.returncode}: {out.stderr.strip()}")
            failures += 1
            continue
        doc = json.loads(out.stdout)
        nc, dc = controller_shape(ctrl)
        n_, d_ = np.array(num, float), np.array(den, float)
        if delay > 0:
            pn, pd = pade(delay, PADE)
            n_, d_ = np.polymul(n_, pn), np.polymul(d_, pd)
        a = np.polymul(d_, dc)
        b = np.polymul(n_, nc)
        r = region(specs)
        edges = []
        for iv in doc["edges"]["locus"]:
            for side in ("lo", "hi"):
                e = iv[side]
                if e["gain"] is None or e["gain"] == 0:
                    continue
                edges.append(e)
                if e["pole"] is not None:
                    p = complex(*e["pole"])
                    res = abs(np.polyval(a, p) + e["gain"] * np.polyval(b, p))
                    size = abs(np.polyval(a, p)) + e["gain"] * abs(np.polyval(b, p))
                    if res > 1e-9 * size or not on_boundary(e["boundary"], p, r):
                        print(f"FAIL {formula} {ctrl}: edge {e} misses its boundary "
                              f"(residual {res / size:.2e})")
                        failures += 1
        finite = [e["gain"] for e in edges]
        lo = min(finite) / 100 if finite else 1e-3
        hi = max(finite) * 100 if finite else 1e3
        gains = np.logspace(math.log10(lo), math.log10(hi), SWEEP)
        t0 = time.perf_counter()
        verdict = np.array([meets(np.roots(np.polyadd(a, k * b)), r) for k in gains])
        elapsed = time.perf_counter() - t0
        changes = np.nonzero(verdict[1:] != verdict[:-1])[0]
        step = gains[1] / gains[0]
        # Every sweep transition has a loopwright edge inside its bracket (one step of slack).
        for i in changes:
            if not any(gains[i] / step <= g <= gains[i + 1] * step for g in finite):
                print(f"FAIL {formula} {ctrl}: sweep changes verdict between {gains[i]:.6g} and "
                      f"{gains[i + 1]:.6g} but loopwright has no edge there (edges {finite})")
                failures += 1
        # Every loopwright edge is a sweep transition within one step.
        for g in finite:
            if not any(gains[i] / step <= g <= gains[i + 1] * step for i in changes):
                print(f"FAIL {formula} {ctrl}: loopwright edge {g:.9g} is not a verdict change "
                      f"of the sweep")
                failures += 1
        band = doc["bands"]["locus"]
        msg = f"ok   {formula} {ctrl} {specs}: locus band {band}, {len(changes)} sweep changes"
        if show_time:
            msg += f", sweep {elapsed * 1e3:.0f} ms"
        print(msg)
    if failures:
        print(f"{failures} failure(s)")
        sys.exit(1)


if __name__ == "__main__":
    main()
