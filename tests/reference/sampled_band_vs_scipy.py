#!/usr/bin/env python3
"""Reference check of `loopwright band --sample-time`: the sampled loop's response band against
scipy.signal.cont2discrete.

The loop the band designs with a sample time T: the error e = r - y sampled every T and held,
driving K C(s)/K G(s) exp(-m T s) (controller shape lumped with the plant after the hold; here
the dead time a whole number m of periods). Written out again here, independently of
loopwright: shape(s) G(s) is discretised with scipy.signal.cont2discrete (zero-order hold) on
a fine step h = T / 20, run as a state recursion from rest, the held input updated every 20
fine steps from the output sampled then (the dead time a shift of 20 m fine steps). The
overshoot and the 2 % settling time are read off the fine response (final value from the
closed-loop DC gain). For plants of our own, at each edge loopwright reports, the gain 1 %
inside must meet the limiting spec and the gain 1 % outside must break it (or be unstable).

usage: sampled_band_vs_scipy.py LOOPWRIGHT
"""
import json
import subprocess
import sys

import numpy as np
from scipy.signal import TransferFunction, cont2discrete

FINE = 20
# (formula, rational num, den, whole periods of dead time, controller, shape num, den, T, specs)
CASES = [
    ("1.5*exp(-0.4*s)/((4*s+1)*(s+1))", [1.5], np.polymul([4, 1], [1, 1]), 2, "pi:0.3",
     [1, 0.3], [1, 0], 0.2, {"--overshoot-max": 15.0, "--settle-max": 25.0}),
    ("3/((2*s+1)*(0.5*s+1)*(0.2*s+1))", [3.0], np.polymul(np.polymul([2, 1], [0.5, 1]), [0.2, 1]),
     0, "p", [1], [1], 0.25, {"--overshoot-max": 20.0}),
    ("0.7*exp(-1.5*s)/(6*s+1)", [0.7], [6, 1], 3, "pi:0.15", [1, 0.15], [1, 0], 0.5,
     {"--overshoot-max": 5.0, "--settle-max": 60.0}),
    # A period far longer than the plant's lags: the sampled band lies a decade below the
    # continuous loop's (whose scan range alone missed it).
    ("2*exp(-20*s)/((5*s+1)*(s+1))", [2.0], np.polymul([5, 1], [1, 1]), 1, "p", [1], [1], 20.0,
     {"--overshoot-max": 10.0}),
]


def step(num, den, m, period, gain, duration):
    """Fine-grid y of the sampled loop's unit step; also the DC value of y."""
    ss = TransferFunction(num, den).to_ss()
    a, b, c, d = ss.A, ss.B, ss.C, ss.D
    h = period / FINE
    ad, bd, cd, dd, _ = cont2discrete((a, b, c, d), h, method="zoh")
    n = int(np.ceil(duration / h)) + 1
    x = np.zeros((ad.shape[0], 1))
    delay = m * FINE
    u_hist = np.zeros(n + delay)  # the held error, fine steps, before the delay
    y = np.zeros(n)
    held = 0.0
    for k in range(n):
        w = u_hist[k - delay] if k >= delay else 0.0  # delayed held input now
        y[k] = (cd @ x).item() + dd.item() * gain * w
        if k % FINE == 0:
            held = 1.0 - y[k]
        u_hist[k] = held
        w = u_hist[k - delay] if k >= delay else 0.0
        x = ad @ x + bd * gain * w
    dc = np.polyval(num, 0) / np.polyval(den, 0) if np.polyval(den, 0) != 0 else np.inf
    final = 1.0 if np.isinf(dc) else gain * dc / (1 + gain * dc)
    return np.arange(n) * h, y, final


def judge(num, den, m, period, gain, specs):
    t, y, final = step(num, den, m, period, gain, max(600.0, 60.0 * period))
    if not np.all(np.isfinite(y)) or np.max(np.abs(y)) > 1e6:
        return {"unstable": True}
    tail = y[int(0.9 * len(y)):]
    if np.max(np.abs(tail - final)) > 0.02 * abs(final):
        return {"unstable": True}
    over = max(0.0, 100.0 * (np.max(y) - final) / final)
    out = np.nonzero(np.abs(y - final) > 0.02 * abs(final))[0]
    settle = t[out[-1] + 1] if len(out) else 0.0
    return {"unstable": False, "overshoot": over, "settling": settle}


def breaks(r, limiting, specs):
    if r["unstable"]:
        return True
    if limiting == "overshoot":
        return r["overshoot"] > specs["--overshoot-max"]
    if limiting == "settling":
        return r["settling"] > specs["--settle-max"]
    if limiting in ("unstable", "not settled"):
        return r["unstable"]
    raise ValueError(limiting)


def main():
    exe = sys.argv[1]
    failures = 0
    for formula, num, den, m, ctrl, snum, sden, period, specs in CASES:
        args = [exe, "band", "--plant", formula, "--controller", ctrl, "--sample-time",
                str(period), "--json"]
        for k, v in specs.items():
            args += [k, str(v)]
        out = subprocess.run(args, capture_output=True, text=True)
        if out.returncode != 0:
            print(f"FAIL {formula}: exit {out.returncode}: {out.stderr.strip()}")
            failures += 1
            continue
        doc = json.loads(out.stdout)
        lnum, lden = np.polymul(snum, num), np.polymul(sden, den)
        edges = doc["discrete"]["response_edges"]
        if not edges:
            print(f"FAIL {formula}: no sampled response band")
            failures += 1
        for e in edges:
            for side, inward, outward in (("lo", 1.01, 0.99), ("hi", 0.99, 1.01)):
                g, limiting = e[side]["gain"], e[side]["limiting"]
                if g is None or g == 0 or not limiting:
                    continue  # an open end
                inside = judge(lnum, lden, m, period, g * inward, specs)
                outside = judge(lnum, lden, m, period, g * outward, specs)
                ok = (not inside["unstable"] and not breaks(inside, limiting, specs)
                      and breaks(outside, limiting, specs))
                print(f"{'ok  ' if ok else 'FAIL'} {formula} {ctrl} T={period}: {side} edge "
                      f"K = {g:.6g} ({limiting}); scipy 1 % inside {inside}, outside {outside}")
                failures += not ok
    print("all sampled band edges agree with scipy" if not failures else f"{failures} failures")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
