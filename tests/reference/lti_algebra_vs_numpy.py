#!/usr/bin/env python3
"""Polynomial roots, Padé approximants and the plant formula parser, checked against numpy/scipy.

Usage: lti_algebra_vs_numpy.py PATH_TO_lw_lti_algebra_driver

1. Roots. 300 random polynomials of degree 1..12 are built from known roots (real ones and
   complex pairs, magnitudes 0.01..50, seeded RNG) with numpy.poly. Every known root must be
   found by loopwright at least as accurately as by numpy.roots (companion matrix eigenvalues,
   LAPACK) up to a factor 10, or within 50 eps * sum_k |c_k| |r|^k / |p'(r)|, the error the
   rounding of the coefficients alone can cause (simple-root perturbation bound). Complex roots
   must come in exact conjugate pairs. Repeated roots (s + a)^m, m = 2..4, must lie within
   10 x max(numpy's spread, eps^(1/m) |a|) of -a.
2. Padé. For T in a few values and orders 1..8, the coefficients must equal the [n/n] Padé
   approximant of exp(-T s) solved from its definition (q exp(-x) - p = O(x^(2n+1))) in exact
   rational arithmetic, to 1e-13 relative, and those of scipy.interpolate.pade to 1e-7 (scipy's
   floating-point solve is ill-conditioned at order 8).
3. Formulas. 300 random formulas (products and quotients of first- and second-order factors,
   powers, a sum of two fractions, an optional exp(-T*s) anywhere, random spacing) must give the
   numerator and denominator numpy.polymul gives, to 1e-12 relative, and the dead time exactly.
   a/b + c/d expands to (a d + c b) / (b d), or to (a + c) / b when b and d are identical.

Prints a table and exits 1 on any failure.
"""
import math
import subprocess
import sys
import warnings
from fractions import Fraction

import numpy as np
from scipy.interpolate import pade

EPS = np.finfo(float).eps
rng = np.random.default_rng(20261201)


def run(driver, queries):
    out = subprocess.run([driver], input="\n".join(queries) + "\n", capture_output=True,
                         text=True, check=True).stdout.splitlines()
    return out


def num_line(line, label):
    parts = line.split(" ")
    if parts[0] != label:
        raise SystemExit(f"driver answered {line!r}, expected a '{label}' line")
    return np.array([float(x) for x in parts[1:]])


# ---------------------------------------------------------------- roots
def random_roots():
    n = int(rng.integers(1, 13))
    roots = []
    while len(roots) < n:
        mag = 10 ** rng.uniform(-2, math.log10(50))
        if n - len(roots) >= 2 and rng.random() < 0.4:
            ang = rng.uniform(0.05, 0.95) * math.pi / 2
            re = -mag * math.cos(ang) * (1 if rng.random() < 0.9 else -1)
            im = mag * math.sin(ang)
            roots += [complex(re, im), complex(re, -im)]
        else:
            roots.append(complex(mag * (-1 if rng.random() < 0.85 else 1), 0.0))
    return roots


