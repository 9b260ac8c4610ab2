#!/usr/bin/env python3
"""End-to-end tests of `loopwright band` and `loopwright predict`:
cli_design_test.py BINARY SOURCE_DIR WORK_DIR CASE.

Expected values come from outside loopwright:
  * the textbook loop L(s) = K / (s (s + 1) (s + 2)) under P control (from memory, Ogata, Modern
    Control Engineering, root-locus chapter): the locus crosses the imaginary axis at K = 6,
    w = sqrt(2); the dominant pair has zeta = 0.5 at K = 28/27, where the characteristic
    polynomial factors as (s + 7/3)(s^2 + 2/3 s + 4/9); the breakaway point is
    s = -1 + 1/sqrt(3) at K = 2 / (3 sqrt(3)); at K = 1 the gain margin is 6 at w = sqrt(2);
  * the closed-loop step response from scipy (scipy.signal.step on a fine grid, via Debian's
    /usr/bin/python3) with the 10-90 % rise, overshoot, peak and 2 % settling definitions;
  * SVG figures parsed with xml.etree (well-formed XML) and checked for the series drawn.
"""
import json
import math
import os
import pty
import re
import select
import subprocess
import xml.etree.ElementTree as ET

import cli_common
from cli_common import BIN, WORK, check, path, run

OGATA = "1/(s*(s+1)*(s+2))"
BAND_ORANGE = "#E69F00"  # io/figure.h kBand
MODEL_VERMILLION = "#D55E00"  # io/figure.h kModel


def close(a, b, rel):
    return a is not None and b is not None and abs(a - b) <= rel * max(abs(b), 1e-12)


def run_json(*args):
    code, out, err = run(*args, "--json")
    check(code == 0, f"{' '.join(args)} --json exits 0 (got {code}, stderr {err!r})")
    try:
        return json.loads(out)
    except json.JSONDecodeError:
        check(False, f"{' '.join(args)} --json prints one JSON document (got {out[:200]!r})")
        return {}


def write_model(name, covariance_scale=1.0):
    """A first-order-plus-dead-time model file of our own (gain 1.8, time constant 12 s, dead
    time 2 s) with a diagonal covariance, in the model-file layout io/model_file.h documents."""
    k, tau, dead = 1.8, 12.0, 2.0
    sd = [0.05 * covariance_scale, 0.8 * covariance_scale, 0.15 * covariance_scale]
    doc = {
        "format": "loopwright-model", "version": 1, "structure": "fopdt",
        "tf": {"num": [k / tau], "den": [1.0, 1.0 / tau], "delay": dead},
        "parameters": [
            {"name": "gain", "unit": "output/input", "value": k,
             "ci95": [k - 1.96 * sd[0], k + 1.96 * sd[0]]},
            {"name": "time_constant", "unit": "s", "value": tau,
             "ci95": [tau - 1.96 * sd[1], tau + 1.96 * sd[1]]},
            {"name": "dead_time", "unit": "s", "value": dead,
             "ci95": [dead - 1.96 * sd[2], dead + 1.96 * sd[2]]}],
        "covariance": [[sd[i] ** 2 if i == j else 0.0 for j in range(3)] for i in range(3)],
        "provenance": {"source": "hand-written test model", "source_sha256": "0" * 64,
                       "created": "2026-12-02T00:00:00Z", "tool": "cli_design_test.py",
                       "command_line": "none"},
        "details": {},
    }
    with open(path(name), "w") as f:
        json.dump(doc, f)
    return path(name)


def svg(file_name):
    """Parsed SVG root, or None (a failure) when the file is missing or not XML."""
    try:
        return ET.parse(file_name).getroot()
    except (OSError, ET.ParseError) as e:
        check(False, f"{file_name} is well-formed XML ({e})")
        return None


def elements(root, tag):
    return [e for e in root.iter() if e.tag.split("}")[-1] == tag]


def texts(root):
    return ["".join(e.itertext()) for e in elements(root, "text")]


def stroked_lines(root, colour):
    return [e for e in elements(root, "polyline")
            if e.get("stroke", "").upper() == colour and e.get("fill", "none") == "none"]


def filled(root, colour):
    return [e for e in elements(root, "polyline") + elements(root, "polygon") + elements(root, "path")
            if e.get("fill", "").upper() == colour]


