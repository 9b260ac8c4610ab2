#!/usr/bin/env python3
"""End-to-end tests of `fit --compare`, `fit --band` and `fit --closed-loop`:
cli_refit_test.py BINARY SOURCE_DIR WORK_DIR CASE.

Expected values come from outside loopwright: the two-sample z test
z = (new - old) / sqrt(se_old^2 + se_new^2), significant when |z| > 1.96 (Montgomery & Runger,
Applied Statistics and Probability for Engineers, ch. 10; from memory), the true plants written
on the cards of recordings/README.md, and the first-order step response in closed form.
"""
import json
import math
import os
import random
import re

import cli_common
from cli_common import SOURCE, WORK, check, path, run

REC = os.path.join(SOURCE, "recordings")


def fit_json(*args):
    code, out, err = run("fit", *args, "--json")
    check(code == 0, f"fit {' '.join(args)} exits 0 (got {code}: {err.strip()})")
    return json.loads(out) if code == 0 else None


def old_model_and_band():
    """The heater zone before the rework: its model file and a saved band."""
    code, _, err = run("fit", os.path.join(REC, "heater_zone_step.csv"), "-o", path("old.json"))
    check(code == 0, f"fit of the first recording exits 0 ({err.strip()})")
    code, _, err = run("band", path("old.json"), "--controller", "pi:0.004", "--overshoot-max",
                       "10", "--settle-max", "1000", "-o", path("old_band.json"))
    check(code == 0, f"band on the old model exits 0 ({err.strip()})")


def se_of(entry, cov_index, old_doc):
    cov = old_doc.get("covariance")
    if cov:
        return math.sqrt(cov[cov_index][cov_index])
    lo, hi = entry["ci95"]
    return (hi - lo) / (2 * 1.96)


def case_compare():
    old_model_and_band()
    old = json.load(open(path("old.json")))
    doc = fit_json(os.path.join(REC, "heater_zone_after_rework.csv"), "--compare",
                   path("old.json"), "--structure", "sopdt")
    if doc is None:
        return
    cmp = doc["compare"]
    check(cmp["old_model"] == path("old.json"), "compare.old_model names the file")
    check(cmp["band"] is None, "compare.band is null without --band")
    names = [p["name"] for p in cmp["parameters"]]
    check(names == ["gain", "time_constant_1", "time_constant_2", "dead_time"],
          f"every sopdt parameter compared (got {names})")
    new_by_name = {p["name"]: p for p in doc["parameters"]}
    for i, p in enumerate(cmp["parameters"]):
        o = old["parameters"][[q["name"] for q in old["parameters"]].index(p["name"])]
        oi = [q["name"] for q in old["parameters"]].index(p["name"])
        n = new_by_name[p["name"]]
        check(p["old"]["value"] == o["value"], f"{p['name']}: old value from the old file")
        check(p["new"]["value"] == n["value"], f"{p['name']}: new value from the new fit")
        check(abs(p["change"] - (n["value"] - o["value"])) <= 1e-12 * max(1, abs(o["value"])),
              f"{p['name']}: change = new - old")
        se_old = se_of(o, oi, old)
        lo, hi = n["ci95"]
        se_new = p["new"]["se"]
        check(abs(se_new - (hi - lo) / 2 / 1.96) < 0.01 * se_new,
              f"{p['name']}: new se matches its 95 % interval")
        z = (n["value"] - o["value"]) / math.hypot(se_old, se_new)
        check(abs(p["z"] - z) < 1e-6 * max(1, abs(z)), f"{p['name']}: z {p['z']} = {z} (formula)")
        check(p["significant"] == (abs(z) > 1.96), f"{p['name']}: significant iff |z| > 1.96")
    by = {p["name"]: p for p in cmp["parameters"]}
    # The card: main time constant 240 -> 312 s (+30 %), gain 2.6 -> 2.4, dead time 38 -> 41 s.
    check(by["time_constant_1"]["significant"] is True, "the +30 % main time constant is significant")
    check(by["time_constant_1"]["change"] > 40, "the main time constant grew by tens of seconds")
    check(by["gain"]["change"] < 0, "the gain went down")
    # Human output: one row per parameter, verdict words, the rule.
    code, out, err = run("fit", os.path.join(REC, "heater_zone_after_rework.csv"), "--compare",
                         path("old.json"), "--structure", "sopdt")
    check(code == 0, "human compare exits 0")
    check("|z| > 1.96" in out, "human output states the rule")
    row = [l for l in out.splitlines() if l.strip().startswith("time_constant_1")]
    check(row and "changed" in row[-1], f"time_constant_1 row says changed ({row})")
    check("\x1b[" not in out, "no colour when stdout is not a terminal")


