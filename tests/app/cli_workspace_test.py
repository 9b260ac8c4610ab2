#!/usr/bin/env python3
"""End-to-end tests of the rig workspace: cli_workspace_test.py BINARY SOURCE_DIR WORK_DIR CASE.

Cases: init (the profile read back by Python's tomllib, the logbook by Python's sqlite3),
errors (exit statuses and one-sentence messages: an existing workspace, bad options, a bad TOML
line reported as rig.toml:LINE, no workspace), log (recordings logged with the SHA-256 that
hashlib computes and never modified), drift (two fits of first-order data with dead time whose
gains differ; each flag checked against the two-sample z test computed here with
scipy.stats.norm, and the figure).
"""
import hashlib
import json
import math
import os
import sqlite3
import tomllib
import xml.etree.ElementTree as ET

from scipy.stats import norm

import cli_common
from cli_common import SOURCE, WORK, check, path, run

SVG = "{http://www.w3.org/2000/svg}"


def sha256(file):
    with open(file, "rb") as f:
        return hashlib.sha256(f.read()).hexdigest()


def init_workspace(name="ws", *extra):
    code, out, err = run("init", name, *extra)
    check(code == 0, f"init {name} exits 0 (got {code}: {err.strip()})")
    return path(name)


def simulate(name, gain, seed):
    # First order with dead time (our own numbers): gain/(6 s + 1) e^(-1.5 s), a unit step at 4 s.
    code, _, err = run("simulate", "--plant", f"{gain}*exp(-1.5*s)/(6*s+1)", "--input",
                       "step:0:1:4", "--rate", "10", "--duration", "60", "--noise", "0.02",
                       "--seed", str(seed), "-o", path(name))
    check(code == 0, f"simulate {name} exits 0 ({err.strip()})")
    return path(name)


def case_init():
    ws = init_workspace("bench_ws", "--name", "drying oven 4", "--serial", "/dev/ttyUSB7",
                        "--baud", "9600", "--period", "0.5", "--actuator", "0:100", "--safe", "5",
                        "--trip", "-5:95", "--max-gain", "4", "--actuator-unit", "%",
                        "--output-unit", "degC")
    with open(os.path.join(ws, "rig.toml"), "rb") as f:
        profile = tomllib.load(f)
    check(profile["name"] == "drying oven 4", f"profile name ({profile.get('name')})")
    check(profile["link"] == {"kind": "serial", "device": "/dev/ttyUSB7", "baud": 9600,
                              "address": "", "timeout_s": 1},
          f"profile link table ({profile.get('link')})")
    check(profile["sampling"]["period_s"] == 0.5, "sampling.period_s")
    check(profile["actuator"] == {"min": 0, "max": 100, "safe": 5, "unit": "%"},
          f"actuator table ({profile.get('actuator')})")
    check(profile["trip"] == {"output_min": -5, "output_max": 95, "unit": "degC"},
          f"trip table ({profile.get('trip')})")
    check(profile["controller"] == {"max_gain": 4}, "controller.max_gain")
    check(profile["specs"] == {"settle_band_percent": 2}, "only the settle band is set in specs")

    con = sqlite3.connect(os.path.join(ws, "logbook.sqlite"))
    check(con.execute("PRAGMA journal_mode").fetchone()[0] == "wal", "logbook in WAL mode")
    check(con.execute("PRAGMA user_version").fetchone()[0] == 1, "logbook schema version 1")
    check(con.execute("PRAGMA integrity_check").fetchone()[0] == "ok", "logbook integrity ok")
    rows = con.execute("SELECT kind, outcome FROM results").fetchall()
    check(rows == [("init", "ok")], f"init logs itself ({rows})")
    con.close()

    # The name defaults to the folder's; a tcp link.
    ws = init_workspace(os.path.join("deeper", "line_7"), "--tcp", "10.0.0.9:5020")
    with open(os.path.join(ws, "rig.toml"), "rb") as f:
        profile = tomllib.load(f)
    check(profile["name"] == "line_7", f"default name is the folder's ({profile['name']})")
    check(profile["link"]["kind"] == "tcp" and profile["link"]["address"] == "10.0.0.9:5020",
          "tcp link")
    code, out, _ = run("init", "j_ws", "--json")
    doc = json.loads(out)
    check(code == 0 and doc["name"] == "j_ws" and doc["link"] == "none", "init --json")