# ---------------------------------------------------------------------------------------------
def case_ogata_band():
    # Stability only: the band ends where the locus crosses the imaginary axis, K = 6, w = sqrt(2).
    doc = run_json("band", "--plant", OGATA)
    locus = doc.get("bands", {}).get("locus", [])
    check(len(locus) == 1 and locus[0][0] == 0 and close(locus[0][1], 6.0, 1e-6),
          f"stability band of 1/(s(s+1)(s+2)) is [0, 6] (got {locus})")
    hi = doc.get("edges", {}).get("locus", [{}])[0].get("hi", {})
    check(hi.get("boundary") == "imaginary_axis", f"upper edge is the imaginary axis (got {hi})")
    pole = hi.get("pole") or [None, None]
    check(abs(pole[0]) < 1e-6 and close(pole[1], math.sqrt(2.0), 1e-6),
          f"the edge pole is j sqrt(2) (got {pole})")
    check(doc.get("bands", {}).get("robust", "missing") is None,
          "a plant formula has no covariance: bands.robust is null")

    # zeta >= 0.5: the band ends at K = 28/27 with the pair -1/3 +/- j sqrt(3)/3.
    doc = run_json("band", "--plant", OGATA, "--zeta-min", "0.5")
    locus = doc.get("bands", {}).get("locus", [])
    check(len(locus) == 1 and close(locus[0][1], 28.0 / 27.0, 1e-6),
          f"zeta >= 0.5 band ends at K = 28/27 (got {locus})")
    hi = doc.get("edges", {}).get("locus", [{}])[0].get("hi", {})
    pole = hi.get("pole") or [None, None]
    check(close(pole[0], -1.0 / 3.0, 1e-6) and close(pole[1], math.sqrt(3.0) / 3.0, 1e-6),
          f"the edge pole is -1/3 + j sqrt(3)/3 (got {pole})")
    check(close(hi.get("dominant_zeta"), 0.5, 1e-6) and close(hi.get("dominant_wn"), 2 / 3, 1e-6),
          f"the edge's dominant pair has zeta 0.5, wn 2/3 (got {hi})")
    check(hi.get("boundary") == "zeta_ray", f"the edge is the zeta ray (got {hi.get('boundary')})")
    rec = doc.get("recommended_gain")
    check(rec is not None and 0 < rec < 28 / 27, f"the recommended gain lies in the band ({rec})")
    check(close(doc.get("region", {}).get("zeta_min"), 0.5, 1e-12), "region.zeta_min is 0.5")
    # Keys the issue lists.
    for key in ["bands", "recommended_gain", "region", "edges"]:
        check(key in doc, f"band --json has '{key}'")
    for key in ["locus", "response", "robust"]:
        check(key in doc.get("bands", {}), f"band --json bands has '{key}'")
    for r in doc["bands"]["locus"] + doc["bands"]["response"]:
        check(isinstance(r, list) and len(r) == 2, f"each band range is [lo, hi] (got {r})")

    # Human output: the summary table, plain text when stdout is not a terminal.
    code, out, err = run("band", "--plant", OGATA, "--zeta-min", "0.5")
    check(code == 0, f"band exits 0 (got {code})")
    check(re.search(r"^\s+band\s+gains K\s+verdict\s*$", out, re.M) is not None,
          f"band prints the summary table header (got {out!r})")
    for row in ["locus", "response", "robust", "recommended"]:
        check(re.search(rf"^\s+{row}\s", out, re.M) is not None, f"summary table has a {row} row")
    check("\x1b[" not in out, "no colour when stdout is not a terminal")
    check("1.037" in out, "the human output names the 28/27 edge (1.037)")


def case_ogata_predict():
    # K = 28/27: poles -7/3 and -1/3 +/- j sqrt(3)/3, dominant zeta 0.5, wn 2/3.
    doc = run_json("predict", "--plant", OGATA, "--gain", repr(28.0 / 27.0), "--duration", "40")
    poles = sorted(doc.get("closed_loop_poles", []), key=lambda p: (p[0], p[1]))
    expect = sorted([[-7 / 3, 0.0], [-1 / 3, -math.sqrt(3) / 3], [-1 / 3, math.sqrt(3) / 3]])
    check(len(poles) == 3 and all(abs(a[0] - b[0]) < 1e-7 and abs(a[1] - b[1]) < 1e-7
                                  for a, b in zip(poles, expect)),
          f"closed-loop poles are -7/3, -1/3 +/- j sqrt(3)/3 (got {poles})")
    dom = doc.get("dominant", {})
    check(close(dom.get("zeta"), 0.5, 1e-7) and close(dom.get("wn"), 2 / 3, 1e-7),
          f"dominant zeta 0.5, wn 2/3 (got {dom})")
    for key in ["closed_loop_poles", "dominant", "metrics", "margins"]:
        check(key in doc, f"predict --json has '{key}'")
    for key in ["zeta", "wn"]:
        check(key in dom, f"predict --json dominant has '{key}'")
    for key in ["rise_time", "overshoot_percent", "peak_time", "settling_time",
                "steady_state_error", "peak_actuator"]:
        check(key in doc.get("metrics", {}), f"predict --json metrics has '{key}'")
    check(doc.get("metrics", {}).get("steady_state_error") == 0,
          "a type-1 loop has zero steady-state error to a step")

    # K = 1: gain margin 6 at the phase crossover sqrt(2).
    doc = run_json("predict", "--plant", OGATA, "--gain", "1", "--duration", "40")
    m = doc.get("margins", {})
    check(close(m.get("gain_margin"), 6.0, 1e-6), f"gain margin at K = 1 is 6 (got {m})")
    check(close(m.get("phase_crossover"), math.sqrt(2), 1e-6), "phase crossover at sqrt(2)")

    # Step metrics against scipy's step response of T(s) = 1 / (s^3 + 3 s^2 + 2 s + 1).
    ref = subprocess.run(["/usr/bin/python3", "-c", SCIPY_METRICS], capture_output=True,
                         text=True, check=True)
    want = json.loads(ref.stdout)
    got = doc.get("metrics", {})
    for key, tol in [("rise_time", 0.01), ("overshoot_percent", 0.02), ("peak_time", 0.01),
                     ("settling_time", 0.01)]:
        check(close(got.get(key), want[key], tol),
              f"{key} {got.get(key)} matches scipy's {want[key]:.5g} within {tol * 100} %")

    code, out, err = run("predict", "--plant", OGATA, "--gain", "1", "--overshoot-max", "5")
    check(code == 0, "predict with --overshoot-max exits 0")
    check(re.search(r"^\s+quantity\s+predicted\s+limit\s+verdict\s*$", out, re.M) is not None,
          f"predict prints the summary table (got {out!r})")
    # scipy's overshoot at K = 1 is above 5 %, so the overshoot row says FAIL.
    check(want["overshoot_percent"] > 5.0, "reference overshoot exceeds 5 %")
    check(re.search(r"^\s+overshoot\s.*<= 5 %\s+FAIL\s*$", out, re.M) is not None,
          "the overshoot row fails the 5 % limit")


