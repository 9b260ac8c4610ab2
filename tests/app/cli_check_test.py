#!/usr/bin/env python3
"""End-to-end tests of `loopwright check`: cli_check_test.py BINARY SOURCE_DIR WORK_DIR CASE.

Each CASE runs the real executable. The recordings are made by `loopwright simulate` from plants
of our own (or are the bundled demo recordings, recordings/README.md); what is expected follows
from how they were made: a closed-loop recording of the plant a model was fitted to is
`confirmed` in at least 95 % of noise-only reruns, one of a plant whose time constant grew by
25 % is `stale`, one whose actuator sat at its limit is `saturated`.
"""
import json
import re
import os
import random
import xml.etree.ElementTree as ET

import cli_common
from cli_common import SOURCE, check, path, run


# Our plant for the rerun cases: a mixing-tank temperature loop, 1.6 degC/% with a 12 s lag and
# 2.5 s dead time, sampled at 2 Hz, under PI control.
PLANT = "1.6*exp(-2.5*s)/(12*s+1)"
SLOWER = "1.6*exp(-2.5*s)/(15*s+1)"  # time constant +25 %
CONTROLLER, GAIN = "pi:0.12", "2.2"


def fitted_model():
    """A model fitted to a noisy open-loop step test of PLANT."""
    code, _, err = run("simulate", "--plant", PLANT, "--input", "step:20:30:10", "--rate", "2",
                       "--duration", "150", "--noise", "0.05", "--seed", "7", "-o",
                       path("open.csv"))
    check(code == 0, f"simulate open loop: {err}")
    code, _, err = run("fit", path("open.csv"), "-o", path("model.json"))
    check(code == 0, f"fit: {err}")
    return path("model.json")


def closed_loop(plant, seed, name, extra=()):
    code, _, err = run("simulate", "--plant", plant, "--controller", CONTROLLER, "--gain", GAIN,
                       "--reference", "step:40:46:10", "--rate", "2", "--duration", "120",
                       "--noise", "0.06", "--seed", str(seed), *extra, "-o", path(name))
    check(code == 0, f"simulate closed loop {name}: {err}")
    return path(name)


def check_json(model, rec, *extra):
    code, out, err = run("check", model, "--controller", CONTROLLER, "--gain", GAIN, rec,
                         "--json", *extra)
    doc = json.loads(out) if out.strip() else {}
    return code, doc, err


def case_reruns():
    model = fitted_model()
    confirmed = stale = 0
    n = 20
    for i in range(n):
        code, doc, err = check_json(model, closed_loop(PLANT, 100 + i, f"right_{i}.csv"))
        check(code in (0, 1), f"check exits 0 or 1 (got {code}: {err})")
        check((code == 0) == (doc.get("verdict") == "confirmed"), "exit 0 exactly when confirmed")
        confirmed += doc.get("verdict") == "confirmed"
        if doc.get("verdict") != "confirmed":
            print("  not confirmed:", doc.get("reason"))
        code, doc, err = check_json(model, closed_loop(SLOWER, 300 + i, f"slower_{i}.csv"))
        stale += doc.get("verdict") == "stale" and code == 1
    print(f"right model confirmed in {confirmed} of {n}; +25 % time constant stale in {stale}")
    check(confirmed >= 0.95 * n, f"confirmed in >= 95 % of reruns (got {confirmed} of {n})")
    check(stale >= 0.95 * n, f"stale in >= 95 % of changed-plant runs (got {stale} of {n})")


def case_saturated():
    model = fitted_model()
    rec = closed_loop(PLANT, 11, "clipped.csv", ("--saturate", "0:36"))
    for extra in ((), ("--actuator", "0:36")):
        code, doc, err = check_json(model, rec, *extra)
        check(code == 1 and doc.get("verdict") == "saturated",
              f"clipped run {extra}: saturated, exit 1 (got {code}, {doc.get('verdict')}: {err})")
        st = doc["steps"][0] if doc.get("steps") else {}
        check(st.get("at_limit") is True and st.get("time_at_limit", 0) > 1.0,
              f"the step sat at the limit over a second ({st.get('time_at_limit')})")
    # Room to spare: the same loop with generous limits is not saturated.
    rec = closed_loop(PLANT, 12, "roomy.csv", ("--saturate", "0:100"))
    code, doc, _ = check_json(model, rec, "--actuator", "0:100")
    check(doc.get("verdict") != "saturated", f"limits never reached: not saturated ({doc.get('reason')})")