def case_compare_same():
    # A model against itself: every change 0, nothing significant.
    code, _, err = run("fit", os.path.join(REC, "heater_zone_step.csv"), "-o", path("m.json"))
    check(code == 0, f"fit exits 0 ({err.strip()})")
    doc = fit_json(os.path.join(REC, "heater_zone_step.csv"), "--compare", path("m.json"))
    if doc is None:
        return
    for p in doc["compare"]["parameters"]:
        check(p["change"] == 0 and p["z"] == 0 and p["significant"] is False,
              f"{p['name']}: refit of the same recording changes nothing ({p})")
    # In words: no change beyond the uncertainty (not "same": a z test cannot show sameness).
    code, out, _ = run("fit", os.path.join(REC, "heater_zone_step.csv"), "--compare", path("m.json"))
    rows = [l for l in out.splitlines() if l.startswith("  gain")]
    check(code == 0 and rows and rows[-1].rstrip().endswith("within uncertainty"),
          f"the gain row says within uncertainty ({rows})")


def case_band():
    old_model_and_band()
    band = json.load(open(path("old_band.json")))
    doc = fit_json(os.path.join(REC, "heater_zone_after_rework.csv"), "--compare",
                   path("old.json"), "--band", path("old_band.json"))
    if doc is None:
        return
    b = doc["compare"]["band"]
    check(b is not None, "compare.band present with --band")
    if b is None:
        return
    check(b["controller"] == "pi:0.004", "the band file's controller is used")
    check(b["specs"] == band["specs"], "the band file's specs are used")
    check(b["old"]["recommended_gain"] == band["recommended_gain"], "old recommended gain echoed")
    check(b["gain_in_use"] == band["recommended_gain"] and "recommended" in b["gain_source"],
          "without --gain the gain in use is the old recommended gain")
    for key in ["locus", "response", "robust"]:
        check(key in b["new"], f"new bands have {key}")
    k = b["gain_in_use"]

    def inside(ranges):
        return any(lo <= k <= (math.inf if hi is None else hi) for lo, hi in ranges)

    check(b["inside"]["locus"] == inside(b["new"]["locus"]), "inside.locus agrees with the ranges")
    check(b["inside"]["response"] == inside(b["new"]["response"]),
          "inside.response agrees with the ranges")
    g = b["new"]["recommended_gain"]
    check(isinstance(g, float) and g > 0, f"a new recommended gain ({g})")
    check(isinstance(b["still_inside"], bool) and b["judged_on"], "still_inside and judged_on")
    # --gain names the gain in use; a gain far above every band is not inside.
    doc = fit_json(os.path.join(REC, "heater_zone_after_rework.csv"), "--band",
                   path("old_band.json"), "--gain", "1000")
    if doc:
        b2 = doc["compare"]["band"]
        check(b2["gain_in_use"] == 1000 and b2["gain_source"] == "--gain", "--gain is the gain in use")
        check(b2["still_inside"] is False, "K = 1000 is not inside the new bands")
    code, out, err = run("fit", os.path.join(REC, "heater_zone_after_rework.csv"), "--band",
                         path("old_band.json"), "--gain", "1000")
    check(code == 0 and "no longer inside" in out, "human output says 'no longer inside'")
    check("new recommended gain K =" in out, "human output gives the new recommended gain")