# Plant 1.5 / ((8 s + 1)(3 s + 1)) under P control: T(s) = 1.5 K / (24 s^2 + 11 s + 1 + 1.5 K), a
# second order without zeros, wn^2 = (1 + 1.5 K) / 24 and 2 zeta wn = 11 / 24. Closed forms (from
# memory, Ogata, Modern Control Engineering, transient-response specifications): zeta > 1 gives a
# monotone step without overshoot; zeta < 1 peaks at pi / wd with overshoot
# 100 exp(-zeta pi / sqrt(1 - zeta^2)).
LAG2 = "1.5/((8*s+1)*(3*s+1))"


def lag2_shape(k):
    wn = math.sqrt((1 + 1.5 * k) / 24)
    return 11 / 24 / (2 * wn), wn


def case_no_peak():
    zeta, wn = lag2_shape(0.05)
    check(zeta > 1, f"K = 0.05 is overdamped (zeta {zeta:.4f})")
    code, out, err = run("predict", "--plant", LAG2, "--gain", "0.05", "--duration", "200")
    check(code == 0, f"predict of the overdamped loop exits 0 ({err!r})")
    # Two real poles, roots of 24 s^2 + 11 s + 1 + 1.5 K: the dominant one is real, not a pair.
    slow = (-11 + math.sqrt(121 - 96 * (1 + 1.5 * 0.05))) / 48
    m = re.search(r"^\s+dominant pole: real, s = (\S+) \(as zeta 1, wn ", out, re.M)
    check(m is not None and abs(float(m.group(1)) / slow - 1) < 1e-3,
          f"the dominant pole is named real at s = {slow:.4f} ({out!r})")
    row = next((l for l in out.splitlines() if l.strip().startswith("peak time ")), "")
    check(re.fullmatch(r"\s+peak time\s+no peak\s*", row) is not None,
          f"peak time row says 'no peak', no number ({row!r})")
    check(re.search(r"^\s+no peak: the response rises 0 % of the step above its final value", out,
                    re.M) is not None, f"a line says why there is no peak ({out!r})")
    doc = run_json("predict", "--plant", LAG2, "--gain", "0.05", "--duration", "200")
    m = doc.get("metrics", {})
    check(m.get("peak_time", 0) is None, f"JSON peak_time is null ({m})")
    check(str(m.get("peak_note")).startswith("no peak: "), f"JSON peak_note says why ({m})")
    check(m.get("overshoot_percent") == 0, f"overdamped: overshoot 0 ({m})")
    # The saved prediction in the report: the peak time cell says "no peak" and a sentence why.
    pred = path("no_peak_prediction.json")
    code, _, err = run("predict", "--plant", LAG2, "--gain", "0.05", "--save", pred)
    check(code == 0, f"predict --save exits 0 ({err!r})")
    report = path("no_peak_report.html")
    code, _, err = run("report", pred, "-o", report)
    check(code == 0, f"report of the prediction exits 0 ({err!r})")
    with open(report) as f:
        html = f.read()
    check(re.search(r"peak time \(s\)</t[dh]>\s*<td[^>]*>no peak<", html) is not None,
          "the report's peak time cell says 'no peak'")
    check("Peak time: no peak; the response rises 0 %" in html, "the report says why")

    # Underdamped: the peak time and overshoot are the closed forms' numbers, as before.
    zeta, wn = lag2_shape(1.0)
    check(zeta < 1, f"K = 1 is underdamped (zeta {zeta:.4f})")
    doc = run_json("predict", "--plant", LAG2, "--gain", "1", "--duration", "200")
    m = doc.get("metrics", {})
    wd = wn * math.sqrt(1 - zeta * zeta)
    check(close(m.get("peak_time"), math.pi / wd, 1e-4),
          f"peak time {m.get('peak_time')} is pi / wd = {math.pi / wd:.6g}")
    want = 100 * math.exp(-zeta * math.pi / math.sqrt(1 - zeta * zeta))
    check(close(m.get("overshoot_percent"), want, 1e-3),
          f"overshoot {m.get('overshoot_percent')} is {want:.6g} %")
    check(m.get("peak_note", 0) is None, f"JSON peak_note is null with a peak ({m})")
    code, out, err = run("predict", "--plant", LAG2, "--gain", "1", "--duration", "200")
    row = next((l for l in out.splitlines() if l.strip().startswith("peak time ")), "")
    check(f"{math.pi / wd:.4g} s" in row, f"peak time row gives pi / wd ({row!r})")
    check("no peak" not in out, "no 'no peak' with a peak")


