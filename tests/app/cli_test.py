#!/usr/bin/env python3
"""End-to-end tests of the loopwright binary: cli_test.py BINARY SOURCE_DIR WORK_DIR CASE.

Each CASE runs the real executable and checks exit status, stdout/stderr and the files it leaves.
Expected values come from closed forms (first-order step response with dead time; the steady
state K G(0) / (1 + K G(0)) of a type-0 loop under P control, any control textbook), not from
loopwright itself.
"""
import json
import math
import os
import re
import subprocess

import cli_common
from cli_common import BIN, SOURCE, WORK, check, path, run


def read_csv(path):
    with open(path) as f:
        lines = f.read().splitlines()
    comments = [l for l in lines if l.startswith("#")]
    data = [l for l in lines if not l.startswith("#")]
    header = data[0].split(",")
    rows = [[float(c) for c in l.split(",")] for l in data[1:]]
    return comments, header, rows


def case_version():
    code, out, err = run("--version")
    check(code == 0, f"--version exits 0 (got {code})")
    check(re.fullmatch(r"loopwright \d+\.\d+\.\d+\s*", out) is not None, f"--version prints 'loopwright X.Y.Z' (got {out!r})")


def case_help():
    code, out, err = run("--help")
    check(code == 0, "--help exits 0")
    names = []
    in_subs = False
    for line in out.splitlines():
        if line.strip().lower().startswith("subcommands"):
            in_subs = True
            continue
        if in_subs and line.startswith("  ") and line.strip():
            names.append(line.split()[0])
    check("simulate" in names, f"--help lists simulate (found {names})")
    for name in names:
        code, sub_out, _ = run(name, "--help")
        check(code == 0, f"{name} --help exits 0 (got {code})")
        check("--help" in sub_out and "Usage" in sub_out, f"{name} --help prints a usage text")
        # CLI11 marks a positional taking a range of values "NAME(1x)"; our usage lines say
        # what may be given instead.
        check(re.search(r"\(\d+x\)", sub_out) is None, f"{name} --help has no '(Nx)' marks")
    code, out, _ = run("simulate", "--help")
    for word in ["--plant", "--model", "--input", "--reference", "--rate", "--duration", "--noise",
                 "--quantize", "--saturate", "--seed", "--gain", "--controller", "--json",
                 "step:FROM:TO:AT", "prbs:LO:HI:BIT_S", "csv:FILE:COLUMN", "clipped u",
                 "synthetic"]:
        check(word in out, f"simulate --help mentions {word}")
    code, out, err = run()
    check(code == 2, f"no subcommand exits 2 (got {code})")