def case_closed_loop():
    # The bundled closed-loop recording (card: 2.6 exp(-38 s)/((240 s + 1)(45 s + 1)) under
    # pi:0.005 at K = 1.2).
    doc = fit_json(os.path.join(REC, "heater_zone_closed_loop.csv"), "--closed-loop",
                   "--controller", "pi:0.005", "--gain", "1.2", "--structure", "sopdt")
    if doc is None:
        return
    truth = {"gain": 2.6, "time_constant_1": 240, "time_constant_2": 45, "dead_time": 38}
    for p in doc["parameters"]:
        rel = abs(p["value"] - truth[p["name"]]) / truth[p["name"]]
        check(rel < 0.15, f"{p['name']} {p['value']:.4g} within 15 % of the card's {truth[p['name']]}")
    check(doc["closed_loop"]["controller"] == "pi:0.005", "closed_loop.controller")
    check(doc["units"]["time"] == "s", "units.time")
    check(not any("--closed-loop" in w for w in doc["warnings"]),
          f"the closed-loop fit does not advise itself ({doc['warnings']})")
    # Fitted as if open loop, the record's changing reference column says what it may be:
    # u then follows the output's noise, which biases an output-error fit.
    plain = fit_json(os.path.join(REC, "heater_zone_closed_loop.csv"), "--structure", "sopdt")
    if plain is not None:
        check(any("reference column 'r' that changes" in w and "--closed-loop" in w
                  for w in plain["warnings"]),
              f"an open-loop fit of closed-loop data points to --closed-loop ({plain['warnings']})")
    step = fit_json(os.path.join(REC, "heater_zone_step.csv"), "--structure", "sopdt")
    if step is not None:
        check(not any("reference column" in w for w in step["warnings"]),
              "a step test without a reference column gets no such warning")
    # auto: every structure fitted inside the loop, in seconds (it once never finished: a dead
    # time a hair off a whole number of samples stalled the loop simulation); the card's
    # structure is chosen (identify/structure_selection.h: the smallest AICc, or the structure
    # with fewest parameters within the near-tie width of it).
    code, out, err = run("fit", os.path.join(REC, "heater_zone_closed_loop.csv"), "--closed-loop",
                         "--controller", "pi:0.005", "--gain", "1.2", "--json", timeout=60)
    check(code == 0, f"--structure auto in the loop exits 0 within 60 s ({code}: {err.strip()})")
    doc = json.loads(out) if code == 0 else {"candidates": []}
    names = [c["structure"] for c in doc.get("candidates", [])]
    check(names == ["fopdt", "sopdt", "underdamped", "integrating", "sopdt-zero"],
          f"auto lists every structure ({names})")
    usable = [c for c in doc.get("candidates", []) if c["usable"]]
    check(len(usable) >= 3, f"at least three structures fitted in the loop ({len(usable)})")
    if usable:
        best = min(usable, key=lambda c: c["aicc"])
        check(best["smallest_aicc"] and best["delta_aicc"] == 0
              and sum(c["smallest_aicc"] for c in usable) == 1,
              f"the structure with the smallest AICc is marked ({best['structure']})")
        chosen = [c for c in usable if c["chosen"]]
        check(len(chosen) == 1 and chosen[0]["structure"] == doc["structure"],
              f"the chosen candidate is marked and is the model ({[c['structure'] for c in chosen]})")
        width = doc.get("selection", {}).get("support_width", 0)
        for c in chosen:
            check(c is best or (c["delta_aicc"] <= width
                                and c["free_parameters"] < best["free_parameters"]),
                  f"the chosen is the smallest AICc or a simpler one within {width} of it")
            check(abs(c["aicc"] - doc["criterion"]["value"]) < 1e-9 * abs(c["aicc"]),
                  "the chosen candidate's AICc is the model's criterion")
    check(doc.get("structure") == "sopdt", f"auto chooses the card's sopdt ({doc.get('structure')})")
    for p in doc.get("parameters", []) if doc.get("structure") == "sopdt" else []:
        rel = abs(p["value"] - truth[p["name"]]) / truth[p["name"]]
        check(rel < 0.15, f"auto: {p['name']} {p['value']:.4g} within 15 % of the card's")
    # No --gain: exit 2, one sentence.
    code, out, err = run("fit", os.path.join(REC, "heater_zone_closed_loop.csv"), "--closed-loop")
    check(code == 2 and "--gain" in err, f"--closed-loop without --gain exits 2 ({code}, {err!r})")
    # An open-loop recording has no r column: exit 3 naming the column.
    code, out, err = run("fit", os.path.join(REC, "heater_zone_step.csv"), "--closed-loop",
                         "--gain", "1")
    check(code == 3 and "'r'" in err, f"no reference column exits 3 ({code}, {err!r})")


