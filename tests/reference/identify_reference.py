"""Shared helpers of the identification reference scripts: step responses computed with scipy
(a controllable canonical state-space realisation written here, the exact step response from the
matrix exponential of the augmented system [[A, B], [0, 0]] by scipy.linalg.expm), CSV writing
and running `loopwright fit --json`."""
import csv
import json
import os
import subprocess

import numpy as np
from scipy import linalg

# The five structures as (num, den) in descending powers of s, from their parameters.
def structure_tf(name, p):
    if name == "fopdt":
        k, tau, _ = p
        return [k], [tau, 1.0]
    if name == "sopdt":
        k, t1, t2, _ = p
        return [k], [t1 * t2, t1 + t2, 1.0]
    if name == "underdamped":
        k, z, wn, _ = p
        return [k * wn * wn], [1.0, 2 * z * wn, wn * wn]
    if name == "integrating":
        k, tau, _ = p
        return [k], [tau, 1.0, 0.0]
    if name == "sopdt-zero":
        k, t1, t2, tz, _ = p
        return [k * tz, k], [t1 * t2, t1 + t2, 1.0]
    raise ValueError(name)


def canonical_realisation(num, den):
    """Controllable canonical form of num/den (proper): A companion, B = e1, C, D."""
    den = np.asarray(den, float)
    num = np.asarray(num, float) / den[0]
    den = den / den[0]
    n = len(den) - 1
    b = np.concatenate([np.zeros(n + 1 - len(num)), num])
    a = np.zeros((n, n))
    a[0, :] = -den[1:]
    a[1:, :-1] = np.eye(n - 1)
    bb = np.zeros((n, 1))
    bb[0, 0] = 1.0
    c = (b[1:] - b[0] * den[1:]).reshape(1, n)
    return a, bb, c, np.array([[b[0]]])


def step_response(num, den, delay, t, t_step):
    """Unit-step response at times t of num/den exp(-delay s), the step applied at t_step."""
    a, b, c, d = canonical_realisation(num, den)
    n = a.shape[0]
    aug = np.zeros((n + 1, n + 1))
    aug[:n, :n] = a
    aug[:n, n:] = b
    y = np.zeros(len(t))
    for i, ti in enumerate(t):
        s = ti - t_step - delay
        if s <= 0:
            continue
        gamma = linalg.expm(aug * s)[:n, n:]
        y[i] = (c @ gamma + d).item()
    return y


def write_csv(path, t, u, y):
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["t", "u", "y"])
        for row in zip(t, u, y):
            w.writerow([repr(float(v)) for v in row])


def run_fit(binary, path, *args):
    """Runs loopwright fit --json; returns (exit status, parsed JSON or None, stderr)."""
    proc = subprocess.run([binary, "fit", path, "--json", *args], capture_output=True, text=True)
    doc = json.loads(proc.stdout) if proc.returncode == 0 and proc.stdout.strip() else None
    return proc.returncode, doc, proc.stderr


def params_of(doc):
    return {p["name"]: p for p in doc["parameters"]}


def workdir(path):
    os.makedirs(path, exist_ok=True)
    return path


def uniform_step_response(num, den, delay, h, n):
    """step_response at t = j h, j < n, with one matrix exponential per interval length: the
    first sample after the delay from expm(M s0), the rest by repeated products with expm(M h)
    (the semigroup property of the matrix exponential)."""
    a, b, c, d = canonical_realisation(num, den)
    k = a.shape[0]
    aug = np.zeros((k + 1, k + 1))
    aug[:k, :k] = a
    aug[:k, k:] = b
    y = np.zeros(n)
    j0 = int(np.floor(delay / h)) + 1  # first sample with j h > delay
    if j0 >= n:
        return y
    e = linalg.expm(aug * (j0 * h - delay))
    step = linalg.expm(aug * h)
    for j in range(j0, n):
        y[j] = (c @ e[:k, k:] + d).item()
        e = step @ e
    return y


def held_response(num, den, delay, h, u):
    """Exact response at t = k h of num/den exp(-delay s) to the input u held between samples
    (starting at rest for u[0]): the unit-step response S[j] at t = j h (step_response) is
    computed once, and the output is the superposition sum_i (u[i] - u[i-1]) S[k - i]."""
    n = len(u)
    s = uniform_step_response(num, den, delay, h, n)
    du = np.diff(np.asarray(u, float), prepend=u[0])
    return np.convolve(du, s)[:n]