SCIPY_METRICS = r"""
import json
import numpy as np
from scipy import signal
t = np.linspace(0.0, 60.0, 120001)
_, y = signal.step(([1.0], [1.0, 3.0, 2.0, 1.0]), T=t)
final = 1.0
t10 = t[np.argmax(y >= 0.1 * final)]
t90 = t[np.argmax(y >= 0.9 * final)]
k = int(np.argmax(y))
outside = np.nonzero(np.abs(y - final) > 0.02 * final)[0]
print(json.dumps({"rise_time": t90 - t10, "overshoot_percent": 100.0 * (y[k] - final) / final,
                  "peak_time": t[k], "settling_time": t[outside[-1] + 1]}))
"""


def case_infeasible():
    # Settling (2 %) within 2 s asks sigma >= 4/2 = 2 1/s; on this locus the dominant pole gets
    # furthest from the axis at the breakaway point s = -1 + 1/sqrt(3), K = 2/(3 sqrt(3)).
    out_file = path("infeasible_band.json")
    code, out, err = run("band", "--plant", OGATA, "--settle-max", "2", "--save", out_file)
    check(code == 1, f"infeasible specs exit 1 (got {code})")
    check(out == "", f"nothing on stdout for an infeasible band (got {out!r})")
    lines = [l for l in err.splitlines() if l.strip()]
    check(len(lines) == 1, f"one sentence on stderr (got {err!r})")
    check("sigma" in err, f"the sentence names the sigma requirement (got {err!r})")
    nums = [float(x) for x in re.findall(r"-?\d+\.\d+(?:e-?\d+)?", err)]
    check(any(close(abs(x), 1 - 1 / math.sqrt(3), 2e-3) for x in nums),
          f"the closest achievable sigma is 1 - 1/sqrt(3) = 0.4226 (got {err!r})")
    check(any(close(x, 2 / (3 * math.sqrt(3)), 2e-3) for x in nums),
          f"reached at the breakaway gain 2/(3 sqrt 3) = 0.3849 (got {err!r})")
    check(not os.path.exists(out_file), "no band file is left for an infeasible band")


def case_unbounded_band():
    # 2/(5s + 1) under P control: the closed loop 5s + 1 + 2K = 0 is stable for every K > -1/2
    # (Routh-Hurwitz, first order: one coefficient sign), so with no spec beyond stability the
    # band is [0, inf) and no gain is recommended (the middle of [0, inf) would be K = 0).
    out_file = path("unbounded_band.json")
    code, out, err = run("band", "--plant", "2/(5*s+1)", "--save", out_file)
    check(code == 0, f"an unbounded band is still a band: exit 0 (got {code}, {err!r})")
    check("locus band (dominant poles in the region): [0, inf)" in out, f"locus band [0, inf) ({out!r})")
    check(re.search(r"no recommended gain: the band is \[0, inf\).*--overshoot-max", out)
          is not None, f"says why no gain is recommended and which specs bound it ({out!r})")
    check("recommended gain K" not in out, f"no gain is recommended ({out!r})")
    with open(out_file) as f:
        doc = json.load(f)
    check(doc["recommended_gain"] is None, f"recommended_gain is null ({doc['recommended_gain']!r})")
    check(doc["recommendation"]["from"] is None, "recommendation.from is null")
    check("[0, inf)" in doc["recommendation"]["rule"], "the rule says the band is [0, inf)")
    # A settling bound gives the locus band a low edge: sigma = (1 + 2K)/5 >= 4/ts, i.e.
    # K >= (20/ts - 1)/2 (2 % band, sigma ts = 4: common practice), and [lo, inf) recommends
    # lo sqrt(10).
    code, out, err = run("band", "--plant", "2/(5*s+1)", "--settle-max", "2", "--json")
    check(code == 0, f"settling bound: exit 0 (got {code}, {err!r})")
    doc = json.loads(out)
    check(doc["recommended_gain"] is not None and doc["recommended_gain"] > 0,
          f"a band [lo, inf) recommends a gain ({doc['recommended_gain']!r})")
    # The simulated response settles (2 %) in ln(50)/sigma exactly (first order), so its band
    # starts at K = (5 ln(50)/2 - 1)/2 = 4.390 and, faster at every larger gain, has no end.
    resp = doc["bands"]["response"]
    check(len(resp) == 1 and close(resp[0][0], (5 * math.log(50) / 2 - 1) / 2, 1e-3)
          and resp[0][1] is None, f"response band [4.390, inf) (got {resp!r})")


def case_region_only():
    # A PI zero (s = -2) faster than the plant's pole (s = -1/0.85) adds overshoot the region
    # cannot see: the locus band holds gains whose dominant pole meets zeta >= 0.59 and
    # sigma >= 2, but no simulated step meets overshoot <= 10 % and settling <= 2 s. Nothing is
    # recommended then (design/recommendation.h), and predict at the locus band's middle shows
    # why: its overshoot is above 10 %.
    plant = "0.021*exp(-0.12*s)/(0.85*s+1)"
    specs = ["--controller", "pi:2", "--overshoot-max", "10", "--settle-max", "2"]
    code, out, err = run("band", "--plant", plant, *specs, "--json")
    check(code == 0, f"a band with region bands only exits 0 ({err!r})")
    doc = json.loads(out)
    locus = doc["bands"]["locus"]
    check(len(locus) == 1 and doc["bands"]["response"] == [],
          f"a locus band and no response band ({doc['bands']!r})")
    check(doc["recommended_gain"] is None and doc["recommendation"]["from"] is None,
          f"nothing recommended ({doc['recommended_gain']!r}, {doc['recommendation']!r})")
    check("response band is empty" in doc["recommendation"]["rule"],
          f"the rule says why ({doc['recommendation']['rule']!r})")
    code, out, err = run("band", "--plant", plant, *specs)
    check(re.search(r"^\s*recommended\s+none\s+specs unmet", out, re.M) is not None,
          f"the table says the specs are unmet ({out!r})")
    middle = math.sqrt(locus[0][0] * locus[0][1])
    code, out, err = run("predict", "--plant", plant, "--controller", "pi:2", "--gain",
                         f"{middle:.6g}", "--json")
    over = json.loads(out)["metrics"]["overshoot_percent"]
    check(code == 0 and over > 10, f"predict at K = {middle:.4g}: overshoot {over} % > 10 %")


