#!/usr/bin/env python3
"""End-to-end tests of the hardware commands against `loopwright emulate`:
cli_rig_test.py BINARY SOURCE_DIR WORK_DIR CASE.

Each case starts the emulator (pseudo-terminal or loopback TCP), runs a host command against it
and checks exit status, messages, the recording and the emulator's own counts and traffic log.
Outside references: the CRC-16/CCITT-FALSE parameters and check value ("123456789" -> 0x29B1,
the published catalogue of CRC parameters) for the dry-run lines; the plant the emulator runs
for the tune case (its parameters are the truth the fit must recover within 5 %).
"""
import os
import re
import shutil
import signal
import subprocess
import time

import cli_common
from cli_common import BIN, WORK, check, run


def crc16_ccitt_false(data: bytes) -> int:
    crc = 0xFFFF
    for b in data:
        crc ^= b << 8
        for _ in range(8):
            crc = ((crc << 1) ^ 0x1021) if crc & 0x8000 else (crc << 1)
            crc &= 0xFFFF
    return crc


assert crc16_ccitt_false(b"123456789") == 0x29B1


class Emulator:
    def __init__(self, *args, tcp=False):
        transport = ["--listen", "tcp:127.0.0.1:0"] if tcp else ["--pty"]
        self.err_path = os.path.join(WORK, "emulator.err")
        self.err = open(self.err_path, "w")
        self.p = subprocess.Popen([BIN, "emulate", *transport, *args], stdout=subprocess.PIPE,
                                  stderr=self.err, text=True)
        self.where = self.p.stdout.readline().strip()
        if not self.where:
            raise RuntimeError("the emulator printed no port")

    def wait_for_note(self, text, timeout):
        # Until the emulator's stderr holds `text` (it flushes every note) or the timeout.
        end = time.monotonic() + timeout
        while time.monotonic() < end:
            self.err.flush()
            with open(self.err_path) as f:
                if text in f.read():
                    return True
            time.sleep(0.02)
        return False

    def stop(self):
        if self.p.poll() is None:
            self.p.send_signal(signal.SIGTERM)
        try:
            self.p.wait(timeout=20)
        except subprocess.TimeoutExpired:
            self.p.kill()
            self.p.wait()
        self.err.close()
        with open(self.err_path) as f:
            return f.read()


def fresh(name):
    path = os.path.join(WORK, name)
    if os.path.exists(path):
        os.remove(path)
    return path


def read_recording(path):
    with open(path) as f:
        text = f.read()
    lines = text.splitlines()
    comments = [l[1:].strip() for l in lines if l.startswith("#")]
    data = [l for l in lines if l and not l.startswith("#")]
    header = data[0].split(",")
    rows = [[float(c) for c in l.split(",")] for l in data[1:]]
    return text, comments, header, rows


def emulator_counts(err_text):
    m = re.search(r"samples (\d+) intact, (\d+) dropped, (\d+) corrupted", err_text)
    return tuple(int(g) for g in m.groups()) if m else None


def summary_value(out, key):
    m = re.search(re.escape(key) + r":\s+(\d+)", out)
    return int(m.group(1)) if m else None


def zero_loss(tcp):
    # 1 kHz for 60 s of rig time at 20x real time: every sample, in order, nothing lost.
    emu = Emulator("--plant", "1/(0.05*s+1)", "--rate", "1000", "--speed", "20", tcp=tcp)
    rec = fresh("stream.csv")
    code, out, err = run("record", "--port", emu.where, "-o", rec, "--duration", "60")
    emu_err = emu.stop()
    check(code == 0, f"record exits 0 (got {code}: {err.strip()})")
    _, comments, header, rows = read_recording(rec)
    check(header == ["t", "r", "u", "y", "seq"], f"columns t,r,u,y,seq (got {header})")
    check(len(rows) >= 60000, f"at least 60 000 samples for 60 s at 1 kHz (got {len(rows)})")
    # Sequence numbers count every rig line (acknowledgements of heartbeats too), so samples
    # may skip a number; consecutive rig times show that none is missing.
    seqs = [int(r[4]) for r in rows]
    check(all(b > a for a, b in zip(seqs, seqs[1:])), "sample sequence numbers increase")
    dts = {round((b[0] - a[0]) * 1e6) for a, b in zip(rows, rows[1:])}
    check(dts == {1000}, f"rig times 1000 us apart (got {sorted(dts)[:5]})")
    check(not any(c.startswith("gap") or c.startswith("corrupted") for c in comments),
          "no gap or corrupted notes")
    check(summary_value(out, "lost lines") == 0 and summary_value(out, "corrupted lines") == 0,
          f"summary says 0 lost, 0 corrupted ({out!r})")
    counts = emulator_counts(emu_err)
    check(counts is not None and counts[0] == len(rows),
          f"every intact sample the emulator sent is in the file ({counts} vs {len(rows)})")