def check_roots(driver):
    cases = []
    for _ in range(300):
        r = random_roots()
        c = np.real(np.poly(r)) * rng.uniform(0.2, 5.0)
        cases.append((r, c, 1))
    for m in (2, 3, 4):
        for a in (0.3, 2.0, 7.5):
            cases.append(([complex(-a, 0.0)] * m, np.poly([-a] * m), m))
    queries = ["roots " + " ".join(repr(float(x)) for x in c) for _, c, _ in cases]
    out = run(driver, queries)
    pos = 0
    failures = 0
    ratios = []
    for exact, c, m in cases:
        head = out[pos].split()
        if head[0] != "roots":
            print("roots: driver said", out[pos])
            return 1
        k = int(head[1])
        ours = np.array([complex(float(a), float(b)) for a, b in
                         (out[pos + 1 + i].split() for i in range(k))])
        pos += 1 + k
        ref = np.roots(c)
        if k != len(exact):
            print(f"roots: {len(exact)} expected, {k} found for {c}")
            failures += 1
            continue
        # Exact conjugate pairs.
        for z in ours:
            if z.imag != 0.0 and not np.any(ours == np.conj(z)):
                print(f"roots: {z} has no exact conjugate for {c}")
                failures += 1
        dp = np.polyder(c)
        for e in exact:
            ours_err = np.min(np.abs(ours - e))
            ref_err = np.min(np.abs(ref - e))
            if m == 1:
                scale = np.polyval(np.abs(c), abs(e))
                bound = max(10 * ref_err, 50 * EPS * scale / abs(np.polyval(dp, e)))
            else:
                bound = 10 * max(ref_err, EPS ** (1.0 / m) * abs(e))
            ratios.append(ours_err / max(ref_err, EPS * max(1.0, abs(e))))
            if not ours_err <= bound:
                print(f"roots: root {e} of {c}: error {ours_err:.3g} > bound {bound:.3g} "
                      f"(numpy {ref_err:.3g})")
                failures += 1
    ratios = np.array(ratios)
    print(f"roots     {len(cases):4d} polynomials  error / numpy error: median {np.median(ratios):.3g}"
          f"  90% {np.quantile(ratios, 0.9):.3g}  failures {failures}")
    return failures


# ---------------------------------------------------------------- Padé
def exact_pade(n):
    """[n/n] Padé coefficients of exp(-x), ascending, from the definition alone: with q_0 = 1,
    q(x) exp(-x) - p(x) = O(x^(2n+1)). Solved in exact rational arithmetic (fractions)."""
    c = [Fraction((-1) ** k, math.factorial(k)) for k in range(2 * n + 1)]
    # Rows k = n+1..2n: sum_{j=1..n} q_j c_(k-j) = -c_k.
    a = [[c[k - j] for j in range(1, n + 1)] + [-c[k]] for k in range(n + 1, 2 * n + 1)]
    for col in range(n):
        piv = next(r for r in range(col, n) if a[r][col] != 0)
        a[col], a[piv] = a[piv], a[col]
        for r in range(n):
            if r != col and a[r][col] != 0:
                f = a[r][col] / a[col][col]
                a[r] = [x - f * y for x, y in zip(a[r], a[col])]
    q = [Fraction(1)] + [a[i][n] / a[i][i] for i in range(n)]
    p = [sum(q[j] * c[k - j] for j in range(min(k, n) + 1)) for k in range(n + 1)]
    return p, q


def check_pade(driver):
    cases = [(t, n) for t in (0.05, 0.7, 3.0) for n in range(1, 9)]
    out = run(driver, [f"pade {t!r} {n}" for t, n in cases])
    failures = 0
    worst = worst_scipy = 0.0
    for i, (t, n) in enumerate(cases):
        num = num_line(out[3 * i], "num")
        den = num_line(out[3 * i + 1], "den")
        # Exact reference in x = T s, scaled by T^k, descending, denominator made monic.
        p, q = exact_pade(n)
        p_ref = np.array([float(p[k]) * t ** k for k in range(n, -1, -1)])
        q_ref = np.array([float(q[k]) * t ** k for k in range(n, -1, -1)])
        p_ref, q_ref = p_ref / q_ref[0], q_ref / q_ref[0]
        err = max(np.max(np.abs(num - p_ref) / np.abs(p_ref)),
                  np.max(np.abs(den - q_ref) / np.abs(q_ref)))
        worst = max(worst, err)
        # scipy.interpolate.pade solves the same conditions in floating point; its linear system
        # is ill-conditioned at high order (about 3e-9 relative at order 8), hence 1e-7 here.
        taylor = [(-t) ** k / math.factorial(k) for k in range(2 * n + 1)]
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            ps, qs = pade(taylor, n)
        err_scipy = max(np.max(np.abs(num - ps.coeffs / qs.coeffs[0]) / np.abs(p_ref)),
                        np.max(np.abs(den - qs.coeffs / qs.coeffs[0]) / np.abs(q_ref)))
        worst_scipy = max(worst_scipy, err_scipy)
        if not (err <= 1e-13 and err_scipy <= 1e-7):
            print(f"pade: T={t} order {n}: relative error {err:.3g} (exact), "
                  f"{err_scipy:.3g} (scipy)")
            failures += 1
    print(f"pade      {len(cases):4d} approximants max relative difference: exact {worst:.3g}, "
          f"scipy {worst_scipy:.3g}  failures {failures}")
    return failures


