#!/usr/bin/env python3
"""Runs bench_band and prints its medians beside a brute-force numpy sweep of 20 000 gains
(numpy.roots at each gain, the same region test) on the same loop polynomials.

usage: bench_band.py BENCH_BAND_EXE
"""
import json
import subprocess
import sys
import time

import numpy as np


def sweep(a, b, zeta_min, gains):
    ok = 0
    for k in gains:
        r = np.roots(np.polyadd(a, k * b))
        d = r[np.argmax(r.real)]
        ok += d.real < 0 and -d.real >= zeta_min * abs(d)
    return ok


def main():
    out = subprocess.run([sys.argv[1]], capture_output=True, text=True, check=True)
    rows = [json.loads(line) for line in out.stdout.splitlines() if line.strip()]
    print("gain-band benchmark (medians; plants of our own with 0.3 s dead time, Padé 3, pi:0.3, "
          "overshoot <= 20 %)")
    print(f"{'order':>5} {'locus ms':>9} {'numpy sweep ms':>15} {'sweep/locus':>12} "
          f"{'response ms':>12} {'sims':>5} {'robust500 ms':>13}  budget 1 / 100 / 2000 ms")
    for r in rows:
        a, b = np.array(r["a"]), np.array(r["b"])
        gains = np.logspace(-3, 3, 20000)
        t0 = time.perf_counter()
        sweep(a, b, r["zeta_min"], gains)
        numpy_ms = (time.perf_counter() - t0) * 1e3
        print(f"{r['order']:>5} {r['locus_ms']:>9.3f} {numpy_ms:>15.0f} "
              f"{numpy_ms / r['locus_ms']:>12.0f} {r['response_ms']:>12.1f} "
              f"{r['simulations']:>5} {r['robust_ms']:>13.0f}")
    for r in rows:
        print(f"  order {r['order']}: locus {r['locus']}, response {r['response']}")


if __name__ == "__main__":
    main()