def case_zero_loss_pty():
    zero_loss(False)


def case_zero_loss_tcp():
    zero_loss(True)


def faults(tcp):
    # Injected drops and corruption: the host's counts equal the emulator's exactly.
    emu = Emulator("--plant", "3/(0.2*s+1)", "--rate", "1000", "--speed", "10",
                   "--faults", "drop=0.01,corrupt=0.02", "--seed", "11", tcp=tcp)
    rec = fresh("faults.csv")
    code, out, err = run("record", "--port", emu.where, "-o", rec, "--duration", "20")
    emu_err = emu.stop()
    check(code == 0, f"record exits 0 (got {code}: {err.strip()})")
    intact, dropped, corrupted = emulator_counts(emu_err)
    check(dropped > 50 and corrupted > 100, f"faults were injected ({dropped}, {corrupted})")
    _, comments, _, rows = read_recording(rec)
    check(len(rows) == intact, f"rows = intact samples sent ({len(rows)} vs {intact})")
    check(summary_value(out, "lost lines") == dropped,
          f"lost lines = dropped ({summary_value(out, 'lost lines')} vs {dropped})")
    check(summary_value(out, "corrupted lines") == corrupted,
          f"corrupted lines = corrupted ({summary_value(out, 'corrupted lines')} vs {corrupted})")
    gap_total = 0
    bad_total = 0
    for c in comments:
        m = re.match(r"gap: sequence \d+(?: to \d+)? missing \((\d+) lines?\)", c)
        if m:
            gap_total += int(m.group(1))
        m = re.match(r"corrupted: (\d+) lines? failed", c)
        if m:
            bad_total += int(m.group(1))
    check(bad_total == corrupted, f"corrupted notes add up ({bad_total} vs {corrupted})")
    check(gap_total == dropped + corrupted,
          f"gap notes cover every missing number ({gap_total} vs {dropped + corrupted})")
    seqs = [int(r[4]) for r in rows]
    check(len(set(seqs)) == len(seqs), "no sample used twice")


def case_faults():
    faults(False)


def case_faults_tcp():
    faults(True)


def disconnect(tcp):
    # The rig drops the link 3 s of rig time after go: exit 4 with one sentence naming the port,
    # and every sample the rig sent intact before it is in the file, which ends with a whole line.
    emu = Emulator("--plant", "1/(0.1*s+1)", "--rate", "100", "--speed", "4",
                   "--faults", "disconnect-after=3", tcp=tcp)
    rec = fresh("cut.csv")
    code, out, err = run("record", "--port", emu.where, "-o", rec, "--duration", "20")
    emu_err = emu.stop()
    check(code == 4, f"a dropped link exits 4 (got {code})")
    check(emu.where in err and ("closed the link" in err or "stopped answering" in err),
          f"the message names the port and says the link went ({err.strip()})")
    check(len(err.strip().splitlines()) == 1, f"the message is one line ({err.strip()!r})")
    text, comments, _, rows = read_recording(rec)
    check(text.endswith("\n"), "the recording ends with a whole line")
    check(all(len(r) == 5 for r in rows), "every row is whole")
    check(300 <= len(rows) <= 302, f"3 s at 100 Hz recorded ({len(rows)})")
    counts = emulator_counts(emu_err)
    check(counts is not None and counts[0] == len(rows),
          f"every sample the rig sent is in the file ({counts} vs {len(rows)})")
    check(any(c.startswith("link lost") for c in comments), "the loss is noted in the recording")


def case_disconnect():
    disconnect(False)


def case_disconnect_tcp():
    disconnect(True)


def traffic(log_path):
    lines = []
    with open(log_path) as f:
        for l in f:
            parts = l.rstrip("\n").split(" ", 3)
            if len(parts) == 4:
                lines.append((int(parts[0]), int(parts[1]), parts[2], parts[3]))
    return lines


def wait_for_file(path, proc, timeout=60):
    # Until `path` exists (the host started that phase) or the host ended; True when it exists.
    end = time.monotonic() + timeout
    while time.monotonic() < end and proc.poll() is None:
        if os.path.exists(path):
            return True
        time.sleep(0.02)
    return os.path.exists(path)