def case_errors():
    ws = init_workspace()
    before = {n: sha256(os.path.join(ws, n)) for n in ("rig.toml", "logbook.sqlite")}
    code, _, err = run("init", "ws", "--name", "other")
    check(code == 2, f"init into an existing workspace exits 2 (got {code})")
    check("already a workspace" in err and err.count("\n") == 1, f"one sentence ({err!r})")
    after = {n: sha256(os.path.join(ws, n)) for n in ("rig.toml", "logbook.sqlite")}
    check(before == after, "the existing workspace is untouched")

    for args, words in [(["--period", "0"], "--period: sampling.period_s = 0 must be > 0"),
                        (["--actuator", "5:1"], "--actuator"),
                        (["--actuator", "0:10", "--safe", "20"], "--safe: actuator.safe = 20"),
                        (["--serial", "/dev/ttyS1", "--baud", "12345"], "--baud: link.baud = 12345"),
                        (["--tcp", "nohost"], "--tcp: link.address")]:
        code, _, err = run("init", "bad_ws", *args)
        check(code == 2, f"init {args} exits 2 (got {code})")
        check(words in err, f"init {args} says {words!r} ({err.strip()})")
        check(not os.path.exists(path("bad_ws")), f"init {args} leaves nothing behind")

    code, _, err = run("log", cwd=SOURCE)
    check(code == 2 and "not inside a rig workspace" in err, f"log outside a workspace ({err.strip()})")
    code, _, err = run("log", "--rig", path("nowhere"))
    check(code == 2 and "is not a loopwright workspace" in err, f"--rig to a plain folder ({err.strip()})")

    # A bad TOML line: reported with file:line:column, exit 3 (bad input data).
    with open(os.path.join(ws, "rig.toml")) as f:
        lines = f.read().splitlines()
    at = next(i for i, l in enumerate(lines) if l.startswith("period_s"))
    lines[at] = "period_s = = 0.1"
    with open(os.path.join(ws, "rig.toml"), "w") as f:
        f.write("\n".join(lines) + "\n")
    code, _, err = run("log", cwd=ws)
    check(code == 3, f"a bad profile exits 3 (got {code})")
    check(f"rig.toml:{at + 1}:" in err, f"the bad line {at + 1} is named ({err.strip()})")
    # A rule broken in the file: the value's line.
    lines[at] = "period_s = -2"
    with open(os.path.join(ws, "rig.toml"), "w") as f:
        f.write("\n".join(lines) + "\n")
    code, _, err = run("drift", "--rig", ws)
    check(code == 3 and f"rig.toml:{at + 1}:" in err and "must be > 0" in err,
          f"a broken rule names its line ({err.strip()})")

    ws2 = init_workspace("ws2")
    code, _, err = run("drift", cwd=ws2)
    check(code == 1 and "no successful fit" in err, f"drift without fits exits 1 ({err.strip()})")
    code, _, err = run("drift", "--plot", "x.txt", cwd=ws2)
    check(code == 2, f"drift --plot with a bad extension exits 2 (got {code})")
    with open(os.path.join(ws2, "logbook.sqlite"), "r+b") as f:
        f.write(b"not a database at all, sorry" * 8)
    code, _, err = run("log", cwd=ws2)
    check(code == 3 and "logbook" in err, f"a damaged logbook exits 3 ({err.strip()})")


def case_log():
    ws = init_workspace()
    rec = simulate("step_a.csv", 2.0, 11)
    digest = sha256(rec)
    size = os.path.getsize(rec)
    code, _, err = run("--rig", ws, "fit", rec, "--structure", "fopdt")
    check(code == 0, f"fit in the workspace exits 0 ({err.strip()})")
    check(sha256(rec) == digest, "the recording is not modified")
    code, _, err = run("fit", rec, "--structure", "fopdt", cwd=ws)  # the current folder
    check(code == 0, f"fit inside the workspace folder exits 0 ({err.strip()})")
    code, out, err = run("log", "--json", "--rig", ws)
    check(code == 0, f"log --json exits 0 ({err.strip()})")
    doc = json.loads(out)
    kinds = [r["kind"] for r in doc["results"]]
    check(kinds == ["init", "fit", "fit"], f"results in order ({kinds})")
    fit = doc["results"][1]
    check(fit["outcome"] == "ok", "fit outcome ok")
    check(len(fit["recordings"]) == 1 and fit["recordings"][0]["sha256"] == digest,
          "the logged SHA-256 is hashlib's")
    check(fit["recordings"][0]["size"] == size, "the logged size is the file's")
    check(os.path.samefile(fit["recordings"][0]["path"], rec), "the logged path is the file")
    check("fit" in fit["command_line"], "the command line is logged")
    check(any(p["name"] for p in fit["summary"]["parameters"]), "the fit summary is logged")
    code, out, _ = run("log", "--recordings", "--json", "--rig", ws)
    recs = json.loads(out)["recordings"]
    check(len(recs) == 1, f"one recording seen twice is listed once ({len(recs)})")
    code, out, _ = run("log", "--kind", "fit", "--last", "1", "--json", "--rig", ws)
    ids = [r["id"] for r in json.loads(out)["results"]]
    check(ids == [3], f"--kind fit --last 1 ({ids})")
    code, out, _ = run("log", "--rig", ws)
    check(code == 0 and "fopdt" in out and "step_a.csv" in out, "human log lists the fits")
    # A five-parameter fit: its summary is longer than a line and is wrapped, never cut.
    code, _, err = run("--rig", ws, "fit", rec, "--structure", "sopdt-zero")
    check(code == 0, f"sopdt-zero fit in the workspace exits 0 ({err.strip()})")
    code, out, _ = run("log", "--rig", ws)
    doc = json.loads(run("log", "--json", "--rig", ws)[1])
    names = [p["name"] for p in doc["results"][-1]["summary"]["parameters"]]
    check(len(names) == 5, f"five parameters logged ({names})")
    rows = out.splitlines()
    last = next((i for i, l in enumerate(rows) if "sopdt-zero" in l), len(rows))
    shown = " ".join(rows[last:])
    check(all(f"{n}=" in shown for n in names), f"every parameter is shown ({shown!r})")
    check("..." not in out, f"no summary is cut short ({out!r})")
    check(len(rows) - last >= 2, f"the long summary is wrapped onto more lines ({rows[last:]})")
    # Each continuation line holds only the summary column, under the first line's summary.
    col = rows[last].index("sopdt-zero")
    for l in rows[last + 1:]:
        check(l[:col].strip() == "" and len(l[col:].rstrip()) <= 60,
              f"continuation in the summary column, at most 60 characters ({l!r})")
    # Outside a workspace nothing is logged and nothing is written.
    code, _, _ = run("fit", rec, "--structure", "fopdt")
    check(code == 0 and sorted(os.listdir(WORK)) == ["step_a.csv", "ws"],
          f"no logbook appears outside a workspace ({sorted(os.listdir(WORK))})")


