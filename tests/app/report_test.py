#!/usr/bin/env python3
"""End-to-end checks of figures and the HTML report.

  report_test.py LOOPWRIGHT SOURCE_DIR WORK_DIR figures   fit --plot on every demo recording
  report_test.py LOOPWRIGHT SOURCE_DIR WORK_DIR browser   report rendered by headless Chromium

figures: each SVG parses as XML (xml.etree) and holds the measured trace (blue #0072B2), the
fitted response (vermillion #D55E00), the input (green #009E73) and the residual (purple
#CC79A7) as drawn polylines, the axis labels and the fit caption.
browser: `loopwright report` of a fitted model and its figure; Chromium (Debian's `chromium`)
renders the page to PNG with console logging on; the test fails on any console error or
uncaught exception, on a missing or near-empty PNG, and checks the page holds the figure and
the safety cautions. Chromium missing: the test says so loudly and is reported as skipped
(exit 77, SKIP_RETURN_CODE in CMake).
"""
import glob
import os
import shutil
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

SVG = "{http://www.w3.org/2000/svg}"


def run(cmd, **kw):
    p = subprocess.run(cmd, capture_output=True, text=True, **kw)
    if p.returncode != 0:
        sys.exit(f"FAIL: {' '.join(cmd)} exited {p.returncode}\n{p.stdout}\n{p.stderr}")
    return p


def texts(root):
    return ["".join(t.itertext()) for t in root.iter(SVG + "text")]


def stroked(root, colour):
    return [e for e in root.iter(SVG + "polyline")
            if e.get("stroke") == colour and e.get("fill") == "none"]


def check_fit_svg(path):
    root = ET.parse(path).getroot()  # raises on malformed XML
    assert root.tag == SVG + "svg", root.tag
    for colour, what in [("#0072B2", "measured"), ("#D55E00", "fitted"), ("#009E73", "input"),
                         ("#CC79A7", "residual")]:
        lines = stroked(root, colour)
        points = sum(e.get("points", "").count(",") for e in lines)
        assert points >= 50, f"{path}: {what} series has {points} points"
    t = texts(root)
    for label in ["time t (s)", "measured", "fitted model", "Input applied"]:
        assert any(label in x for x in t), f"{path}: no label '{label}'"
    assert any(x.startswith("fit ") and "%" in x for x in t), f"{path}: no fit caption"
    assert any("Fit of " in x for x in t), f"{path}: no title"
    return os.path.getsize(path)


def figures(bin_, src, work):
    recs = sorted(glob.glob(os.path.join(src, "recordings", "*_step.csv")))
    assert recs, "no demo recordings"
    for rec in recs:
        name = os.path.splitext(os.path.basename(rec))[0]
        svg = os.path.join(work, name + "_fit.svg")
        run([bin_, "fit", rec, "--plot", svg, "-o", os.path.join(work, name + ".json")])
        size = check_fit_svg(svg)
        assert size < 3 * 1024 * 1024, f"{svg}: {size} bytes"
        print(f"ok {svg} ({size} bytes)")
    # The same figure as PNG and PDF.
    rec = recs[0]
    for ext, magic in [("png", b"\x89PNG"), ("pdf", b"%PDF")]:
        out = os.path.join(work, "fit." + ext)
        run([bin_, "fit", rec, "--plot", out])
        with open(out, "rb") as f:
            assert f.read(4) == magic, out
    # A bad extension is a usage error (exit 2) that leaves no file.
    p = subprocess.run([bin_, "fit", rec, "--plot", os.path.join(work, "fit.gif")],
                       capture_output=True, text=True)
    assert p.returncode == 2, (p.returncode, p.stderr)
    assert not os.path.exists(os.path.join(work, "fit.gif"))


def browser(bin_, src, work):
    chromium = shutil.which("chromium") or shutil.which("chromium-browser")
    if not chromium:
        print("SKIPPED LOUDLY: chromium is not installed (./bootstrap installs it); "
              "the report was not rendered", file=sys.stderr)
        sys.exit(77)
    rec = os.path.join(src, "recordings", "conveyor_drive_step.csv")
    model = os.path.join(work, "conveyor_model.json")
    fig = os.path.join(work, "conveyor_fit.svg")
    run([bin_, "fit", rec, "-o", model, "--plot", fig])
    html = os.path.join(work, "report.html")
    run([bin_, "report", model, fig, "-o", html, "--title", "Conveyor drive tuning"])
    page = open(html, encoding="utf-8").read()
    assert page.count("<svg") == 1, "figure missing from the page"
    assert "Safety cautions" in page and "emergency stop" in page
    assert "<script" not in page
    png = os.path.join(work, "report.png")
    if os.path.exists(png):
        os.remove(png)
    profile = tempfile.mkdtemp(prefix="lw-chromium-")
    try:
        p = subprocess.run(
            [chromium, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
             "--no-first-run", "--disable-background-networking", "--disable-component-update",
             "--disable-sync", "--hide-scrollbars", f"--user-data-dir={profile}",
             "--enable-logging=stderr", "--v=0", f"--screenshot={png}",
             "--window-size=1240,1754", "file://" + os.path.abspath(html)],
            capture_output=True, text=True, timeout=60)
    finally:
        shutil.rmtree(profile, ignore_errors=True)
    log = p.stdout + p.stderr
    bad = [l for l in log.splitlines() if "ERROR:CONSOLE" in l or "Uncaught" in l
           or ("CONSOLE" in l and "error" in l.lower())]
    assert not bad, "console errors:\n" + "\n".join(bad)
    assert os.path.exists(png), f"no screenshot (exit {p.returncode})\n{log}"
    size = os.path.getsize(png)
    with open(png, "rb") as f:
        head = f.read(24)
    assert head[:8] == b"\x89PNG\r\n\x1a\n", "screenshot is not a PNG"
    width = int.from_bytes(head[16:20], "big")
    height = int.from_bytes(head[20:24], "big")
    assert (width, height) == (1240, 1754), (width, height)
    assert size > 60000, f"screenshot only {size} bytes: a blank page?"
    print(f"ok {png} ({size} bytes, {width}x{height})")


def main():
    bin_, src, work, mode = sys.argv[1:5]
    os.makedirs(work, exist_ok=True)
    {"figures": figures, "browser": browser}[mode](bin_, src, work)


if __name__ == "__main__":
    main()