def case_simulate_open():
    # First order with dead time, K = 1.5, tau = 2 s, T = 0.35 s (not a whole number of samples),
    # step 1 -> 3 at 1 s: y(t) = 1.5 (1 + 2 (1 - exp(-(t - 1.35)/2))) for t >= 1.35, else 1.5.
    out_file = path("open.csv")
    code, out, err = run("simulate", "--plant", "1.5*exp(-0.35*s)/(2*s+1)", "--input",
                         "step:1:3:1", "--rate", "20", "--duration", "30", "-o", out_file)
    check(code == 0, f"open loop exits 0 (got {code}, {err})")
    comments, header, rows = read_csv(out_file)
    check(header == ["t", "u", "y"], f"open loop header is t,u,y (got {header})")
    check(len(rows) == 601, f"open loop has 601 rows (got {len(rows)})")
    check(len(comments) == 1 and "loopwright" in comments[0] and "synthetic" in comments[0],
          f"provenance line names the tool and says synthetic ({comments})")
    worst = 0.0
    for t, u, y in rows:
        expect = 1.5 if t < 1.35 else 1.5 * (1 + 2 * (1 - math.exp(-(t - 1.35) / 2)))
        worst = max(worst, abs(y - expect))
        check(u == (3.0 if t >= 1.0 - 1e-12 else 1.0), f"u at t = {t}")
    check(worst < 1e-9, f"open loop y matches the closed form (max error {worst:.3g})")
    check("rise time" in out and "samples" in out, "human summary shows samples and step metrics")
    # Rise time of a first-order lag is tau ln 9 (exact), measured on 20 Hz samples of a record
    # 14.5 time constants long (settled to 1e-6).
    code, out, err = run("simulate", "--plant", "1.5*exp(-0.35*s)/(2*s+1)", "--input",
                         "step:1:3:1", "--rate", "20", "--duration", "30", "-o", out_file, "--json")
    doc = json.loads(out)
    check(doc["samples"] == 601 and doc["columns"] == ["t", "u", "y"], "JSON samples and columns")
    check(abs(doc["metrics"]["rise_time"] - 2 * math.log(9)) < 0.02,
          f"JSON rise time near tau ln 9 = {2 * math.log(9):.4f} (got {doc['metrics']['rise_time']})")
    check(doc["synthetic"] is True and doc["loop"] == "open", "JSON says open loop, synthetic")
    # Determinism: the same seed gives the same file, another seed another one.
    args = ["simulate", "--plant", "2/(3*s+1)", "--input", "prbs:-1:1:0.5", "--rate", "10",
            "--duration", "30", "--noise", "0.05", "--quantize", "0.01"]
    run(*args, "--seed", "7", "-o", path("a.csv"))
    run(*args, "--seed", "7", "-o", path("b.csv"))
    run(*args, "--seed", "8", "-o", path("c.csv"))
    a, b, c = (read_csv(path(n))[2] for n in ("a.csv", "b.csv", "c.csv"))
    check(a == b, "same seed, same data")
    check(a != c, "another seed, other data")
    check(all(abs(round(y / 0.01) * 0.01 - y) < 1e-9 for _, _, y in a), "y is quantised to 0.01")
    # Saturation in open loop clips u.
    run("simulate", "--plant", "1/(s+1)", "--input", "step:0:5:1", "--saturate", "-2:2", "--rate",
        "10", "--duration", "5", "-o", path("sat.csv"))
    rows = read_csv(path("sat.csv"))[2]
    check(max(u for _, u, _ in rows) == 2.0, "open-loop --saturate clips u at HI")
    # --start zero: the lag starts from the zero state, y = 1.5 (1 - exp(-(t - 0.35)/2)) for the
    # first second (input 1 from t = 0, delayed by 0.35 s).
    run("simulate", "--plant", "1.5*exp(-0.35*s)/(2*s+1)", "--input", "step:1:3:1", "--rate", "20",
        "--duration", "5", "--start", "zero", "-o", path("zero.csv"))
    rows = read_csv(path("zero.csv"))[2]
    worst = max(abs(y - (0.0 if t < 0.35 else 1.5 * (1 - math.exp(-(t - 0.35) / 2))))
                for t, _, y in rows if t < 1.3)
    check(worst < 1e-9, f"--start zero follows the closed form from rest at 0 (max error {worst:.3g})")
    # A model file from `fit` drives simulate through --model and as a positional.
    code, _, err = run("fit", out_file, "-o", path("model.json"))
    check(code == 0, f"fit of the simulated step writes a model file ({err})")
    if code == 0:
        for spelling in (["--model", path("model.json")], [path("model.json")]):
            code, _, err = run("simulate", *spelling, "--input", "step:1:3:1", "--rate", "20",
                               "--duration", "30", "-o", path("from_model.csv"))
            check(code == 0, f"simulate {spelling[0]} exits 0 ({err})")
            again = read_csv(path("from_model.csv"))[2]
            worst = max(abs(a[2] - b[2]) for a, b in zip(again, read_csv(out_file)[2]))
            check(worst < 1e-3, f"the fitted model reproduces the noise-free data (max {worst:.3g})")