def case_demo():
    """The bundled demo: the model fitted to the heater zone's step test against the zone's
    closed-loop recording (its card: pi:0.005, K = 1.2, heater 0-100 %)."""
    rec_dir = os.path.join(SOURCE, "recordings")
    code, _, err = run("fit", os.path.join(rec_dir, "heater_zone_step.csv"), "-o", path("zone.json"))
    check(code == 0, f"fit the heater zone: {err}")
    code, out, err = run("check", path("zone.json"), "--controller", "pi:0.005", "--gain", "1.2",
                         os.path.join(rec_dir, "heater_zone_closed_loop.csv"), "--actuator", "0:100",
                         "--plot", path("zone_check.svg"), "--save", path("zone_check.json"))
    print(out)
    check(code == 0, f"demo check confirmed, exit 0 (got {code}: {err})")
    check("verdict: confirmed" in out, "text names the verdict")
    for word in ("rise time", "overshoot", "settling time", "peak actuator", "tolerance"):
        check(word in out, f"summary table has '{word}'")
    with open(path("zone_check.json")) as f:
        doc = json.load(f)
    for key in ("steps", "fit_percent", "noise", "verdict"):
        check(key in doc, f"saved check has '{key}'")
    st = doc["steps"][0]
    for key in ("at", "from", "to", "measured", "predicted", "consistent"):
        check(key in st, f"step has '{key}'")
    check(st["from"] == 150 and st["to"] == 170 and st["at"] == 60, f"step 150 -> 170 at 60 s ({st})")
    for key in ("rise_time", "overshoot_percent", "peak_time", "settling_time",
                "steady_state_error", "peak_actuator"):
        check(key in st["measured"] and key in st["predicted"], f"metric key '{key}' as in predict")
    # The recording's own noise (its card: sd 0.15 degC, then quantised to 0.1 degC, which makes
    # the median-based estimate coarse) is what check estimates.
    check(0.12 < doc["noise"]["output_sd"] < 0.2, f"noise sd near 0.15 ({doc['noise']})")
    # The recorded heater power is u = K (s + 0.005)/s applied to r - y with K = 1.2 (the card);
    # the record shows that gain (within the output noise the error carries), so no note.
    applied = doc["applied_gain"]
    check(abs(applied["gain"] - 1.2) < 0.02 and applied["fit_percent"] > 95,
          f"the record shows K = 1.2 ({applied})")
    check(not any("recorded actuator follows" in n for n in doc["notes"]), f"no note ({doc['notes']})")
    # Given the wrong gain, the model looks stale; the check says the record ran another gain.
    code, out, err = run("check", path("zone.json"), "--controller", "pi:0.005", "--gain", "0.6",
                         os.path.join(rec_dir, "heater_zone_closed_loop.csv"), "--actuator",
                         "0:100", "--json")
    wrong = json.loads(out) if out.strip() else {}
    check(code == 1 and wrong.get("verdict") == "stale", f"K = 0.6: stale, exit 1 (got {code})")
    check(any(re.search(r"recorded actuator follows K = 1\.(19|20)\d* ", n) and "not the K = 0.6 given" in n
              for n in wrong.get("notes", [])), f"the note names both gains ({wrong.get('notes')})")
    check("the gain given is not the one the rig ran" in wrong.get("reason", ""),
          f"the stale reason points to it ({wrong.get('reason')!r})")
    root = ET.parse(path("zone_check.svg")).getroot()
    lines = [e for e in root.iter() if e.tag.endswith("polyline") or e.tag.endswith("path")]
    check(len(lines) > 5, "the figure is an SVG with drawn series")
    # The report takes the saved check: its verdict box and section.
    code, _, err = run("report", path("zone.json"), path("zone_check.json"), path("zone_check.svg"),
                       "-o", path("report.html"))
    check(code == 0, f"report with the check: {err}")
    with open(path("report.html")) as f:
        html = f.read()
    check("confirmed" in html, "the report shows the verification verdict")
    # The reworked zone (recordings/README.md: slower, weaker, longer dead time) under the same
    # controller: the old model is stale.
    code, _, err = run("simulate", "--plant", "2.4*exp(-41*s)/((312*s+1)*(45*s+1))",
                       "--controller", "pi:0.005", "--gain", "1.2", "--reference",
                       "step:150:170:60", "--saturate", "0:100", "--rate", "1", "--duration",
                       "1500", "--noise", "0.15", "--quantize", "0.1", "--seed", "606", "-o",
                       path("rework_closed.csv"))
    check(code == 0, f"simulate the reworked zone: {err}")
    code, out, err = run("check", path("zone.json"), "--controller", "pi:0.005", "--gain", "1.2",
                         path("rework_closed.csv"), "--actuator", "0:100")
    check(code == 1 and "verdict: stale" in out, f"reworked zone: stale, exit 1 (got {code}: {out[-300:]})")