def case_near_tie():
    # A first-order recording of our own (simulate: truth fopdt, seed 6) on which the plain
    # smallest AICc takes a structure that nests fopdt by less than 2; the near-tie rule
    # (identify/structure_selection.h; Burnham & Anderson, from memory, delta <= 2 as substantial
    # support; the tie-break is common practice) must take fopdt and say so.
    rec = path("near_tie.csv")
    code, _, err = run("simulate", "--plant", "1.4*exp(-0.7*s)/(2.5*s+1)", "--input",
                       "step:0:2:1", "--rate", "20", "--duration", "20", "--noise", "0.03",
                       "--seed", "6", "-o", rec)
    check(code == 0, f"simulate exits 0 ({err.strip()})")
    plain = fit_json(rec, "--simpler-within", "0")
    rule = fit_json(rec)
    if plain is None or rule is None:
        return
    fopdt = plain["candidates"][0]
    check(plain["structure"] != "fopdt" and 0 < fopdt["delta_aicc"] <= 2,
          f"the plain minimum takes {plain['structure']}, fopdt within 2 ({fopdt['delta_aicc']})")
    check(rule["structure"] == "fopdt", f"the rule takes fopdt ({rule['structure']})")
    check(rule["selection"]["support_width"] == 2 and "fopdt is chosen" in rule["selection"]["note"],
          f"--json gives the rule and why ({rule['selection']})")
    for a, b in zip(rule["candidates"], plain["candidates"]):
        if not a["usable"]:
            continue
        check(a["delta_aicc"] == b["delta_aicc"], f"{a['structure']}: delta unchanged")
        check(a["chosen"] == (a["structure"] == "fopdt"), f"{a['structure']}: chosen mark")
        check(a["smallest_aicc"] == (a["structure"] == plain["structure"]),
              f"{a['structure']}: smallest-AICc mark")
    check(abs(rule["criterion"]["value"] - fopdt["aicc"]) < 1e-9 * abs(fopdt["aicc"]),
          "the criterion is the chosen model's AICc")
    code, out, err = run("fit", rec)
    check(code == 0, f"fit exits 0 ({err.strip()})")
    lines = out.splitlines()
    check(lines and lines[0].startswith("fopdt (chosen by AICc, the simpler of a near-tie)"),
          f"the heading says why ({lines[:1]})")
    check(re.search(r"^\s*fopdt \*\s", out, re.M) is not None, "the table marks fopdt with *")
    check(re.search(rf"^\s*{re.escape(plain['structure'])}\s.*smallest AICc$", out, re.M)
          is not None, f"the table names {plain['structure']} as the smallest AICc")
    check(re.search(r"^\* fopdt is chosen: within delta AICc 2 of the smallest", out, re.M)
          is not None, "one note under the table says why")


