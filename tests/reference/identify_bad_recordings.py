"""Unusable recordings given to `loopwright fit -o`: each must be refused with one sentence on
stderr naming the file, exit status 3, and no model file written.

Usage: identify_bad_recordings.py LOOPWRIGHT_BINARY WORKDIR"""
import math
import os
import subprocess
import sys


def write(path, rows, header=("t", "u", "y")):
    with open(path, "w") as f:
        f.write(",".join(header) + "\n")
        for r in rows:
            f.write(",".join(r if isinstance(r, tuple) and isinstance(r[0], str) else [repr(v) for v in r]) + "\n")


def main():
    binary, out = sys.argv[1], sys.argv[2]
    os.makedirs(out, exist_ok=True)
    n = 200
    t = [0.1 * i for i in range(n)]
    step = [0.0 if ti < 2 else 1.0 for ti in t]
    resp = [0.0 if ti < 2.3 else 1.0 - math.exp(-(ti - 2.3) / 1.5) for ti in t]
    wobble = [0.01 * math.sin(7.1 * i) for i in range(n)]
    cases = {
        "constant_input": [(ti, 1.0, r + w) for ti, r, w in zip(t, resp, wobble)],
        "no_step": [(ti, 0.01 * i, r + w) for i, (ti, r, w) in enumerate(zip(t, resp, wobble))],
        "clipped_output": [(ti, u, min(r + w, 0.7)) for ti, u, r, w in zip(t, step, resp, wobble)],
        "three_samples": [(ti, u, r) for ti, u, r in list(zip(t, step, resp))[18:21]],
    }
    failures = []
    for name, rows in cases.items():
        path = os.path.join(out, name + ".csv")
        write(path, rows)
        cases[name] = path
    nan_path = os.path.join(out, "all_nan_output.csv")
    with open(nan_path, "w") as f:
        f.write("t,u,y\n")
        for ti, u in zip(t, step):
            f.write(f"{ti!r},{u!r},nan\n")
    cases["all_nan_output"] = nan_path
    print(f"{'recording':16} {'exit':>4}  message")
    for name, path in cases.items():
        model = os.path.join(out, name + ".model.json")
        if os.path.exists(model):
            os.remove(model)
        proc = subprocess.run([binary, "fit", path, "-o", model], capture_output=True, text=True)
        lines = [l for l in proc.stderr.splitlines() if l.strip()]
        print(f"{name:16} {proc.returncode:4}  {lines[0] if lines else '(nothing)'}")
        if proc.returncode != 3:
            failures.append(f"{name}: exit {proc.returncode}, expected 3")
        if len(lines) != 1 or os.path.basename(path) not in lines[0]:
            failures.append(f"{name}: expected one sentence naming the file, got {lines!r}")
        if os.path.exists(model):
            failures.append(f"{name}: a model file was written")
    if failures:
        print("FAILURES:\n" + "\n".join(failures))
        return 1
    print("every unusable recording refused with exit 3 and no model file")
    return 0


if __name__ == "__main__":
    sys.exit(main())