def case_reverse_acting():
    # A reverse-acting plant (more actuator, less output): with u = K (r - y) and K > 0 the loop
    # 1 + K G is positive feedback at low frequency. For -2/(s + 1) under P control the closed
    # loop is stable for K < 1/2 (pole at s = -1 + 2K) but its output settles at
    # -2K/(1 - 2K) of the step, the wrong way, so no K > 0 may be offered as a band.
    out_file = path("reverse_band.json")
    for plant, said in (("-2/(s+1)", "G(0) = -2"),
                        ("-0.8*exp(-1.3*s)/(s*(4*s+1))", "G(s) -> -0.8/s as s -> 0"),
                        ("-1.5*(-8*s+1)*exp(-2*s)/((20*s+1)*(5*s+1))", "G(0) = -1.5")):
        code, out, err = run("band", "--plant", plant, "--overshoot-max", "10", "--save", out_file)
        check(code == 1, f"band of {plant}: exit 1 (got {code}, {err!r})")
        lines = [l for l in err.splitlines() if l.strip()]
        check(len(lines) == 1 and said in err and "positively" in err,
              f"band of {plant}: one sentence naming {said} ({err!r})")
        check(not os.path.exists(out_file), f"band of {plant}: no band file left")
    # predict still shows what a gain does, with a warning: K = 1 on -2/(s + 3) puts the pole at
    # s = -3 + 2 = -1 and y at -2K/(3 - 2K) = -2 of a unit step, an error of 1 - (-2) = 3.
    code, out, err = run("predict", "--plant", "-2/(s+3)", "--gain", "1", "--json")
    check(code == 0, f"predict of a reverse-acting plant exits 0 ({err!r})")
    check("feeds back positively" in err, f"predict warns of positive feedback ({err!r})")
    doc = json.loads(out)
    check(close(doc["metrics"]["steady_state_error"], 3.0, 1e-9),
          f"steady-state error 1 - (-2) = 3 ({doc['metrics']['steady_state_error']!r})")
    # A model fitted to a reverse-acting step test: verify refuses before it opens the rig (a
    # closed TCP port here: reaching it would be a link failure, exit 4).
    rec, model = path("reverse_step.csv"), path("reverse_model.json")
    code, _, err = run("simulate", "--plant", "-2*exp(-0.5*s)/(3*s+1)", "--input", "step:0:1:2",
                       "--rate", "10", "--duration", "30", "--noise", "0.01", "-o", rec)
    check(code == 0, f"simulate the reverse-acting step test ({err!r})")
    code, _, err = run("fit", rec, "--structure", "fopdt", "-o", model)
    check(code == 0, f"fit it ({err!r})")
    code, _, err = run("verify", "--port", "tcp:127.0.0.1:9", model, "--gain", "0.2",
                       "--ref-step", "0:1", "--yes", "-o", path("cl.csv"))
    check(code == 1 and "feeds back positively" in err,
          f"verify refuses a reverse-acting model before driving (exit 1, got {code}: {err!r})")
    check(not os.path.exists(path("cl.csv")), "verify wrote no recording")


def case_unstable_plant():
    # An open-loop unstable plant is not reverse-acting because G(0) < 0: under P control
    # 1/(s - 1) closes to K/(s - 1 + K), stable for K > 1 (Routh-Hurwitz) with the positive gain
    # K/(K - 1), and its 10-90 % rise time is ln(9)/(K - 1) (first order, closed form), so
    # rise <= 0.5 s holds exactly for K >= 1 + 2 ln 9.
    code, out, err = run("band", "--plant", "1/(s-1)", "--rise-max", "0.5", "--json")
    check(code == 0, f"band of 1/(s-1) exits 0 (got {code}: {err.strip()!r})")
    if code == 0:
        resp = json.loads(out)["bands"]["response"]
        check(len(resp) == 1 and close(resp[0][0], 1 + 2 * math.log(9), 1e-4) and resp[0][1] is None,
              f"response band [1 + 2 ln 9, inf) ({resp!r})")
    # 1/(1 - s) = -1/(s - 1) has G(0) = +1, but s - 1 - K is unstable for every K > 0.
    code, _, err = run("band", "--plant", "1/(1-s)")
    check(code == 1 and "the plant is unstable" in err and "no gain K > 0" in err,
          f"band of 1/(1-s) refuses with the reason (exit 1, got {code}: {err!r})")
    # A PI zero in the right half-plane reverses a direct-acting plant's loop: the sentence
    # blames the controller, not the plant's gain.
    code, _, err = run("band", "--plant", "exp(-2*s)/(s+1)", "--controller", "pi:-1")
    check(code == 1 and "the controller's zeros" in err and "G(0)" not in err,
          f"a right-half-plane PI zero is named as the cause (exit 1, got {code}: {err!r})")
    # A zero at s = 0 cancels the integrator: refused as a usage error before any design.
    code, _, err = run("band", "--plant", "exp(-2*s)/(s+1)", "--controller", "pi:0")
    check(code == 2 and "cancels the integrator" in err,
          f"pi:0 is refused with the reason (exit 2, got {code}: {err!r})")
    # No gain stabilises a double integrator under P or PI control (s^2 + K, s^3 + K s + K Z:
    # a missing coefficient is never Hurwitz): one sentence, exit 1, no NaN.
    for ctl in ("p", "pi:1"):
        code, _, err = run("band", "--plant", "1/s^2", "--controller", ctl)
        lines = [l for l in err.splitlines() if l.strip()]
        check(code == 1 and len(lines) == 1 and "no gain K > 0 gives a stable loop" in err
              and "nan" not in err.replace("dominant", ""),
              f"1/s^2 under {ctl}: one sentence, exit 1 (got {code}: {err!r})")