def case_trip():
    # y = 2 u / (0.5 s + 1): a step to u = 50 drives y towards 100; the trip is at 40.
    # The rig's clock runs at a tenth of real time, so one sample period (10 ms of rig time) is
    # 100 ms of real time for the host and the emulator to be scheduled in on a loaded machine;
    # the time is measured on the rig's clock, as the requirement states it.
    log = fresh("trip_traffic.log")
    emu = Emulator("--plant", "2/(0.5*s+1)", "--rate", "100", "--saturate", "0:100", "--log", log,
                   "--speed", "0.1")
    rec = fresh("trip.csv")
    code, out, err = run("step-test", "--port", emu.where, "--from", "0", "--to", "50",
                         "--trip", "-10:40", "--settle", "1", "--yes", "-o", rec)
    time.sleep(0.3)
    emu.stop()
    check(code == 5, f"a trip exits 5 (got {code}: {err.strip()})")
    check("trip" in err and "40" in err, f"the message names the trip ({err.strip()})")
    t = traffic(log)
    first_over = None
    for rig_us, host_us, d, line in t:
        if d == "out" and line.startswith("s "):
            f = line.split()
            if float(f[5]) > 40:
                first_over = int(f[2])
                break
    safe_at = next((rig_us for rig_us, _, d, line in t if d == "in" and line.startswith("safe ")),
                   None)
    check(first_over is not None and safe_at is not None, "a sample over 40 and a safe line")
    if first_over is not None and safe_at is not None:
        check(0 <= safe_at - first_over <= 10000,
              f"safe arrived within one sample period (10 ms) of the trip sample "
              f"({(safe_at - first_over) / 1000} ms)")
    _, comments, _, rows = read_recording(rec)
    check(any(c.startswith("trip:") for c in comments), "the trip is noted in the recording")
    check(max(r[3] for r in rows) > 40, "the recording holds the tripping sample")


def case_signals():
    # SIGINT during a step test: safe stop first, the recording closed after it, exit 5.
    log = fresh("sigint_traffic.log")
    emu = Emulator("--plant", "1/(2*s+1)", "--rate", "100", "--log", log)
    rec = fresh("sigint.csv")
    p = subprocess.Popen([BIN, "step-test", "--port", emu.where, "--from", "0", "--to", "20",
                          "--settle", "2", "--yes", "-o", rec], stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE, text=True, cwd=WORK)
    # The recording starts after the 2 s hold, while the host drives the actuator; the baseline
    # and the step (another 2.5 s) follow.
    check(wait_for_file(rec, p), "the step test started recording")
    time.sleep(0.2)
    p.send_signal(signal.SIGINT)
    out, err = p.communicate(timeout=30)
    time.sleep(0.3)
    emu.stop()
    check(p.returncode == 5, f"SIGINT exits 5 (got {p.returncode}: {err.strip()})")
    check("signal" in err, f"the message names the signal ({err.strip()})")
    check(any(d == "in" and l.startswith("safe ") for _, _, d, l in traffic(log)),
          "the rig received the safe stop")
    _, comments, _, _ = read_recording(rec)
    check(any("safe stop sent" in c for c in comments), "the recording notes the safe stop")

    # SIGKILL of the host: the emulator's watchdog drives the actuator to its safe value.
    emu = Emulator("--plant", "1/(2*s+1)", "--rate", "100", "--watchdog", "300", "--safe", "0")
    killed = fresh("killed.csv")
    p = subprocess.Popen([BIN, "step-test", "--port", emu.where, "--from", "10", "--to", "20",
                          "--settle", "2", "--yes", "-o", killed],
                         stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, cwd=WORK)
    check(wait_for_file(killed, p), "the killed step test started recording")
    time.sleep(0.5)  # some rows flushed (at least every 100 ms)
    p.kill()
    p.wait()
    emu.wait_for_note("watchdog: ", 10)  # 300 ms after the host's last line
    emu_err = emu.stop()
    check("watchdog" in emu_err, f"the emulator's watchdog tripped ({emu_err[-400:]!r})")
    _, _, _, rows = read_recording(os.path.join(WORK, "killed.csv"))
    check(len(rows) > 0, "the killed host's recording holds what it received")