def case_no_peak():
    """Peak time is judged only where the predicted response has a peak. Our tank under a slower
    PI, 0.8 (s + 0.09)/s: its prediction overshoots by a fraction of a percent, well inside what
    the noise (sd 0.06 on a step of 6) and resolution allow, so the peak is just the highest point
    of the noisy plateau and is not judged. The loop of the rerun cases (PI 2.2 (s + 0.12)/s,
    about 8 % overshoot) has a peak, and its time is judged."""
    model = fitted_model()
    code, _, err = run("simulate", "--plant", PLANT, "--controller", "pi:0.09", "--gain", "0.8",
                       "--reference", "step:40:46:10", "--rate", "2", "--duration", "120",
                       "--noise", "0.06", "--seed", "4", "-o", path("slow.csv"))
    check(code == 0, f"simulate the slow loop: {err}")
    args = ["check", model, "--controller", "pi:0.09", "--gain", "0.8", path("slow.csv")]
    code, out, err = run(*args, "--save", path("slow_check.json"))
    print(out)
    check(code == 0 and "verdict: confirmed" in out, f"slow loop confirmed ({code}: {err})")
    row = next((l for l in out.splitlines() if l.strip().startswith("peak time ")), "")
    check(row.split() == ["peak", "time", "no", "peak"],
          f"peak time row: no numbers, verdict 'no peak' ({row!r})")
    check("peak time not judged: the predicted overshoot" in out and "no peak to time" in out,
          "text says why the peak time is not judged")
    check("all 5 metrics of 1 step" in out, "the peak time is not counted among the judged metrics")
    code, out, err = run(*args, "--json")
    st = json.loads(out)["steps"][0]
    check(st["predicted"]["overshoot_percent"] > 0,
          f"the prediction does overshoot, a little ({st['predicted']['overshoot_percent']})")
    for part in ("measured", "predicted", "tolerance", "consistent"):
        check(st[part]["peak_time"] is None, f"{part}.peak_time is null ({st[part]['peak_time']})")
    why = st["not_judged"].get("peak_time", "")
    check(why.startswith("no peak: the predicted overshoot"), f"not_judged.peak_time says why ({why!r})")
    check(list(st["not_judged"]) == ["peak_time"], f"only the peak time is not judged ({st['not_judged']})")
    for key in ("rise_time", "overshoot_percent", "settling_time", "steady_state_error",
                "peak_actuator"):
        check(st["consistent"][key] is True, f"{key} judged and consistent ({st['consistent'][key]})")
    # The report renders the check section with the peak time as "no peak" and the reason.
    code, _, err = run("report", model, path("slow_check.json"), "-o", path("slow_report.html"))
    check(code == 0, f"report with the check: {err}")
    with open(path("slow_report.html")) as f:
        html = f.read()
    check("Verification against a closed-loop recording" in html, "the report has the check section")
    check("no peak" in html and "no peak to time" in html,
          "the report marks the peak time 'no peak' and says why")
    # A loop with a peak: its time is judged, as before.
    code, doc, err = check_json(model, closed_loop(PLANT, 41, "peaked.csv"))
    st = doc["steps"][0]
    check(st["predicted"]["overshoot_percent"] > 5, f"this loop overshoots ({st['predicted']})")
    check(st["consistent"]["peak_time"] is True and st["not_judged"] == {},
          f"peak time judged and consistent ({st['consistent']}, {st['not_judged']})")
    check(st["tolerance"]["peak_time"][0] <= st["measured"]["peak_time"] <= st["tolerance"]["peak_time"][1],
          f"measured peak time within its tolerance ({st['measured']}, {st['tolerance']})")