def case_integrating_tie():
    # The tank recording (recordings/README.md: integrating, synthetic). Two properties that hold
    # whatever the noise: sopdt nests fopdt (tau2 -> 0), so its least-squares fit is never worse;
    # and a sopdt whose first time constant ran far beyond the record is an integrator whose gain
    # and time constant the data cannot tell apart, so it must not win a near-tie against the
    # integrating structure that has as many parameters (identify/structure_selection.h).
    rec = os.path.join(REC, "tank_level_step.csv")
    code, out, err = run("fit", rec, "--json")
    check(code == 0, f"fit exits 0 ({err.strip()})")
    doc = json.loads(out)
    fits = {c["structure"]: c for c in doc["candidates"] if c["usable"]}
    check(fits["sopdt"]["fit_percent"] >= fits["fopdt"]["fit_percent"] - 1e-9,
          f"sopdt fits at least as well as fopdt (sopdt {fits['sopdt']['fit_percent']}, "
          f"fopdt {fits['fopdt']['fit_percent']})")
    check(doc["structure"] == "integrating", f"auto chooses integrating (got {doc['structure']})")
    if fits["sopdt"]["aicc"] < fits["integrating"]["aicc"]:
        check("integrating is chosen" in doc["selection"]["note"]
              and "contains 0" in doc["selection"]["note"],
              f"the note says why the smaller AICc lost ({doc['selection']['note']!r})")
    # A candidate whose solve stops short is no candidate, but the table still says why and how
    # well its last iterate fits: on this record sopdt-zero can only mimic the integrator with
    # a first time constant far beyond the record (gain and time constant trade off), so it
    # must either converge or say that it stopped and that the data do not determine it.
    for c in doc["candidates"]:
        if c["usable"] or c["note"].startswith("not tried"):
            continue
        check(re.match(r"(stopped at the iteration limit \(\d+\)|did not converge \(Ceres: .+\))"
                       r"(; the data do not determine it \(.+\))?; not a candidate$",
                       c["note"]) is not None,
              f"{c['structure']}: the note says why it stopped ({c['note']!r})")
        check(c["fit_percent"] is not None and c["fit_percent"] <= fits["sopdt"]["fit_percent"] + 0.1,
              f"{c['structure']}: the last iterate's fit % is shown ({c['fit_percent']})")
        check(c["aicc"] is None, f"{c['structure']}: no criterion for a non-candidate")


def case_integrating_pulse():
    # A pulse test on an integrating process: the input returns to its baseline, so the output
    # settles at a new level like a self-regulating one's and "settled" alone cannot rule the
    # integrator out (identify/fit.h). Data from the closed form (superposition of two steps of
    # K exp(-T s)/(s (tau s + 1)); its step response is K A (s - tau (1 - exp(-s/tau))) for
    # s = t - t_step - T > 0, from the partial fractions 1/(s^2 (tau s + 1)) = 1/s^2 - tau/s +
    # tau^2/(tau s + 1)), white noise from Python's generator (seed 7, sd 0.02).
    k, tau, dead, amp = 0.8, 4.0, 1.3, 1.0
    rng = random.Random(7)

    def ramp(s):
        return k * amp * (s - tau * (1 - math.exp(-s / tau))) if s > 0 else 0.0

    with open(path("pulse.csv"), "w") as f:
        f.write("t,u,y\n")
        for i in range(401):
            t = 0.2 * i
            u = amp if 5 <= t < 40 else 0.0
            y = 3.0 + ramp(t - 5 - dead) - ramp(t - 40 - dead) + rng.gauss(0.0, 0.02)
            f.write(f"{t:.1f},{u},{y!r}\n")
    doc = fit_json(path("pulse.csv"))
    check(doc is not None, "fit of the pulse test succeeds")
    if doc is None:
        return
    fits = {c["structure"]: c for c in doc["candidates"]}
    check(fits["integrating"]["usable"],
          f"integrating is tried after a pulse ({fits['integrating'].get('note')!r})")
    check(doc["structure"] == "integrating", f"auto chooses integrating (got {doc['structure']})")
    values = {p["name"]: p["value"] for p in doc["parameters"]}
    for name, true in (("gain", k), ("time_constant", tau)):
        got = values.get(name, float("nan"))
        check(abs(got - true) <= 0.03 * true, f"{name} {got} within 3 % of {true}")
    check(abs(values.get("dead_time", float("nan")) - dead) <= 0.2,
          f"dead time {values.get('dead_time')} within one sample (0.2 s) of {dead}")
    # sopdt can only mimic the integrator with a first time constant far beyond the record,
    # where gain and time constant trade off: the covariance is rank-deficient and the fit
    # must say which parameter the data cannot determine (issue: name it, do not just refuse).
    doc = fit_json(path("pulse.csv"), "--structure", "sopdt")
    if doc is not None:
        note = doc.get("rank_deficiency") or ""
        check(re.match(r"the data (cannot determine|do not depend on) [a-z_]+", note) is not None,
              f"the sopdt fit names what the data cannot determine ({note!r})")