def case_limits():
    emu = Emulator("--plant", "1/(2*s+1)", "--rate", "100", "--saturate", "0:100")
    code, out, err = run("step-test", "--port", emu.where, "--from", "0", "--to", "150", "--yes",
                         "-o", fresh("no.csv"))
    check(code == 2 and "refused" in err and "100" in err,
          f"a value above the rig's range is refused (exit {code}: {err.strip()})")
    code, out, err = run("step-test", "--port", emu.where, "--from", "0", "--to", "30",
                         "--max-step", "20", "--yes", "-o", fresh("no2.csv"))
    check(code == 2 and "maximum step" in err, f"a step over --max-step is refused ({err.strip()})")
    code, out, err = run("apply", "--port", emu.where, "--gain", "5", "--max-gain", "2", "--yes")
    check(code == 2 and "maximum gain" in err, f"a gain over --max-gain is refused ({err.strip()})")
    code, out, err = run("step-test", "--port", emu.where, "--from", "0", "--to", "10",
                         "-o", fresh("no3.csv"))
    check(code == 2 and "--yes" in err, f"without a terminal --yes is needed ({err.strip()})")
    emu_err = emu.stop()
    check(not os.path.exists(os.path.join(WORK, "no.csv")), "no recording for a refused test")
    check(re.search(r"host lines (\d+) valid", emu_err) is not None, "emulator reports host lines")
    # Dry run: every line with a correct CRC, nothing opened.
    code, out, err = run("step-test", "--port", "/dev/null/none", "--from", "0", "--to", "10",
                         "--dry-run", "-o", fresh("dry.csv"))
    check(code == 0, f"dry run exits 0 (got {code}: {err.strip()})")
    sent = [l[len("would send: "):] for l in out.splitlines() if l.startswith("would send: ")]
    words = [s.split()[0] for s in sent]
    check(words == ["hello", "go", "u", "u", "u", "halt"], f"dry-run lines in order ({words})")
    for s in sent:
        body, _, crc = s.rpartition(" *")
        check(crc == "%04X" % crc16_ccitt_false(body.encode()), f"CRC of '{s}'")
    check(not os.path.exists(os.path.join(WORK, "dry.csv")), "a dry run writes no recording")


def emulator_notes(err_text, prefix):
    # "[rig 1.23 s] loop: controller p, gain 1.5, reference 30" -> the texts after "] ".
    return [l.split("] ", 1)[1] for l in err_text.splitlines()
            if l.startswith("[rig ") and "] " in l and l.split("] ", 1)[1].startswith(prefix)]


def case_cautions():
    # The safety cautions are shown before a command first drives a workspace's rig, and stay
    # until one has: a dry run (nothing moves) and a port that does not open (nothing moved)
    # must not use them up, or the first run that moves the actuator would show none.
    ws = os.path.join(WORK, "caution_ws")
    if os.path.exists(ws):
        shutil.rmtree(ws)
    code, _, err = run("init", ws, "--name", "caution bench (emulated)", "--actuator", "0:100",
                       "--trip", "-10:200")
    check(code == 0, f"init exits 0 ({err.strip()})")

    def apply(port, *extra):
        return run("--rig", ws, "apply", "--port", port, "--controller", "p", "--gain", "0.5",
                   "--reference", "10", "--duration", "0.5", "--yes", *extra)

    def cautioned(err):
        return "emergency stop within reach" in err and "qualified person" in err

    code, _, err = apply("/dev/null/none", "--dry-run")
    check(code == 0 and cautioned(err), f"a dry run shows the cautions (exit {code}: {err!r})")
    code, _, err = apply(os.path.join(WORK, "no_such_port"))
    check(code == 4 and cautioned(err),
          f"after a dry run they are shown again, here for a port that does not open ({err!r})")
    emu = Emulator("--plant", "2/(0.5*s+1)", "--rate", "100", "--speed", "4")
    code, _, err = apply(emu.where)
    emu.stop()
    check(code == 0 and cautioned(err),
          f"the first run that drives the rig shows them (exit {code}: {err!r})")
    emu = Emulator("--plant", "2/(0.5*s+1)", "--rate", "100", "--speed", "4")
    code, _, err = apply(emu.where)
    emu.stop()
    check(code == 0 and not cautioned(err),
          f"once a command has driven the rig they are not repeated (exit {code}: {err!r})")


