"""Honest intervals: over 200 noise realisations of one sopdt plant (noise-free response made by
scipy, identify_reference.py), the 95 % intervals `loopwright fit` reports must contain the true
value in 90-99 % of the realisations, for every parameter.

Usage: identify_coverage.py LOOPWRIGHT_BINARY WORKDIR [REALISATIONS]"""
import os
import sys

import numpy as np

from identify_reference import params_of, run_fit, step_response, structure_tf, workdir, write_csv

STRUCTURE = "sopdt"
TRUE = {"gain": 1.8, "time_constant_1": 5.5, "time_constant_2": 1.6, "dead_time": 0.9}


def main():
    binary, out = sys.argv[1], workdir(sys.argv[2])
    runs = int(sys.argv[3]) if len(sys.argv) > 3 else 200
    h, dur, ts, du, base = 0.1, 45.0, 3.0, 2.0, 15.0
    t = np.round(np.arange(0.0, dur + h / 2, h), 10)
    u = np.where(t >= ts, du, 0.0)
    p = [TRUE["gain"], TRUE["time_constant_1"], TRUE["time_constant_2"], TRUE["dead_time"]]
    num, den = structure_tf(STRUCTURE, p)
    clean = base + du * step_response(num, den, p[-1], t, ts)
    sd = 0.02 * abs(TRUE["gain"] * du)
    rng = np.random.default_rng(5150)
    inside = {k: 0 for k in TRUE}
    done = 0
    path = os.path.join(out, "coverage.csv")
    for _ in range(runs):
        write_csv(path, t, u, clean + rng.normal(0.0, sd, len(t)))
        status, doc, err = run_fit(binary, path, "--structure", STRUCTURE)
        if status != 0:
            print(f"fit failed: {err.strip()}")
            return 1
        got = params_of(doc)
        for k, v in TRUE.items():
            lo, hi = got[k]["ci95"]
            if lo is not None and hi is not None and lo <= v <= hi:
                inside[k] += 1
        done += 1
    ok = True
    print(f"{'parameter':18} {'coverage':>9}  (target 90-99 % over {done} realisations)")
    for k, n_in in inside.items():
        frac = n_in / done
        flag = "" if 0.90 <= frac <= 0.99 else "  FAIL"
        ok &= not flag
        print(f"{k:18} {100 * frac:8.1f} %{flag}")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