def case_units_and_text():
    # Column-name units and the factored model line; closed form first-order data:
    # y = 20 + 1.5 * 4 (1 - exp(-(t - 2 - 0.8)/3)) for t >= 2.8 (step of 4 at t = 2).
    with open(path("units.csv"), "w") as f:
        f.write("time,power[%],temp_degC\n")
        for i in range(301):
            t = 0.1 * i
            y = 20 + (6 * (1 - math.exp(-(t - 2.8) / 3)) if t >= 2.8 else 0)
            y += 0.01 * math.sin(37.0 * i)  # a small deterministic ripple
            f.write(f"{t:.1f},{4 if t >= 2 else 0},{y!r}\n")
    code, out, err = run("fit", path("units.csv"), "--time", "time", "--input", "power[%]",
                         "--output", "temp_degC", "--structure", "fopdt")
    check(code == 0, f"fit with named columns exits 0 ({err.strip()})")
    first = out.splitlines()[0] if out else ""
    m = re.fullmatch(r"fopdt: ([0-9.]+) exp\(-([0-9.]+) s\) / \(([0-9.]+) s \+ 1\)", first)
    check(m is not None, f"factored model line (got {first!r})")
    if m:
        check(abs(float(m.group(1)) - 1.5) < 0.02 and abs(float(m.group(3)) - 3) < 0.05,
              f"line shows K ~ 1.5 and tau ~ 3 ({first})")
    check("degC/%" in out, "gain unit degC/% from the column names")
    # --window T0:T1, either side open: t = 0.1 i, so 1 <= t takes i = 10 .. 300 (291 samples)
    # and t <= 25 takes i = 0 .. 250 (251).
    for window, samples in (("1:", 291), (":25", 251), ("1:25", 241)):
        doc = fit_json(path("units.csv"), "--time", "time", "--input", "2", "--output", "3",
                       "--structure", "fopdt", "--window", window)
        check(doc is not None and doc["samples"] == samples,
              f"--window {window} keeps {samples} samples ({doc and doc['samples']})")
    for bad in ("25:1", "5", "a:5", "1:2:3", "2:2"):
        code, _, err = run("fit", path("units.csv"), "--time", "time", "--input", "2", "--output",
                           "3", "--window", bad)
        check(code == 2 and f"--window '{bad}': expected T0:T1" in err,
              f"--window {bad}: exit 2 naming the option ({code}: {err.strip()})")
    doc = fit_json(path("units.csv"), "--time", "time", "--input", "2", "--output", "3",
                   "--structure", "fopdt", "--output-unit", "K")
    if doc:
        units = {p["name"]: p["unit"] for p in doc["parameters"]}
        check(units["gain"] == "K/%", f"--output-unit wins, input unit from the header ({units})")
        check(units["time_constant"] == "s" and units["dead_time"] == "s", "times in s")