def case_apply():
    # apply closes the emulated rig's loop at the gain asked for, and the rig runs with it.
    # Plant 2/(0.5 s + 1) from rest at u = 0. Proportional control at K = 1.5 around r = 30:
    # u = K (r - y) at every sample, and by the final-value theorem (any control text, e.g.
    # Ogata, Modern Control Engineering, steady-state error of a type-0 loop; from memory)
    # y -> K G(0) r / (1 + K G(0)) = 3/4 r = 22.5, first order with time constant 0.5 / 4 s.
    log = fresh("apply_traffic.log")
    emu = Emulator("--plant", "2/(0.5*s+1)", "--rate", "100", "--speed", "4", "--log", log)
    rec = fresh("apply.csv")
    code, out, err = run("apply", "--port", emu.where, "--controller", "p", "--gain", "1.5",
                         "--reference", "30", "--duration", "4", "--yes", "-o", rec)
    time.sleep(0.3)
    emu_err = emu.stop()
    check(code == 0, f"apply exits 0 (got {code}: {err.strip()})")
    check("applied p at K = 1.5, reference 30" in out, f"apply says what it applied ({out!r})")
    check("safe stop sent" in out, f"apply ends with the safe stop ({out!r})")
    # The rig's own account: what it was told and what it then ran.
    check(emulator_notes(emu_err, "loop:") == ["loop: controller p, gain 1.5, reference 30"],
          f"the emulator runs p at gain 1.5 towards 30 ({emulator_notes(emu_err, 'loop:')})")
    modes = emulator_notes(emu_err, "mode ")
    check(modes == ["mode closed", "mode safe (safe stop)"], f"closed, then safe ({modes})")
    t = traffic(log)
    loops = [l.split() for _, _, d, l in t if d == "in" and l.startswith("loop ")]
    check(len(loops) == 1 and loops[0][2:5] == ["p", "1.5", "30"],
          f"one loop line with p 1.5 30 ({loops})")
    if len(loops) == 1:
        acked = [l.split() for _, _, d, l in t if d == "out" and l.startswith("ok ")]
        check(any(a[2] == loops[0][1] for a in acked), "the rig acknowledged the loop line")
    check(any(d == "out" and l.split()[0] == "state" and l.split()[2] == "closed"
              for _, _, d, l in t), "the rig reported mode closed")
    check(any(d == "in" and l.startswith("safe ") for _, _, d, l in t), "the safe stop went out")
    _, _, header, _ = read_recording(rec)
    check(header == ["t", "r", "u", "y", "seq"], f"columns t,r,u,y,seq ({header})")
    # Rows in file order, split at the note of the safe stop: before it, every row with the
    # reference 30 is closed loop; after it, a row is one still in flight (the same law) or one
    # at the safe value 0.
    before, after, seen_safe = [], [], False
    with open(rec) as f:
        for line in f.read().splitlines()[2:]:
            if line.startswith("#"):
                seen_safe = seen_safe or "safe stop sent" in line
            elif line:
                (after if seen_safe else before).append([float(c) for c in line.split(",")])
    check(seen_safe, "the recording notes the safe stop")
    law = lambda r: abs(r[2] - 1.5 * (30 - r[3])) <= 1e-6 * max(1, abs(r[2]))
    closed = [r for r in before if r[1] == 30]
    check(len(closed) >= 350, f"about 4 s of closed loop at 100 Hz recorded ({len(closed)})")
    check(all(r[1] == 0 and r[2] == 0 for r in before if r[1] != 30),
          "before the loop: reference 0, actuator at the safe value 0")
    check(all(law(r) or r[2] == 0 for r in after), "after the safe stop: the law or u = 0")
    if closed:
        bad = [r for r in closed if not law(r)]
        check(not bad, f"u = 1.5 (30 - y) at every closed-loop sample ({bad[:3]})")
        ys = [r[3] for r in closed]
        check(ys[0] < 1.0, f"the loop starts from rest near 0 ({ys[0]})")
        check(all(b >= a - 1e-9 for a, b in zip(ys, ys[1:])), "y rises towards the reference")
        check(abs(ys[-1] - 22.5) < 1e-4, f"y settles at 3/4 of the reference, 22.5 ({ys[-1]})")
        check(all(y < 30 for y in ys), "y never passes the reference (type-0 loop)")

    # Without --reference the loop holds the output where it is. The rig rests at u = 20, so
    # y = 2 * 20 = 40; with integral action (pi:2) the loop needs u = r / G(0) = 20 at rest
    # (final-value theorem again), and the switch into the loop is bumpless: y stays at 40.
    emu = Emulator("--plant", "2/(0.5*s+1)", "--rate", "100", "--speed", "4", "--safe", "20")
    rec = fresh("apply_hold.csv")
    code, out, err = run("apply", "--port", emu.where, "--controller", "pi:2", "--gain", "0.5",
                         "--duration", "3", "--yes", "-o", rec)
    emu_err = emu.stop()
    check(code == 0, f"apply without --reference exits 0 (got {code}: {err.strip()})")
    check("applied pi:2 at K = 0.5, reference 40 on" in out, f"reference 40 from y ({out!r})")
    check(emulator_notes(emu_err, "loop:") == ["loop: controller pi:2, gain 0.5, reference 40"],
          f"the emulator runs pi:2 at 0.5 towards 40 ({emulator_notes(emu_err, 'loop:')})")
    _, _, _, rows = read_recording(rec)
    closed = [r for r in rows if r[1] == 40]
    check(len(closed) >= 250, f"about 3 s of closed loop recorded ({len(closed)})")
    if closed:
        check(max(abs(r[3] - 40) for r in closed) < 1e-6, "y held at 40")
        check(abs(closed[-1][2] - 20) < 1e-6, f"u at 20 = r / G(0) ({closed[-1][2]})")