# ---------------------------------------------------------------- formulas
def number():
    v = float(f"{rng.uniform(0.05, 20.0):.{int(rng.integers(1, 5))}g}")
    return v


def factor():
    """A random factor as (text, numerator coefficients, denominator coefficients)."""
    kind = rng.integers(0, 5)
    if kind == 0:
        a, b = number(), number()
        return f"({a!r}*s+{b!r})", [a, b], [1.0]
    if kind == 1:
        a, b = number(), number()
        return f"(s^2+{a!r}*s+{b!r})", [1.0, a, b], [1.0]
    if kind == 2:
        return "s", [1.0, 0.0], [1.0]
    if kind == 3:
        a, k = number(), int(rng.integers(0, 4))
        return f"(s-{a!r})^{k}", list(np.poly([a] * k)) if k else [1.0], [1.0]
    a = number()
    return f"{a!r}", [a], [1.0]


def product(count):
    text, num = [], np.array([1.0])
    for _ in range(count):
        t, n, _ = factor()
        text.append(t)
        num = np.polymul(num, n)
    return "*".join(text), num


def spaced(text):
    out = []
    for ch in text:
        out.append(ch)
        if ch in "+*/()" and rng.random() < 0.3:
            out.append(" ")
    return "".join(out)


def check_formulas(driver):
    cases = []
    for i in range(300):
        nt, num = product(int(rng.integers(1, 4)))
        dt, den = product(int(rng.integers(1, 4)))
        if i % 5 == 4:
            # a/b + c/d with its numpy expansion (a d + c b) / (b d)
            ct, cn = product(1)
            d2t, d2 = product(1)
            text = f"{nt}/({dt}) + {ct}/({d2t})"
            if list(den) == list(d2):  # the parser adds over an identical denominator
                num = np.polyadd(num, cn)
            else:
                num, den = np.polyadd(np.polymul(num, d2), np.polymul(cn, den)), np.polymul(den, d2)
            delay = 0.0
        else:
            delay = 0.0
            text = f"{nt}/({dt})"
            if rng.random() < 0.6:
                delay = number()
                e = f"exp(-{delay!r}*s)" if rng.random() < 0.5 else f"exp(-s*{delay!r})"
                text = f"{e}*{text}" if rng.random() < 0.5 else f"({nt})*{e}/({dt})"
        cases.append((spaced(text), num, den, delay))
    out = run(driver, ["formula " + t for t, _, _, _ in cases])
    failures, worst = 0, 0.0
    for i, (text, num, den, delay) in enumerate(cases):
        if out[3 * i].startswith("error"):
            print(f"formula {text!r}: {out[3 * i]}")
            failures += 1
            return failures
        got_num = num_line(out[3 * i], "num")
        got_den = num_line(out[3 * i + 1], "den")
        got_delay = float(out[3 * i + 2].split()[1])
        num = np.trim_zeros(np.asarray(num, dtype=float), "f") / den[0]
        den = np.asarray(den, dtype=float) / den[0]
        ok = len(got_num) == len(num) and len(got_den) == len(den) and got_delay == delay
        if ok:
            scale_n, scale_d = np.max(np.abs(num)), np.max(np.abs(den))
            err = max(np.max(np.abs(got_num - num)) / scale_n,
                      np.max(np.abs(got_den - den)) / scale_d)
            worst = max(worst, err)
            ok = err <= 1e-12
        if not ok:
            print(f"formula {text!r}: got {got_num}/{got_den} delay {got_delay}, "
                  f"expected {num}/{den} delay {delay}")
            failures += 1
    print(f"formulas  {len(cases):4d} formulas     max relative difference from numpy "
          f"{worst:.3g}  failures {failures}")
    return failures


def main():
    if len(sys.argv) != 2:
        raise SystemExit(__doc__)
    driver = sys.argv[1]
    failures = check_roots(driver) + check_pade(driver) + check_formulas(driver)
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
