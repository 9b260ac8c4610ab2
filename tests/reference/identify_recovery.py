"""Recovery of every structure from data made by scipy (identify_reference.py).

Noise-free, one step: every parameter within 0.1 %.
With white noise of standard deviation 2 % of the output's step size (|K| times the input step):
gain and time constants (zeta and wn for underdamped, the zero's time constant too) within 3 %
and the dead time within one sample period. How precisely a recording determines a parameter
depends on how much it holds, so the noisy test is a longer one, a square wave of many steps
(the fit uses every step), sized so that 3 % is at least 3 of the fit's own standard errors.

Structure choice (--structure auto): on AUTO_RECORDS one-step records of each plant with 2 %
noise, the near-tie rule (identify/structure_selection.h: the fewest parameters within delta
AICc 2 of the smallest) must pick the true structure at least as often as the plain smallest
AICc (--simpler-within 0) and never less than AUTO_MIN of the time.

Usage: identify_recovery.py LOOPWRIGHT_BINARY WORKDIR"""
import os
import sys

import numpy as np

from identify_reference import (held_response, params_of, run_fit, step_response, structure_tf,
                                workdir, write_csv)

# Plants of our own: (structure, parameters in the structure's order, sample period, duration
# of the one-step test, step time, input from -> to, output baseline, square-wave half period
# and number of periods of the noisy test).
CASES = [
    ("fopdt", [2.4, 7.5, 1.35], 0.1, 60.0, 5.0, (10.0, 14.0), 20.0, 40.0, 10),
    ("sopdt", [-1.6, 9.0, 2.5, 0.85], 0.1, 90.0, 5.0, (0.0, 3.0), 41.0, 40.0, 60),
    ("underdamped", [0.75, 0.32, 1.4, 0.42], 0.05, 30.0, 2.0, (5.0, 9.0), -3.0, 12.0, 10),
    ("integrating", [0.12, 3.2, 1.1], 0.1, 40.0, 4.0, (50.0, 55.0), 7.5, 15.0, 40),
    ("sopdt-zero", [1.3, 6.0, 1.8, -2.1, 0.6], 0.1, 70.0, 5.0, (20.0, 24.0), 12.0, 30.0, 60),
]
AUTO_RECORDS = 20
AUTO_MIN = 0.75
NAMES = {
    "fopdt": ["gain", "time_constant", "dead_time"],
    "sopdt": ["gain", "time_constant_1", "time_constant_2", "dead_time"],
    "underdamped": ["gain", "damping_ratio", "natural_frequency", "dead_time"],
    "integrating": ["gain", "time_constant", "dead_time"],
    "sopdt-zero": ["gain", "time_constant_1", "time_constant_2", "zero_time_constant", "dead_time"],
}


def one_step(case):
    """The noise-free one-step test of a CASES row: t, u (u0 then u1 from ts) and y (y0 at
    rest)."""
    name, p, h, dur, ts, (u0, u1), y0 = case[:7]
    num, den = structure_tf(name, p)
    t = np.round(np.arange(0.0, dur + h / 2, h), 10)
    u = np.where(t >= ts, u1, u0)
    return t, u, y0 + (u1 - u0) * step_response(num, den, p[-1], t, ts)


def main():
    binary, out = sys.argv[1], workdir(sys.argv[2])
    rng = np.random.default_rng(20261201)
    failures = []
    print(f"{'structure':12} {'noise':6} {'parameter':20} {'true':>10} {'fitted':>12} {'error':>10} "
          f"{'fit sd':>10}  limit")
    for name, p, h, dur, ts, (u0, u1), y0, half, periods in CASES:
        num, den = structure_tf(name, p)
        for noisy in (False, True):
            if not noisy:
                t, u, y = one_step((name, p, h, dur, ts, (u0, u1), y0))
            else:
                t = np.round(np.arange(0.0, ts + 2 * half * periods + h / 2, h), 10)
                phase = np.floor((t - ts) / half).astype(int) % 2
                low = 2 * u0 - u1 if name == "integrating" else u0  # bounded for an integrator
                u = np.where(t < ts, u0, np.where(phase == 0, u1, low))
                y = y0 + held_response(num, den, p[-1], h, u - u0)
                y = y + rng.normal(0.0, 0.02 * abs(p[0] * (u1 - u0)), len(t))
            path = os.path.join(out, f"{name}_{'noisy' if noisy else 'clean'}.csv")
            write_csv(path, t, u, y)
            status, doc, err = run_fit(binary, path, "--structure", name)
            if status != 0:
                failures.append(f"{name} noisy={noisy}: exit {status}: {err.strip()}")
                continue
            fitted = params_of(doc)
            for i, pname in enumerate(NAMES[name]):
                true, got = p[i], fitted[pname]["value"]
                lo, hi = fitted[pname]["ci95"]
                sd = (hi - lo) / 3.92 if lo is not None else float("nan")
                if pname == "dead_time":
                    err_v = abs(got - true)
                    limit = 1e-3 * true if not noisy else h
                    shown = f"{err_v:.2e} s"
                    sd_txt = f"{sd:.2e} s"
                    lim_txt = f"{limit:.3g} s"
                else:
                    err_v = abs(got - true) / abs(true)
                    limit = 1e-3 if not noisy else 0.03
                    shown = f"{100 * err_v:.4f} %"
                    sd_txt = f"{100 * sd / abs(true):.4f} %"
                    lim_txt = f"{100 * limit:.3g} %"
                ok = err_v <= limit
                print(f"{name:12} {'2 %' if noisy else 'none':6} {pname:20} {true:10.4g} {got:12.6g} "
                      f"{shown:>10} {sd_txt:>10}  {lim_txt}{'' if ok else '  FAIL'}")
                if not ok:
                    failures.append(f"{name} noisy={noisy} {pname}: {got} vs {true}")
    failures += structure_choice(binary, out)
    if failures:
        print("\n".join(["FAILURES:"] + failures))
        return 1
    print("all structures recovered within the limits")
    return 0


def structure_choice(binary, out):
    """Counts how often auto picks the true structure, plain AICc against the near-tie rule."""
    rng = np.random.default_rng(20261202)
    failures = []
    print(f"\n{'true':12} {'plain AICc':>10} {'near-tie rule':>14}  (true structure picked, of "
          f"{AUTO_RECORDS} one-step records with 2 % noise)")
    for case in CASES:
        name, scale = case[0], 0.02 * abs(case[1][0] * (case[5][1] - case[5][0]))
        t, u, clean = one_step(case)
        hits = {"0": 0, "2": 0}
        for r in range(AUTO_RECORDS):
            path = os.path.join(out, f"{name}_auto_{r}.csv")
            write_csv(path, t, u, clean + rng.normal(0.0, scale, len(t)))
            for width in hits:
                status, doc, err = run_fit(binary, path, "--simpler-within", width)
                if status != 0:
                    failures.append(f"{name} auto record {r}: exit {status}: {err.strip()}")
                    continue
                hits[width] += doc["structure"] == name
        ok = hits["2"] >= hits["0"] and hits["2"] >= AUTO_MIN * AUTO_RECORDS
        print(f"{name:12} {hits['0']:10} {hits['2']:14}{'' if ok else '  FAIL'}")
        if not ok:
            failures.append(f"{name} auto: the rule picked it {hits['2']} times, plain AICc "
                            f"{hits['0']} (of {AUTO_RECORDS})")
    return failures


if __name__ == "__main__":
    sys.exit(main())