def dry_run_lines(out):
    return [l[len("would send: "):] for l in out.splitlines() if l.startswith("would send: ")]


def case_tune_dry_run():
    # tune --dry-run prints the step test's lines, then the rest of the job, and opens, sends
    # and writes nothing.
    out_dir = os.path.join(WORK, "dry_tune")
    code, out, err = run("tune", "--port", "/dev/null/none", "--dry-run", "--actuator", "0:100",
                         "--controller", "pi:1.2", "--dir", out_dir)
    check(code == 0, f"tune --dry-run exits 0 (got {code}: {err.strip()})")
    sent = dry_run_lines(out)
    words = [s.split()[0] for s in sent]
    check(words == ["hello", "go", "u", "u", "u", "halt"], f"the step test's lines ({words})")
    check([s.split()[2] for s in sent if s.startswith("u ")] == ["40", "50", "40"],
          f"40 % of the range, 10 % up, back ({sent})")
    for s in sent:
        body, _, crc = s.rpartition(" *")
        check(crc == "%04X" % crc16_ccitt_false(body.encode()), f"CRC of '{s}'")
    check([int(s.split()[1]) for s in sent] == list(range(len(sent))), "SEQ 0, 1, 2, ...")
    banners = re.findall(r"^tune (\d): ", out, re.M)
    check(banners == [str(i) for i in range(1, 9)], f"steps 1 to 8 in order ({banners})")
    commands = [l.split()[2] for l in out.splitlines() if l.startswith("$ loopwright ")]
    check(commands == ["fit", "band", "predict", "check", "report"],
          f"fit, band, predict, check, report ({commands})")
    step_csv = os.path.join(out_dir, "step.csv")
    check(f"$ loopwright fit {step_csv} -o" in out, "fit reads the step test's recording")
    check(re.search(r"\$ loopwright predict \S+ --gain K --controller pi:1\.2 "
                    r"--reference step:A:B:0", out) is not None, "predict at K, step A -> B")
    check(re.search(r"\$ loopwright predict .* --overshoot-max 10\b", out) is not None,
          "predict judges the overshoot limit band designed for (the default 10 %)")
    check("loop pi:1.2 K A" in out and "ref B" in out, "the closed-loop step's lines, as a plan")
    check(not os.path.exists(out_dir), "a dry run creates no folder")

    # With --gain and --ref-step the closed-loop step's lines are exact too.
    code, out, err = run("tune", "--port", "/dev/null/none", "--dry-run", "--actuator", "0:100",
                         "--controller", "pi:1.2", "--gain", "0.8", "--ref-step", "0.5:0.7",
                         "--structure", "sopdt", "--dir", out_dir)
    check(code == 0, f"tune --dry-run --gain --ref-step exits 0 (got {code}: {err.strip()})")
    sent = dry_run_lines(out)
    words = [s.split()[0] for s in sent]
    check(words == ["hello", "go", "u", "u", "u", "halt", "go", "loop", "ref", "halt", "safe"],
          f"step test, then the closed-loop step ({words})")
    for s in sent:
        body, _, crc = s.rpartition(" *")
        check(crc == "%04X" % crc16_ccitt_false(body.encode()), f"CRC of '{s}'")
    check([int(s.split()[1]) for s in sent] == list(range(len(sent))), "SEQ 0 to 10")
    loop = next((s.split() for s in sent if s.startswith("loop ")), [])
    check(loop[2:5] == ["pi:1.2", "0.8", "0.5"], f"loop pi:1.2 0.8 0.5 ({loop})")
    ref = next((s.split() for s in sent if s.startswith("ref ")), [])
    check(ref[2:3] == ["0.7"], f"ref 0.7 ({ref})")
    check("--gain 0.8" in out and "step:0.5:0.7:0" in out, "predict at the given gain and step")
    check(re.search(r"\$ loopwright fit \S+ .*--structure sopdt", out) is not None,
          "fit with the structure asked for")
    code, out, err = run("tune", "--port", "/dev/null/none", "--dry-run", "--actuator", "0:100",
                         "--structure", "third-order")
    check(code == 2 and "third-order" in err and not out.count("would send"),
          f"an unknown structure is refused before anything ({code}: {err.strip()})")
    code, out, err = run("tune", "--port", "/dev/null/none", "--dry-run", "--actuator", "0:100",
                         "--controller", "pi:1.2", "--gain", "0.8", "--max-gain", "0.5")
    check(code == 2 and "maximum gain" in err, f"a gain over --max-gain is refused ({err.strip()})")
    for bad in ("0.5:0.5", "0.5", "0.5:x", "inf:1"):
        code, out, err = run("tune", "--port", "/dev/null/none", "--dry-run", "--actuator", "0:100",
                             "--controller", "pi:1.2", "--gain", "0.8", "--ref-step", bad)
        check(code == 2 and f"--ref-step '{bad}': expected A:B" in err,
              f"--ref-step {bad} is refused naming the option ({code}: {err.strip()})")