def case_drift():
    ws = init_workspace()
    for name, gain, seed in [("before.csv", 2.0, 21), ("after.csv", 2.6, 22)]:
        code, _, err = run("--rig", ws, "fit", simulate(name, gain, seed), "--structure", "fopdt")
        check(code == 0, f"fit {name} ({err.strip()})")
    code, out, err = run("drift", "--json", "--plot", path("drift.svg"), "--rig", ws)
    check(code == 0, f"drift exits 0 ({err.strip()})")
    doc = json.loads(out)
    check(doc["structure"] == "fopdt" and len(doc["fits"]) == 2, "two fopdt fits")
    flagged = {}
    for p in doc["parameters"]:
        a, b = p["fits"]
        # Two-sample z test on independent estimates (e.g. Montgomery & Runger, Applied
        # Statistics and Probability for Engineers, ch. 10; from memory): se from the 95 %
        # interval as half-width / z(0.975), z(0.975) from scipy.
        z975 = norm.ppf(0.975)
        se = [(f["ci95"][1] - f["ci95"][0]) / (2 * z975) for f in (a, b)]
        z = (b["value"] - a["value"]) / math.hypot(*se)
        p_value = 2 * norm.sf(abs(z))
        check(abs(b["z"] - z) <= 1e-3 * max(1.0, abs(z)), f"{p['name']}: z {b['z']} vs {z}")
        check(b["significant"] == (p_value < 0.05), f"{p['name']}: flag matches p = {p_value:.3g}")
        flagged[p["name"]] = b["significant"]
    gain_name = doc["parameters"][0]["name"]
    check(flagged[gain_name], f"the 30 % gain change is significant ({flagged})")
    check(doc["significant_changes"] == sum(flagged.values()), "significant_changes counts them")
    root = ET.parse(path("drift.svg")).getroot()  # raises on malformed XML
    check(root.tag == SVG + "svg", "drift --plot writes an SVG")
    texts = ["".join(t.itertext()) for t in root.iter(SVG + "text")]
    for p in doc["parameters"]:
        check(any(p["name"] in t for t in texts), f"the figure names {p['name']} ({texts[:8]})")
    # One filled mark per estimate: vermillion circles, reddish-purple diamonds where flagged
    # (the Okabe & Ito inks of io/figure.h).
    fills = [e.get("fill", "").upper() for e in root.iter()
             if e.tag in (SVG + "polygon", SVG + "polyline")]
    n_flagged = sum(flagged.values())
    check(fills.count("#CC79A7") == n_flagged, f"{n_flagged} flagged marks ({fills.count('#CC79A7')})")
    check(fills.count("#D55E00") == 2 * len(flagged) - n_flagged,
          f"plain marks for the other estimates ({fills.count('#D55E00')})")
    code, out, _ = run("drift", "--rig", ws)
    check(code == 0 and "significant" in out and "before.csv" in out and "after.csv" in out,
          "human drift names the recordings and the verdict")
    # The same words as fit --compare for the same two-sample z test.
    check("changed" in out and ("within uncertainty" in out or all(flagged.values())),
          f"drift's verdicts read 'changed' / 'within uncertainty' ({out!r})")
    code, _, err = run("drift", "--structure", "sopdt", "--rig", ws)
    check(code == 1 and "structure 'sopdt'" in err, f"drift of a structure never fitted ({err.strip()})")


cli_common.main(globals())