def case_sampled_recommendation():
    # A digital controller sampled every 20 s around 2 exp(-s)/((5 s + 1)(s + 1)) holds a far
    # smaller band than the continuous loop; the recommended gain must lie inside the band of
    # gains whose sampled step meets the specs (it was the continuous middle, 0.24, more than
    # three times that band's top, 0.063; a scipy check of that band's edges is in
    # tests/reference/sampled_band_vs_scipy.py).
    code, out, err = run("band", "--plant", "2*exp(-1*s)/((5*s+1)*(s+1))", "--overshoot-max",
                         "10", "--sample-time", "20", "--json")
    check(code == 0, f"band exits 0 ({err.strip()!r})")
    if code == 0:
        doc = json.loads(out)
        sampled = doc["bands"].get("sampled_response", [])
        k = doc["recommended_gain"]
        check(k is not None and any(lo <= k <= (hi if hi is not None else math.inf)
                                    for lo, hi in sampled),
              f"recommended K = {k} lies in the sampled response band {sampled}")
        check("sampled" in doc["recommendation"]["from"], f"and says so ({doc['recommendation']})")
    # Sampling a slow heater zone every second changes its loop by a hair: the recommendation
    # stays within 2 % of the continuous one (a region-only sampled band recommended nothing
    # and advised sampling faster, because the zone's locus band is empty).
    code, _, err = run("fit", os.path.join(cli_common.SOURCE, "recordings", "heater_zone_step.csv"), "-o",
                       path("zone_model.json"))
    check(code == 0, f"fit the heater zone ({err.strip()!r})")
    gains = []
    for extra in ([], ["--sample-time", "1"]):
        code, out, err = run("band", path("zone_model.json"), "--controller", "pi:0.004",
                             "--overshoot-max", "10", "--settle-max", "1000", "--json", *extra)
        check(code == 0, f"band {' '.join(extra)} exits 0 ({err.strip()!r})")
        gains.append(json.loads(out)["recommended_gain"] if code == 0 else None)
    check(None not in gains and abs(gains[1] / gains[0] - 1) < 0.02,
          f"sampled every 1 s the zone's recommended gain stays put ({gains})")
    # fit --band rechecks a band saved with --sample-time the same way (the old binary
    # recommended the continuous middle, 0.24, on the refit).
    code, _, err = run("simulate", "--plant", "2*exp(-1*s)/((5*s+1)*(s+1))", "--input",
                       "step:0:1:2", "--rate", "10", "--duration", "60", "--noise", "0.005",
                       "--seed", "3", "-o", path("sampled_step.csv"))
    check(code == 0, f"simulate the step test ({err.strip()!r})")
    code, _, err = run("fit", path("sampled_step.csv"), "--structure", "sopdt", "-o",
                       path("sampled_model.json"))
    check(code == 0, f"fit it ({err.strip()!r})")
    code, out, err = run("band", path("sampled_model.json"), "--overshoot-max", "10",
                         "--sample-time", "20", "--save", path("sampled_band.json"), "--json")
    check(code == 0, f"band of the model ({err.strip()!r})")
    if code == 0:
        saved = json.loads(out)
        code, out, err = run("fit", path("sampled_step.csv"), "--structure", "sopdt", "--band",
                             path("sampled_band.json"), "--json")
        check(code == 0, f"fit --band exits 0 ({err.strip()!r})")
        if code == 0:
            recheck = json.loads(out)["compare"]["band"]
            k = recheck["new"]["recommended_gain"]
            top = max(hi for _, hi in saved["bands"]["sampled_response"])
            check(k is not None and k <= top and "sampled" in recheck["judged_on"],
                  f"the recheck recommends within the sampled band (K = {k}, top {top}, "
                  f"{recheck['judged_on']!r})")