def case_verify():
    # verify on its own: a closed-loop step on the emulated rig, then the check's verdict. The
    # emulator runs a plant of our own, 1.6 exp(-0.3 s)/((2 s + 1)(0.5 s + 1)), with sensor noise
    # 0.02; the model is fitted (sopdt) to a simulated step test of the same plant and noise, so
    # the check must say confirmed. The response must be recorded for at least twice the
    # predicted settling time (a loop creeping to its final value can look at rest earlier).
    import json
    plant = "1.6*exp(-0.3*s)/((2*s+1)*(0.5*s+1))"
    step = fresh("verify_step.csv")
    model = fresh("verify_model.json")
    code, _, err = run("simulate", "--plant", plant, "--input", "step:20:30:5", "--rate", "50",
                       "--duration", "40", "--noise", "0.02", "--seed", "3", "-o", step)
    check(code == 0, f"simulate exits 0 ({err.strip()})")
    code, _, err = run("fit", step, "--structure", "sopdt", "-o", model)
    check(code == 0, f"fit exits 0 ({err.strip()})")
    code, out, err = run("predict", model, "--controller", "pi:0.5", "--gain", "0.9",
                         "--reference", "step:10:14:0", "--json")
    check(code == 0, f"predict exits 0 ({err.strip()})")
    settle = json.loads(out)["metrics"]["settling_time"] if code == 0 else float("nan")
    emu = Emulator("--plant", plant, "--rate", "50", "--noise", "0.02", "--speed", "10",
                   "--seed", "2")
    rec = fresh("verify_cl.csv")
    code, out, err = run("verify", "--port", emu.where, model, "--controller", "pi:0.5",
                         "--gain", "0.9", "--ref-step", "10:14", "-o", rec, "--yes", "--json",
                         timeout=120)
    emu.stop()
    check(code == 0, f"verify exits 0 for confirmed (got {code}: {err.strip()[-400:]})")
    try:
        verdict = json.loads(out)
        check(verdict["verdict"] == "confirmed",
              f"verify says confirmed (got {verdict['verdict']}: {verdict.get('reason')})")
        _, _, _, rows = read_recording(rec)
        step_at = verdict["steps"][0]["at"]
        check(rows[-1][0] - step_at >= 2 * settle - 0.021,
              f"response recorded for 2 x {settle:.3g} s ({rows[-1][0] - step_at:.3g} s)")
    except (OSError, KeyError, ValueError, IndexError) as e:
        check(False, f"verify's output and recording are readable ({e})")