def case_simulate_closed():
    # Type-0 plant under P control: y settles at K G(0) / (1 + K G(0)) of the reference.
    out_file = path("closed.csv")
    code, out, err = run("simulate", "--plant", "2*exp(-0.2*s)/((3*s+1)*(0.5*s+1))", "--gain",
                         "1.5", "--reference", "step:0:1:1", "--rate", "20", "--duration", "60",
                         "-o", out_file, "--json")
    check(code == 0, f"closed loop exits 0 (got {code}, {err})")
    comments, header, rows = read_csv(out_file)
    check(header == ["t", "r", "u", "y"], f"closed loop header is t,r,u,y (got {header})")
    check(len(rows) == 1201, f"closed loop has 1201 rows (got {len(rows)})")
    expect = 3.0 / 4.0
    check(abs(rows[-1][3] - expect) < 1e-6, f"P loop settles at KG0/(1+KG0) = 0.75 (got {rows[-1][3]})")
    check(abs(rows[-1][2] - 1.5 * (1 - expect)) < 1e-6, "actuator settles at K (r - y)")
    doc = json.loads(out)
    check(doc["loop"] == "closed" and doc["controller"] == "p" and doc["gain"] == 1.5, "JSON loop")
    check(abs(doc["metrics"]["steady_state_error"] - 0.25) < 1e-4, "JSON steady-state error 0.25")
    # PI removes the steady-state error; deterministic with noise.
    args = ["simulate", "--plant", "2*exp(-0.2*s)/((3*s+1)*(0.5*s+1))", "--controller", "pi:0.3",
            "--gain", "0.8", "--reference", "step:0:1:1", "--rate", "20", "--duration", "80",
            "--noise", "0.01", "--seed", "3"]
    run(*args, "-o", path("pi1.csv"))
    run(*args, "-o", path("pi2.csv"))
    r1, r2 = read_csv(path("pi1.csv"))[2], read_csv(path("pi2.csv"))[2]
    check(r1 == r2, "closed loop deterministic for a seed")
    tail = [row[3] for row in r1[-100:]]
    check(abs(sum(tail) / len(tail) - 1.0) < 0.01, "PI loop settles on the reference")
    # Saturation inside the loop: u never leaves the limits.
    code, out, err = run("simulate", "--plant", "2/(3*s+1)", "--gain", "10", "--reference",
                         "step:0:1:1", "--saturate", "-1:1", "--rate", "20", "--duration", "20",
                         "-o", path("sat.csv"), "--json")
    check(code == 0, f"closed loop with --saturate exits 0 ({err})")
    rows = read_csv(path("sat.csv"))[2]
    check(max(row[2] for row in rows) == 1.0, "clipped u reaches HI and no more")
    check(json.loads(out)["limits_reached"] is True, "JSON says the limits were reached")
    # While clipped at u = 1 the plant gives 2 (1 - exp(-(t - 1)/3)) (first-order step).
    worst = max(abs(row[3] - 2 * (1 - math.exp(-(row[0] - 1) / 3))) for row in rows
                if 1.0 <= row[0] <= 2.0)
    check(worst < 1e-6, f"clipped loop follows the first-order response (max error {worst:.3g})")
    # 2/(s + 1)^3 under P control is unstable for K > 4 (Routh-Hurwitz: 3 * 3 > 1 + 2K); at
    # K = 10 s^3 + 3 s^2 + 3 s + 21 = 0 has the pair 0.3572 +/- j2.351 (numpy.roots). The record
    # diverges: the file is written, the summary warns and gives no step metrics.
    code, out, err = run("simulate", "--plant", "2/((s+1)^3)", "--gain", "10", "--reference",
                         "step:0:1:1", "--rate", "50", "--duration", "30", "-o",
                         path("unstable.csv"), "--json")
    check(code == 0 and os.path.exists(path("unstable.csv")), f"unstable loop still simulated ({err})")
    check("unstable" in err and "0.3572 ± j2.351" in err, f"the warning names the pair ({err!r})")
    check(json.loads(out)["metrics"] is None, "no step metrics for a diverging record")
    code, out, err = run("simulate", "--plant", "2/((s+1)^3)", "--gain", "3.9", "--reference",
                         "step:0:1:1", "--rate", "50", "--duration", "60", "-o",
                         path("stable.csv"), "--json")
    check(code == 0 and json.loads(out)["metrics"] is not None and "unstable" not in err,
          f"just below K = 4 the metrics are given ({err!r})")