def case_physical_bounds():
    # A first-order plant whose dead time (0.01 s) is a tenth of the sample period, with noise:
    # y = 5 + 2 * 1 (1 - exp(-(t - 1 - 0.01)/3)) for t >= 1.01, sampled every 0.1 s. The symmetric
    # 95 % interval value +- t sd of the dead time then reaches below 0, where no dead time can
    # be; the table shows it cut at 0 and marked †, says so under the table, and --json keeps the
    # symmetric (Wald) interval.
    rng = random.Random(11)
    with open(path("tiny_dead.csv"), "w") as f:
        f.write("t,u,y\n")
        for i in range(301):
            t = 0.1 * i
            y = 5 + (2 * (1 - math.exp(-(t - 1.01) / 3)) if t >= 1.01 else 0)
            f.write(f"{t:.1f},{1 if t >= 1 - 1e-9 else 0},{y + rng.gauss(0, 0.04)!r}\n")
    doc = fit_json(path("tiny_dead.csv"), "--structure", "fopdt")
    if not doc:
        return
    ci = {p["name"]: p["ci95"] for p in doc["parameters"]}
    check(ci["dead_time"][0] < 0 < ci["dead_time"][1],
          f"the symmetric dead-time interval straddles 0 ({ci['dead_time']})")
    check(ci["gain"][0] > 0, f"the gain interval lies above 0 ({ci['gain']})")
    code, out, err = run("fit", path("tiny_dead.csv"), "--structure", "fopdt")
    check(code == 0, f"fit exits 0 ({err.strip()})")
    rows = {l.split()[0]: l for l in out.splitlines() if l.strip()}
    dead = rows.get("dead_time", "")
    check(re.search(r"\b0 \.\. [0-9.]+ †", dead) is not None,
          f"the dead-time row shows the interval from 0, marked † (got {dead!r})")
    check("†" not in rows.get("gain", "") and "†" not in rows.get("time_constant", ""),
          "rows inside their physical range are not marked")
    note = [l for l in out.splitlines() if l.strip().startswith("† dead_time:")]
    check(len(note) == 1, f"one note under the table for the cut interval ({out!r})")
    if note:
        m = re.search(r"reaches (-[0-9.e-]+), past the physical bound 0", note[0])
        check(m is not None and abs(float(m.group(1)) - ci["dead_time"][0])
              <= 0.01 * abs(ci["dead_time"][0]) + 1e-9,
              f"the note gives the symmetric interval's end as in --json ({note[0]!r}, "
              f"{ci['dead_time'][0]})")
    # fit --compare and drift show the same cut interval, with the same note under their tables.
    code, _, err = run("fit", path("tiny_dead.csv"), "--structure", "fopdt", "-o",
                       path("tiny_dead.json"))
    check(code == 0, f"fit -o exits 0 ({err.strip()})")
    code, out, err = run("fit", path("tiny_dead.csv"), "--structure", "fopdt", "--compare",
                         path("tiny_dead.json"))
    check(code == 0, f"fit --compare exits 0 ({err.strip()})")
    compared = [l for l in out.splitlines() if l.strip().startswith("dead_time [s]")]
    check(len(compared) == 1 and len(re.findall(r"\b0 \.\. [0-9.]+ †", compared[0])) == 2,
          f"compare cuts the old and new dead-time intervals at 0 ({compared})")
    check(any(l.strip().startswith("† old dead_time: the symmetric 95 % interval reaches -")
              for l in out.splitlines()) and
          any(l.strip().startswith("† new dead_time: the symmetric 95 % interval reaches -")
              for l in out.splitlines()), f"compare says why, for both ({out!r})")
    code, _, err = run("init", "bounds_rig")
    check(code == 0, f"init exits 0 ({err.strip()})")
    for _ in range(2):
        code, _, err = run("--rig", path("bounds_rig"), "fit", path("tiny_dead.csv"),
                           "--structure", "fopdt")
        check(code == 0, f"fit into the workspace exits 0 ({err.strip()})")
    code, out, err = run("drift", "--rig", path("bounds_rig"))
    check(code == 0, f"drift exits 0 ({err.strip()})")
    lines = out.splitlines()
    at = next((i for i, l in enumerate(lines) if l.startswith("dead_time")), None)
    block = lines[at:] if at is not None else []
    rows = [l for l in block[1:7] if re.match(r"\s+[12]\s", l)]
    check(len(rows) == 2 and all(re.search(r"\b0 \.\. [0-9.]+ †", r) for r in rows),
          f"drift cuts both fits' dead-time intervals at 0 ({rows})")
    check(any(l.strip().startswith("† fit 1: the symmetric 95 % interval reaches -") for l in block)
          and any(l.strip().startswith("† fit 2: the symmetric 95 % interval reaches -")
                  for l in block), f"drift says why, for each fit ({block[:12]!r})")