def case_tune():
    # The conveyor scenario: 0.021 exp(-0.12 s) / (0.85 s + 1) (io/rig_scenario.h).
    # The emulator runs in real time (8x): where the host's lines land in rig time, and so the
    # noise each recording holds, shifts with the host's scheduling, so every run has data of its
    # own, and what is checked must hold for all of them. The structure is named: fit's automatic
    # choice (AICc, identify/structure_selection.h) takes a structure that contains the first
    # order with dead time (sopdt, sopdt-zero) for a fixed fraction of noise realizations, about
    # P(chi2 with 1 or 2 degrees of freedom > 2 or 4) = 14-16 % for nested models whatever the
    # record length (Burnham & Anderson, Model Selection and Multimodel Inference; from memory),
    # and a near pole-zero pair it then adds leaves the dead time undetermined. The near-tie rule
    # there (the fewest parameters within delta AICc 2) undoes those within 2, not the rest. That
    # choice is the fit tests' subject (tests/identify, tests/reference/identify_recovery.py).
    emu = Emulator("--scenario", "conveyor-drive", "--speed", "8", "--seed", "5")
    out_dir = os.path.join(WORK, "tune_run")
    if os.path.isdir(out_dir):
        shutil.rmtree(out_dir)
    code, out, err = run("tune", "--port", emu.where, "--controller", "pi:1.2", "--yes",
                         "--structure", "fopdt", "--overshoot-max", "10", "--dir", out_dir,
                         timeout=300)
    emu.stop()
    check(code == 0, f"tune exits 0 (got {code}: {err.strip()[-600:]})")
    check(f"--structure fopdt" in out, "tune runs fit with the structure asked for")
    # The default reference step (from the measured levels) is the one the proposal shows, to 6
    # significant digits, in the predict command as on the rig: not 0.0240000000000002.
    m = re.search(r"--reference step:(\S+):(\S+):0", out)
    shown = re.search(r"step the reference (\S+) -> (\S+)", out)
    check(m is not None and shown is not None and m.groups() == shown.groups() and
          all(len(re.sub(r"[^0-9]", "", v.split("e")[0]).lstrip("0")) <= 6 for v in m.groups()),
          f"predict steps the reference the proposal shows ({m and m.groups()}, "
          f"{shown and shown.groups()})")
    import json
    try:
        with open(os.path.join(out_dir, "model.json")) as f:
            model = json.load(f)
        params = {p["name"]: p["value"] for p in model["parameters"]}
        print("fitted", model.get("structure"), params)
        check(model.get("structure") == "fopdt", f"first order with dead time ({model.get('structure')})")
        # The scenario's truth: gain 0.021 (m/s)/%, time constant 0.85 s, dead time 0.12 s.
        for name, true in (("gain", 0.021), ("time_constant", 0.85), ("dead_time", 0.12)):
            v = params.get(name)
            check(v is not None and abs(v / true - 1) <= 0.05,
                  f"{name} within 5 % of {true} (got {v})")
        # The band is that of the loop the rig runs: sampled at its own period (the scenario's
        # 100 Hz), the recommended gain inside the sampled loop's response band.
        with open(os.path.join(out_dir, "band.json")) as f:
            band = json.load(f)
        check(band.get("discrete", {}).get("sample_time") == 0.01,
              f"the band is the loop sampled at the rig's period ({band.get('discrete')})")
        k = band.get("recommended_gain")
        check(k is not None and any(lo <= k <= (hi if hi is not None else float("inf"))
                                    for lo, hi in band["bands"].get("sampled_response", [])),
              f"the proposed gain {k} lies in the sampled response band")
        with open(os.path.join(out_dir, "check.json")) as f:
            verdict = json.load(f)
        check(verdict["verdict"] == "confirmed",
              f"verify says confirmed (got {verdict['verdict']}: {verdict.get('reason')})")
        # The closed-loop response is recorded for twice the predicted settling time, so the
        # tail the check takes the final value from lies past settling.
        with open(os.path.join(out_dir, "prediction.json")) as f:
            settle = json.load(f)["metrics"]["settling_time"]
        _, _, _, rows = read_recording(os.path.join(out_dir, "closed_loop.csv"))
        step_at = verdict["steps"][0]["at"]
        check(rows[-1][0] - step_at >= 2 * settle - 0.011,
              f"response recorded for 2 x {settle:.3g} s ({rows[-1][0] - step_at:.3g} s)")
    except (OSError, KeyError, ValueError, IndexError) as e:
        check(False, f"tune's files are readable ({e})")
    check(os.path.exists(os.path.join(out_dir, "report.html")), "tune writes the report")


cli_common.main(globals(), clean=False)