def case_errors():
    code, out, _ = run("check", "--help")
    usage = next((l for l in out.splitlines() if l.startswith("Usage:")), "")
    check(code == 0 and usage.endswith(" check [OPTIONS] [MODEL.json] REC.csv"),
          f"check --help: the model file optional, then the recording ({usage!r})")
    code, _, err = run("check", "--plant", PLANT, "--gain", GAIN)
    check(code == 2 and "[MODEL.json] REC.csv is required" in err,
          f"no recording: exit 2 naming what is missing ({err.strip()})")
    rec = closed_loop(PLANT, 5, "plain.csv")
    args = ["--plant", PLANT, "--controller", CONTROLLER, "--gain", GAIN]
    code, _, err = run("check", *args, rec, "--plot", path("fig.txt"))
    check(code == 2 and not os.path.exists(path("fig.txt")), f"--plot .txt: exit 2, no file ({code}: {err})")
    code, _, err = run("check", *args, rec, "--save", path("saved.csv"))
    check(code == 2 and not os.path.exists(path("saved.csv")), f"--save not .json: exit 2 ({err})")
    code, _, err = run("check", *args, rec, "--draws", "50")
    check(code == 2 and "200" in err, f"--draws 50: exit 2 naming the floor ({err})")
    code, _, err = run("check", *args, rec, "--actuator", "5:1")
    check(code == 2 and "--actuator" in err, f"--actuator 5:1: exit 2 ({err})")
    with open(path("flat.csv"), "w") as f:
        f.write("t,r,u,y\n")
        for k in range(100):
            f.write(f"{k * 0.5},40,25,{40 + 0.01 * (k % 3)}\n")
    code, _, err = run("check", *args, path("flat.csv"))
    check(code == 3 and "never steps" in err, f"constant reference: exit 3 with a sentence ({err})")
    with open(path("no_r.csv"), "w") as f:
        f.write("t,u,y\n0,1,2\n1,1,2\n2,1,2\n3,1,2\n")
    code, _, err = run("check", *args, path("no_r.csv"))
    check(code == 3 and "'r'" in err, f"no reference column: exit 3 naming it ({err})")
    # A dead sensor: the recorded output stays at its resting 40 (noise of sd 0.06 only) while
    # the reference steps 40 -> 46: refused with exit 3 and one sentence, nothing written.
    with open(rec) as f:
        lines = f.read().splitlines()
    header = next(i for i, l in enumerate(lines) if not l.startswith("#"))
    cols = lines[header].split(",")
    iy = cols.index("y")
    rng = random.Random(9)
    with open(path("dead.csv"), "w") as f:
        f.write(lines[header] + "\n")
        for l in lines[header + 1:]:
            cells = l.split(",")
            cells[iy] = repr(40 + rng.gauss(0, 0.06))
            f.write(",".join(cells) + "\n")
    code, out, err = run("check", *args, path("dead.csv"), "--save", path("dead_check.json"),
                         "--plot", path("dead.svg"))
    lines = [l for l in err.splitlines() if l.strip() and not l.startswith("warning:")]
    check(code == 3, f"dead sensor: exit 3 (got {code}: {err.strip()})")
    check(len(lines) == 1 and "dead.csv" in lines[0] and "did not respond" in lines[0] and
          "the reference stepped by 6 at t = 10 s" in lines[0],
          f"dead sensor: one sentence naming the file, the step and the verdict ({err!r})")
    check(not os.path.exists(path("dead_check.json")) and not os.path.exists(path("dead.svg")),
          "dead sensor: no --save or --plot file left")
    code, out, err = run("check", "--plant", PLANT, "--controller", CONTROLLER, "--gain", GAIN, rec)
    check(code == 0 and "plant formula has no parameter uncertainty" in err,
          f"a formula checks with a warning that it has no uncertainty ({code}: {err})")


cli_common.main(globals())