def case_simulate_no_peak():
    # Two real lags 1.5 / ((8 s + 1)(3 s + 1)): the step response
    # y = 1.5 (1 - (8 exp(-t/8) - 3 exp(-t/3)) / 5) (partial fractions) rises monotonically, so
    # it has no peak, noise-free or measured with noise.
    lags = "1.5/((8*s+1)*(3*s+1))"
    for extra in ([], ["--noise", "0.01", "--seed", "3"]):
        args = ["simulate", "--plant", lags, "--input", "step:0:1:5", "--rate", "2", "--duration",
                "200", "-o", path("lags.csv")] + extra
        code, out, err = run(*args)
        check(code == 0, f"{extra}: simulate exits 0 ({err!r})")
        row = next((l for l in out.splitlines() if l.strip().startswith("peak time:")), "")
        check(re.fullmatch(r"\s+peak time:\s+no peak \(the response rises \S+ % of the step above "
                           r"its final value, and a peak needs more than \S+ %\)\s*", row)
              is not None, f"{extra}: peak time says 'no peak' and why ({row!r})")
        code, out, err = run(*args, "--json")
        m = json.loads(out)["metrics"]
        check(m["peak_time"] is None, f"{extra}: JSON peak_time is null ({m})")
        check(str(m.get("peak_note")).startswith("no peak: "), f"{extra}: JSON peak_note says why ({m})")
        check(m["overshoot_percent"] == 0, f"{extra}: no overshoot ({m})")
    # Underdamped 4 / (s^2 + 0.8 s + 4), zeta 0.2, wn 2: the peak at pi / wd, wd = wn sqrt(1 -
    # zeta^2), and overshoot exp(-zeta pi / sqrt(1 - zeta^2)) (Ogata, Modern Control Engineering,
    # transient-response specifications; from memory), both as before.
    args = ["simulate", "--plant", "4/(s^2+0.8*s+4)", "--input", "step:0:1:1", "--rate", "100",
            "--duration", "40", "-o", path("pair.csv")]
    wd = 2 * math.sqrt(1 - 0.04)
    code, out, err = run(*args, "--json")
    m = json.loads(out)["metrics"]
    check(abs(m["peak_time"] - math.pi / wd) < 1e-3 * math.pi / wd,
          f"peak time {m['peak_time']} is pi / wd = {math.pi / wd:.6g}")
    want = 100 * math.exp(-0.2 * math.pi / math.sqrt(1 - 0.04))
    check(abs(m["overshoot_percent"] - want) < 1e-3 * want,
          f"overshoot {m['overshoot_percent']} is {want:.6g} %")
    check(m.get("peak_note", 0) is None, f"JSON peak_note is null with a peak ({m})")
    code, out, err = run(*args)
    row = next((l for l in out.splitlines() if l.strip().startswith("peak time:")), "")
    check(f"{math.pi / wd:.4g} s" in row and "no peak" not in out,
          f"peak time row gives pi / wd ({row!r})")


def case_simulate_csv_input():
    src = path("drive.csv")
    with open(src, "w") as f:
        f.write("# a recorded drive command\ntime,cmd\n0,0\n0.25,1\n0.6,-1\n1.5,0.5\n")
    code, out, err = run("simulate", "--plant", "1/(0.1*s+1)", "--input", f"csv:{src}:cmd",
                         "--rate", "10", "--duration", "2", "-o", path("held.csv"))
    check(code == 0, f"csv input exits 0 ({err})")
    rows = read_csv(path("held.csv"))[2]
    # t column is not named t: the first column is time; values are held between rows.
    expect = {0.0: 0, 0.2: 0, 0.3: 1, 0.5: 1, 0.6: -1, 0.7: -1, 1.4: -1, 1.5: 0.5, 2.0: 0.5}
    for t, u, _ in rows:
        key = round(t, 6)
        if key in expect:
            check(u == expect[key], f"held csv input at t = {t}: expected {expect[key]}, got {u}")
    code, out, err = run("simulate", "--plant", "1/(0.1*s+1)", "--input", f"csv:{src}:2",
                         "--rate", "10", "--duration", "2", "-o", path("held2.csv"))
    check(code == 0 and read_csv(path("held2.csv"))[2] == rows, "csv column by 1-based index")