def case_unstable_predict():
    # 2/(s + 1)^3 under P control is unstable for K > 4 (Routh-Hurwitz: s^3 + 3 s^2 + 3 s + 1 + 2K
    # needs 3 * 3 > 1 + 2K). A diverging record has no rise, overshoot, peak or settling time:
    # they are n/a in the text and null in JSON, whatever the record's length. The poles (numpy
    # roots of s^3 + 3 s^2 + 3 s + 21: -3.714 and 0.3572 +/- j2.351) are listed once each, the
    # pair as such.
    code, out, err = run("predict", "--plant", "2/((s+1)^3)", "--gain", "10")
    line = next((l for l in out.splitlines() if "closed-loop poles" in l), "")
    check(line.split(":", 1)[-1].split() == ["-3.714", "0.3572", "±", "j2.351", "UNSTABLE"],
          f"the poles, the pair as one entry ({line!r})")
    code, out, err = run("predict", "--plant", "2/((s+1)^3)", "--gain", "10", "--json")
    check(code == 0, f"predict of an unstable loop exits 0 ({err!r})")
    doc = json.loads(out)
    check(doc["stable"] is False, "the loop is unstable")
    for key in ("rise_time", "overshoot_percent", "peak_time", "settling_time"):
        check(doc["metrics"][key] is None, f"{key} is null ({doc['metrics'][key]!r})")
    check("unstable" in (doc["metrics"]["peak_note"] or ""), "the peak note says why")
    code, out, err = run("predict", "--plant", "2/((s+1)^3)", "--gain", "3.9")
    check(code == 0 and "n/a" not in out.split("steady-state")[0],
          f"just below K = 4 the loop is stable and every metric is a number ({out!r})")
    code, out, err = run("predict", "--plant", "2/((s+1)^3)", "--gain", "10")
    for row in ("rise time (10-90 %)", "overshoot", "peak time", "settling time (2 %)"):
        m = re.search(rf"^\s*{re.escape(row)}\s+(\S+)", out, re.M)
        check(m is not None and m.group(1) == "n/a", f"{row}: n/a ({m and m.group(1)!r})")


def expect_error(label, args, status, pattern, files):
    code, out, err = run(*args)
    check(code == status, f"{label}: exit {status} (got {code}, stderr {err!r})")
    lines = [l for l in err.splitlines() if l.strip()]
    check(len(lines) == 1, f"{label}: one sentence on stderr (got {err!r})")
    check(re.search(pattern, err) is not None, f"{label}: stderr matches {pattern!r} (got {err!r})")
    for f in files:
        check(not os.path.exists(f), f"{label}: no file {os.path.basename(f)} left behind")
    leftovers = [n for n in os.listdir(WORK) if ".tmp" in n or n.startswith(".")]
    check(not leftovers, f"{label}: no temporary files left (got {leftovers})")


def case_errors():
    txt, svg_file, js = path("locus.txt"), path("never.svg"), path("never.json")
    expect_error("band --plot with a .txt figure", ["band", "--plant", OGATA, "--plot", txt,
                 "--save", js], 2, r"--plot .*\.svg, \.png or \.pdf", [txt, js])
    expect_error("predict --plot with a .jpg figure",
                 ["predict", "--plant", OGATA, "--gain", "1", "--plot", path("r.jpg"), "--save",
                  js], 2, r"--plot .*\.svg, \.png or \.pdf", [path("r.jpg"), js])
    with open(path("broken.json"), "w") as f:
        f.write("{ not json")
    expect_error("band with a broken model file", ["band", path("broken.json"), "--plot", svg_file,
                 "--save", js], 3, r"broken\.json", [svg_file, js])
    expect_error("predict with a broken model file",
                 ["predict", path("broken.json"), "--gain", "1", "--plot", svg_file], 3,
                 r"broken\.json", [svg_file])
    expect_error("band with a bad controller", ["band", "--plant", OGATA, "--controller", "pi",
                 "--plot", svg_file], 2, r"controller|pi", [svg_file])
    expect_error("band with too few draws", ["band", "--plant", OGATA, "--draws", "10"], 2,
                 r"--draws 10", [])
    expect_error("predict with a zero gain", ["predict", "--plant", OGATA, "--gain", "0",
                 "--save", js], 2, r"--gain", [js])
    expect_error("predict with a bad actuator range", ["predict", "--plant", OGATA, "--gain", "1",
                 "--actuator", "5:1", "--save", js], 2, r"--actuator '5:1'", [js])
    expect_error("band with a bad formula", ["band", "--plant", "1/(s+", "--save", js], 2,
                 r".", [js])
    expect_error("predict --overshoot-max out of range",
                 ["predict", "--plant", OGATA, "--gain", "1", "--overshoot-max", "120"], 2,
                 r"--overshoot-max 120", [])


