#!/usr/bin/env python3
"""Runs bench_band and prints its medians beside a brute-force numpy sweep of 20 000 gains
(numpy.roots at each gain, the same region test) on the same loop polynomials.

usage: bench_band.py BENCH_BAND_EXE
"""
import json
import os
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
          "overshoot <= 20 %; robust band: 500 draws on 2 threads)")
    print("ratio = numpy sweep time / loopwright time (> 1: loopwright is faster); "
          "budgets 1 ms locus, 100 ms response, 2000 ms robust")
    head = (f"{'order':>5} {'numpy ms':>9} {'locus ms':>9} {'ratio':>7} {'response ms':>12} "
            f"{'ratio':>7} {'sims':>5} {'robust ms':>10} {'ratio':>7}  within budget")
    print(head)
    print("-" * len(head))
    for r in rows:
        a, b = np.array(r["a"]), np.array(r["b"])
        gains = np.logspace(-3, 3, 20000)
        t0 = time.perf_counter()
        sweep(a, b, r["zeta_min"], gains)
        numpy_ms = (time.perf_counter() - t0) * 1e3
        ok = [r["locus_ms"] <= 1.0, r["response_ms"] <= 100.0, r["robust_ms"] <= 2000.0]
        verdict = " ".join(f"{n}:{'yes' if v else 'NO'}" for n, v in
                           zip(["locus", "response", "robust"], ok))
        print(f"{r['order']:>5} {numpy_ms:>9.0f} {r['locus_ms']:>9.3f} "
              f"{numpy_ms / r['locus_ms']:>7.0f} {r['response_ms']:>12.1f} "
              f"{numpy_ms / r['response_ms']:>7.2f} {r['simulations']:>5} "
              f"{r['robust_ms']:>10.0f} {numpy_ms / r['robust_ms']:>7.3f}  {verdict}")
    for r in rows:
        print(f"  order {r['order']}: locus {r['locus']}, response {r['response']}")
    load = os.getloadavg()[0]
    print(f"  (load average {load:.1f} on {os.cpu_count()} cores while this ran)")


if __name__ == "__main__":
    main()