def case_errors():
    old_model_and_band()
    with open(path("bad.json"), "w") as f:
        f.write("{ not json")
    with open(path("not_band.json"), "w") as f:
        json.dump({"format": "something-else"}, f)
    rework = os.path.join(REC, "heater_zone_after_rework.csv")
    with open(path("response_only.csv"), "w") as f:
        f.write("t,y\n" + "".join(f"{i},{0 if i < 5 else 1 - math.exp(-(i - 5) / 4)!r}\n"
                                   for i in range(60)))
    out_file = path("never.json")
    cases = [
        ("response without an input column", ["fit", path("response_only.csv"), "-o", out_file],
         3, r"response_only\.csv: no column 'u'; columns are t, y \(name the input column with "
         r"--input C, or for a recorded response to a known step give --step-at T --step-size A\)"),
        ("missing old model", ["fit", rework, "--compare", path("nothing.json"), "-o", out_file], 3,
         r"nothing\.json"),
        ("old model not JSON", ["fit", rework, "--compare", path("bad.json"), "-o", out_file], 3,
         r"bad\.json: not valid JSON"),
        ("missing band file", ["fit", rework, "--band", path("absent_band.json"), "-o", out_file],
         3, r"cannot read the band file '.*absent_band\.json': No such file or directory"),
        ("band file of another kind", ["fit", rework, "--band", path("not_band.json"), "-o",
                                       out_file], 3, r"not a loopwright band file"),
        ("a model given as band", ["fit", rework, "--band", path("old.json"), "-o", out_file], 3,
         r"not a loopwright band file"),
        ("bad plot extension", ["fit", rework, "-o", out_file, "--plot", path("fig.bmp")], 2,
         r"fig\.bmp"),
        ("missing output folder", ["fit", rework, "-o", path("no/such/dir/m.json")], 2,
         r"does not exist"),
        ("unknown structure", ["fit", rework, "--structure", "fopdtt", "-o", out_file], 2,
         r"structure 'fopdtt': expected auto or one of fopdt, sopdt, underdamped, integrating, "
         r"sopdt-zero"),
        ("negative near-tie width", ["fit", rework, "--simpler-within", "-1", "-o", out_file], 2,
         r"--simpler-within -1: must be a delta AICc >= 0"),
        ("-o equals --plot", ["fit", rework, "-o", path("same.svg"), "--plot", path("same.svg")], 2,
         r"different files"),
        ("controller without closed loop", ["fit", rework, "--controller", "pi:0.1", "-o",
                                            out_file], 2, r"--closed-loop"),
        ("gain without closed loop or band", ["fit", rework, "--gain", "2", "-o", out_file], 2,
         r"--gain"),
        ("negative loop gain", ["fit", rework, "--closed-loop", "--gain", "-1", "-o", out_file], 2,
         r"--gain"),
    ]
    for what, args, want, pattern in cases:
        code, out, err = run(*args)
        check(code == want, f"{what}: exit {want} (got {code}, {err.strip()!r})")
        lines = [l for l in err.splitlines() if l.strip()]
        check(len(lines) == 1 and re.search(pattern, lines[0]) is not None,
              f"{what}: one sentence matching {pattern!r} (got {err!r})")
        check(not os.path.exists(out_file) and not os.path.exists(path("same.svg")),
              f"{what}: no output file left")
        leftovers = [f for f in os.listdir(WORK) if ".tmp" in f or f.startswith(".")]
        check(not leftovers, f"{what}: no temporary files left ({leftovers})")


cli_common.main(globals())