def case_figures():
    model = write_model("zone_model.json")
    locus_svg = path("zone-locus.svg")
    code, out, err = run("band", model, "--controller", "pi:0.08", "--overshoot-max", "15",
                         "--settle-max", "60", "--plot", locus_svg)
    check(code == 0, f"band --plot exits 0 (got {code}, {err!r})")
    metrics_svg = path("zone-locus-metrics.svg")
    check(f"figure: {locus_svg}" in out and f"figure: {metrics_svg}" in out,
          f"band says both figure paths (got {out!r})")
    root = svg(locus_svg)
    if root is not None:
        t = texts(root)
        check(any(x.startswith("ζ ≥") for x in t), f"locus figure labels the zeta boundary ({t})")
        check(any(x.startswith("σ ≥") for x in t), "locus figure labels the sigma boundary")
        check(any(re.fullmatch(r"K = [\d.e+-]+", x) for x in t), "band-edge gains are labelled")
        check(any(x.startswith("recommended K =") for x in t), "recommended gain in the legend")
        check(len(stroked_lines(root, BAND_ORANGE)) >= 1, "in-band parts drawn in the band ink")
        check(len(stroked_lines(root, "#7F7F7F")) >= 3, "every locus branch is drawn")
    root = svg(metrics_svg)
    if root is not None:
        t = texts(root)
        for label in ["rise time (s)", "overshoot (%)", "settling time (s)"]:
            check(label in t, f"metrics figure has the '{label}' axis (got {t})")
        check(len(stroked_lines(root, MODEL_VERMILLION)) >= 3, "three metric curves are drawn")
        check(any("robust band" == x for x in t), "the robust band span is in the legend")

    # predict: the response with its envelope over the parameter draws.
    resp = path("zone-response.svg")
    code, out, err = run("predict", model, "--controller", "pi:0.08", "--gain", "0.4",
                         "--reference", "step:20:30:5", "--actuator", "0:40",
                         "--overshoot-max", "15", "--plot", resp)
    check(code == 0, f"predict --plot exits 0 (got {code}, {err!r})")
    check(f"figure: {resp}" in out, "predict says the figure path")
    root = svg(resp)
    if root is not None:
        t = texts(root)
        check(any("parameter draws" in x for x in t), f"the envelope is named ({t})")
        check(len(stroked_lines(root, MODEL_VERMILLION)) >= 1, "the predicted output is drawn")
        check(any("actuator limit" in x for x in t), "the actuator limits are in the legend")
        check(any("overshoot limit" in x for x in t), "the overshoot limit is drawn")
    # PNG and PDF are written too, with their magic numbers.
    for ext, magic in [(".png", b"\x89PNG"), (".pdf", b"%PDF")]:
        f = path("ogata" + ext)
        code, _, err = run("band", "--plant", OGATA, "--zeta-min", "0.5", "--plot", f)
        check(code == 0, f"band --plot {ext} exits 0 ({err!r})")
        for name in [f, f[:-len(ext)] + "-metrics" + ext]:
            try:
                with open(name, "rb") as fh:
                    check(fh.read(4) == magic, f"{os.path.basename(name)} starts with {magic!r}")
            except OSError:
                check(False, f"{name} was written")


def case_save_report():
    model = write_model("save_model.json")
    band_file, pred_file = path("zone_band.json"), path("zone_prediction.json")
    code, out, err = run("band", model, "--controller", "pi:0.08", "--overshoot-max", "15",
                         "--save", band_file)
    check(code == 0, f"band --save exits 0 ({err!r})")
    with open(band_file) as f:
        b = json.load(f)
    check(b.get("format") == "loopwright-band", "the band file says its format")
    robust = b.get("bands", {}).get("robust")
    check(isinstance(robust, list), f"a model with covariance gives a robust band list ({robust})")
    check(b.get("robust_draws", 0) >= 500, "the robust band uses at least 500 draws")
    code, out, err = run("band", model, "--controller", "pi:0.08", "--overshoot-max", "15",
                         "-o", path("alias_band.json"))
    check(code == 0 and os.path.exists(path("alias_band.json")), "-o still writes the band file")
    code, out, err = run("predict", model, "--controller", "pi:0.08", "--gain", "0.4",
                         "--save", pred_file)
    check(code == 0, f"predict --save exits 0 ({err!r})")
    code2, out2, _ = run("predict", model, "--controller", "pi:0.08", "--gain", "0.4", "--json")
    with open(pred_file) as f:
        saved = json.load(f)
    printed = json.loads(out2)
    for key in printed:
        check(saved.get(key) == printed[key], f"the saved prediction has --json's '{key}'")
    report = path("report.html")
    code, out, err = run("report", model, band_file, pred_file, "-o", report)
    check(code == 0, f"report reads the saved band and prediction ({err!r})")
    with open(report) as f:
        html = f.read()
    check("Gain band" in html and "Prediction at K = 0.4" in html,
          "the report has the band and prediction sections")
    expect_error("report of a missing file",
                 ["report", model, path("absent.json"), "-o", path("report2.html")], 3,
                 r"cannot read '.*absent\.json': No such file or directory",
                 [path("report2.html")])


def case_colour():
    # With stdout a terminal the verdict cells are coloured; NO_COLOR turns colour off.
    def on_terminal(extra_env):
        env = dict(os.environ)
        env.pop("NO_COLOR", None)
        env.update(extra_env)
        master, slave = pty.openpty()
        p = subprocess.Popen([BIN, "band", "--plant", OGATA, "--zeta-min", "0.5"], stdout=slave,
                             stderr=subprocess.DEVNULL, cwd=WORK, env=env)
        os.close(slave)
        data = b""
        while True:
            r, _, _ = select.select([master], [], [], 120)
            if not r:
                break
            try:
                chunk = os.read(master, 65536)
            except OSError:
                break
            if not chunk:
                break
            data += chunk
        p.wait(timeout=120)
        os.close(master)
        return p.returncode, data.decode("utf-8", "replace")

    code, out = on_terminal({})
    check(code == 0, "band on a terminal exits 0")
    check("\x1b[32mfound\x1b[0m" in out, f"a found band is green on a terminal (got {out!r})")
    code, out = on_terminal({"NO_COLOR": "1"})
    check(code == 0 and "\x1b[" not in out, "NO_COLOR=1 turns colour off on a terminal")


cli_common.main(globals())