def expect_error(label, args, status, pattern, out_file, cwd=None):
    code, out, err = run(*args, cwd=cwd)
    check(code == status, f"{label}: exit {status} (got {code}; stderr {err!r})")
    check(re.search(pattern, err) is not None, f"{label}: stderr matches {pattern!r} (got {err!r})")
    check(len(err.strip().splitlines()) == 1, f"{label}: one line on stderr (got {err!r})")
    check(out == "", f"{label}: nothing on stdout (got {out!r})")
    if out_file is not None:
        check(not os.path.exists(out_file), f"{label}: no output file {out_file}")
    folder = os.path.dirname(out_file) if out_file else WORK
    folder = folder if os.path.isdir(folder) else WORK
    leftovers = [n for n in os.listdir(folder) if n.startswith(".") or "tmp" in n.lower()]
    check(not leftovers, f"{label}: no temporary files left ({leftovers})")


def case_errors():
    out = path("never.csv")
    base = ["--rate", "10", "--duration", "5", "-o", out]
    good = ["--plant", "1/(s+1)", "--input", "step:0:1:1"]
    with open(path("bad_cell.csv"), "w") as f:
        f.write("t,u\n0,1\n0.5,abc\n1,2\n")
    with open(path("bad_model.json"), "w") as f:
        f.write("{ not json")
    with open(path("one_col.csv"), "w") as f:
        f.write("t,u\n0,1\n1,2\n")
    cases = [
        ("bad formula", ["simulate", "--plant", "1/(s+1", "--input", "step:0:1:1", *base], 2,
         r"plant formula, column \d+: ", out),
        ("unknown name in formula", ["simulate", "--plant", "1/(q+1)", "--input", "step:0:1:1",
                                     *base], 2, r"column 4.*'q'", out),
        ("bad input spec", ["simulate", "--plant", "1/(s+1)", "--input", "ramp:0:1", *base], 2,
         r"--input: .*ramp", out),
        ("bad step spec", ["simulate", "--plant", "1/(s+1)", "--input", "step:0:1", *base], 2,
         r"--input: ", out),
        ("missing --rate", ["simulate", *good, "--duration", "5", "-o", out], 2, r"--rate", out),
        ("missing -o", ["simulate", *good, "--rate", "10", "--duration", "5"], 2, r"-o", None),
        ("zero rate", ["simulate", *good, "--rate", "0", "--duration", "5", "-o", out], 2,
         r"--rate 0: .*> 0", out),
        ("negative noise", ["simulate", *good, *base, "--noise", "-1"], 2, r"--noise", out),
        ("bad saturate", ["simulate", *good, *base, "--saturate", "5:1"], 2,
         r"--saturate '5:1'.*LO < HI", out),
        ("no plant", ["simulate", "--input", "step:0:1:1", *base], 2, r"no plant given", out),
        ("plant and model", ["simulate", *good, "--model", "m.json", *base], 2, r"excludes", out),
        ("gain without reference", ["simulate", "--plant", "1/(s+1)", "--gain", "2", *base], 2,
         r"--reference", out),
        ("reference without gain", ["simulate", "--plant", "1/(s+1)", "--reference",
                                    "step:0:1:1", *base], 2, r"--gain", out),
        ("input and gain", ["simulate", *good, "--gain", "2", "--reference", "step:0:1:1", *base],
         2, r"--input is for the open loop", out),
        ("bad controller", ["simulate", "--plant", "1/(s+1)", "--gain", "2", "--controller",
                            "lead:2", "--reference", "step:0:1:1", *base], 2, r"controller", out),
        ("improper plant", ["simulate", "--plant", "s^2/(s+1)", "--input", "step:0:1:1", *base],
         2, r"proper", out),
        ("unknown option", ["simulate", *good, *base, "--colour"], 2,
         r"--colour.*\(see loopwright simulate --help\)", out),
        # A mistyped option's value would otherwise be read as the model file and reported as
        # "MODEL.json excludes --plant": the unknown option is named first, with the near one.
        ("mistyped option with a value", ["band", "--plant", "1/(s+1)", "--overshot-max", "10"],
         2, r"'--overshot-max' is not an option of band; did you mean --overshoot-max\? "
         r"\(see loopwright band --help\)", out),
        ("negative value is no option", ["simulate", "--plant", "1/(s+1)", "--gain", "-2",
                                         "--reference", "step:0:1:1", *base, "--duratoin"], 2,
         r"^loopwright: '--duratoin' is not an option of simulate; did you mean --duration\?", out),
        ("mistyped command", ["simulat", *good, *base], 2,
         r"'simulat' is not a loopwright command; the commands are simulate, fit, ", out),
        ("output folder missing", ["simulate", *good, "--rate", "10", "--duration", "5", "-o",
                                   path("no/such/dir/out.csv")], 2, r"cannot write",
         path("no/such/dir/out.csv")),
        ("csv input with a bad cell", ["simulate", "--plant", "1/(s+1)", "--input",
                                       f"csv:{path('bad_cell.csv')}:u", *base], 3,
         r"bad_cell\.csv, line 3, column 2: 'abc' is not a number", out),
        ("csv input missing column", ["simulate", "--plant", "1/(s+1)", "--input",
                                      f"csv:{path('one_col.csv')}:cmd", *base], 3,
         r"one_col\.csv: no column 'cmd'", out),
        ("csv input missing file", ["simulate", "--plant", "1/(s+1)", "--input",
                                    f"csv:{path('absent.csv')}:u", *base], 3,
         r"cannot read .*absent\.csv", out),
        ("bad model file", ["simulate", "--model", path("bad_model.json"), "--input",
                            "step:0:1:1", *base], 3, r"bad_model\.json: not valid JSON", out),
    ]
    for label, args, status, pattern, out_file in cases:
        expect_error(label, args, status, pattern, out_file)
    # A failed run leaves an existing output file untouched.
    keep = path("keep.csv")
    with open(keep, "w") as f:
        f.write("old contents\n")
    run("simulate", "--plant", "1/(s+1)", "--input", f"csv:{path('bad_cell.csv')}:u",
        "--rate", "10", "--duration", "5", "-o", keep)
    with open(keep) as f:
        check(f.read() == "old contents\n", "existing output file untouched after a failure")


def normalise(text):
    # The provenance line names the tool's version; the data must match exactly.
    return re.sub(r"^# loopwright \d+\.\d+\.\d+", "# loopwright X", text, flags=re.M)


def case_recordings():
    rec = os.path.join(SOURCE, "recordings")
    subprocess.run([os.path.join(rec, "make_recordings.sh"), BIN, WORK], check=True, timeout=300)
    committed = sorted(n for n in os.listdir(rec) if n.endswith(".csv"))
    fresh = sorted(n for n in os.listdir(WORK) if n.endswith(".csv"))
    check(committed == fresh and len(committed) >= 3, f"same recordings ({committed} vs {fresh})")
    for name in committed:
        with open(os.path.join(rec, name)) as f:
            a = f.read()
        with open(os.path.join(WORK, name)) as f:
            b = f.read()
        check(normalise(a) == normalise(b), f"{name} equals a fresh regeneration")
        check(len(a) < 1_000_000, f"{name} is under 1 MB")
        check("synthetic" in a.splitlines()[0], f"{name} says it is synthetic")
    with open(os.path.join(rec, "README.md")) as f:
        card = f.read()
    for name in committed:
        check(name in card, f"recordings/README.md has a card for {name}")


cli_common.main(globals())
