#!/usr/bin/env python3
"""End-to-end tests of `loopwright emulate`: emulator_test.py BINARY WORK_DIR CASE.

A small host written here (the wire format of io/rig_protocol.md: CRC-16/CCITT-FALSE with the
published parameters, checked against its published check value first) talks to the real
emulator over a pseudo-terminal or loopback TCP. Expected values come from outside loopwright:
the first-order step response with dead time (closed form), scipy's zero-order-hold and bilinear
discretisations (scipy.signal.cont2discrete) for the closed loop, and exact counts for the
stream and the injected faults.
"""
import os
import queue
import re
import select
import signal
import socket
import subprocess
import sys
import termios
import threading
import time
import tty

BIN, WORK, CASE = sys.argv[1:4]
failures = []


def check(cond, what):
    if not cond:
        failures.append(what)
        print("FAIL:", what)


# --- CRC-16/CCITT-FALSE: poly 0x1021, init 0xFFFF, no reflection, xorout 0 -------------------
TABLE = []
for byte in range(256):
    c = byte << 8
    for _ in range(8):
        c = ((c << 1) ^ 0x1021) & 0xFFFF if c & 0x8000 else (c << 1) & 0xFFFF
    TABLE.append(c)


def crc16(data):
    c = 0xFFFF
    for b in data:
        c = ((c << 8) & 0xFFFF) ^ TABLE[(c >> 8) ^ b]
    return c


assert crc16(b"123456789") == 0x29B1, "published check value of CRC-16/CCITT-FALSE"


class Emulator:
    """`loopwright emulate ...` in the background; stderr collected line by line."""

    def __init__(self, *args):
        self.proc = subprocess.Popen([BIN, "emulate", *args], stdout=subprocess.PIPE,
                                     stderr=subprocess.PIPE, text=True)
        self.where = self.proc.stdout.readline().strip()
        self.notes = queue.Queue()
        self.stderr = []
        threading.Thread(target=self._drain, daemon=True).start()

    def _drain(self):
        for line in self.proc.stderr:
            self.stderr.append(line)
            self.notes.put((time.monotonic(), line))

    def wait_note(self, pattern, timeout):
        end = time.monotonic() + timeout
        while time.monotonic() < end:
            try:
                t, line = self.notes.get(timeout=max(0.01, end - time.monotonic()))
            except queue.Empty:
                break
            if re.search(pattern, line):
                return t, line
        return None, None

    def stop(self):
        if self.proc.poll() is None:
            self.proc.send_signal(signal.SIGTERM)
        try:
            code = self.proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.proc.kill()
            code = None
        time.sleep(0.1)
        return code

    def summary(self):
        text = "".join(self.stderr)
        m = re.search(r"samples (\d+) intact, (\d+) dropped, (\d+) corrupted", text)
        return tuple(int(g) for g in m.groups()) if m else None


class Host:
    """The host side over a pty device path or tcp:HOST:PORT."""

    def __init__(self, where):
        if where.startswith("tcp:"):
            host, port = where[4:].rsplit(":", 1)
            self.sock = socket.create_connection((host, int(port)), timeout=5)
            self.sock.setblocking(False)
            self.fd = self.sock.fileno()
        else:
            self.sock = None
            self.fd = os.open(where, os.O_RDWR | os.O_NOCTTY)
            # TCSANOW: keep what the rig already sent (TCSAFLUSH would discard unread input).
            tty.setraw(self.fd, termios.TCSANOW)
        self.seq = 0
        self.partial = b""
        self.closed = False

    def send(self, body):
        text = f"{body.split(' ', 1)[0]} {self.seq}" + (" " + body.split(" ", 1)[1] if " " in body else "")
        line = f"{text} *{crc16(text.encode()):04X}\n".encode()
        self.seq += 1
        if self.sock:
            self.sock.sendall(line)
        else:
            os.write(self.fd, line)
        return self.seq - 1

    def read(self, timeout):
        """Raw lines that arrived within timeout (bytes, no terminator)."""
        r, _, _ = select.select([self.fd], [], [], timeout)
        if not r:
            return []
        try:
            data = self.sock.recv(1 << 16) if self.sock else os.read(self.fd, 1 << 16)
        except (OSError, BlockingIOError) as e:
            if isinstance(e, BlockingIOError):
                return []
            data = b""
        if not data:
            self.closed = True
            return []
        data = self.partial + data
        lines = data.split(b"\n")
        self.partial = lines.pop()
        return lines

    def close(self):
        if self.sock:
            self.sock.close()
        else:
            os.close(self.fd)


def parse(raw):
    """(fields, crc_ok) of one raw line."""
    text = raw.decode("ascii", "replace").rstrip("\r")
    body, sep, crc = text.rpartition(" *")
    ok = bool(sep) and len(crc) == 4 and crc == f"{crc16(body.encode()):04X}"
    return body.split(" "), ok


def collect(host, until, timeout=30.0, beat=0.1):
    """Reads and parses lines until until(fields) is true for a valid line; heartbeats meanwhile."""
    good, bad = [], 0
    end = time.monotonic() + timeout
    last_beat = 0.0
    while time.monotonic() < end and not host.closed:
        if time.monotonic() - last_beat > beat:
            host.send("beat")
            last_beat = time.monotonic()
        done = False
        for raw in host.read(0.02):  # the whole batch, even past the line that ends it
            fields, ok = parse(raw)
            if not ok:
                bad += 1
                continue
            good.append(fields)
            done = done or until(fields)
        if done:
            return good, bad
    return good, bad


def samples_of(lines):
    return [(int(f[1]), int(f[2]), float(f[3]), float(f[4]), float(f[5])) for f in lines
            if f[0] == "s"]


def case_open_pty():
    # 2 exp(-0.0234 s)/(0.5 s + 1) at 100 Hz, actuator stepped from the safe 0 to 3.
    # Closed form: y(t) = 2 * 3 * (1 - exp(-(t - t0 - T)/0.5)) for t - t0 >= T, else 0.
    emu = Emulator("--plant", "2*exp(-0.0234*s)/(0.5*s+1)", "--rate", "100", "--pty",
                   "--speed", "5", "--saturate", "0:10")
    check(emu.where.startswith("/dev/"), f"first stdout line is the device path (got {emu.where!r})")
    host = Host(emu.where)
    host.send("hello 1")
    caps, _ = collect(host, lambda f: f[0] == "caps", timeout=5)
    caps = [f for f in caps if f[0] == "caps"]
    check(caps and caps[0][2:9] == ["1", "10000", "0", "10", "0", "1000", "emulated-rig"],
          "caps line VERSION PERIOD_US ACT_LO ACT_HI SAFE WATCHDOG_MS NAME "
          f"(got {caps[0] if caps else None})")
    host.send("go")
    collect(host, lambda f: f[0] == "s", timeout=5)
    host.send("u 3")
    lines, bad = collect(host, lambda f: f[0] == "s" and int(f[2]) > 0 and float(f[4]) == 3 and
                         False, timeout=1.0)
    host.send("halt")
    host.close()
    code = emu.stop()
    check(code == 0, f"SIGTERM ends the emulator with 0 (got {code})")
    check(bad == 0, f"no corrupted lines without faults (got {bad})")
    s = samples_of(lines)
    stepped = [x for x in s if x[3] == 3.0]
    check(len(stepped) > 50, f"samples after the step arrived (got {len(stepped)})")
    if not stepped:
        return
    t0 = stepped[0][1] * 1e-6
    worst = 0.0
    for seq, t_us, r, u, y in stepped:
        tau = t_us * 1e-6 - t0 - 0.0234
        want = 6.0 * (1.0 - pow(2.718281828459045, -tau / 0.5)) if tau >= 0 else 0.0
        worst = max(worst, abs(y - want))
    check(worst < 1e-7, f"open-loop samples equal the closed-form step response (worst {worst:.3g})")
    steps = {b[1] - a[1] for a, b in zip(s, s[1:])}
    check(steps == {10000}, f"rig times advance by exactly one period (got {sorted(steps)[:5]})")


def case_closed_tcp():
    # PI control of 2 exp(-0.03 s)/((0.5 s + 1)(0.1 s + 1)) at h = 0.01 s, K = 1.2, Z = 2 rad/s,
    # reference 1, no clipping reached. Reference loop: the plant by scipy's exact ZOH plus three
    # samples of delay, the controller by scipy's bilinear transform, started bumpless (u = 0).
    import numpy as np
    from scipy import signal as sig
    h, k = 0.01, 1.2
    emu = Emulator("--plant", "2*exp(-0.03*s)/((0.5*s+1)*(0.1*s+1))", "--rate", "100",
                   "--listen", "tcp:127.0.0.1:0", "--speed", "4", "--saturate", "-50:50",
                   "--safe", "0")
    check(re.fullmatch(r"tcp:127\.0\.0\.1:\d+", emu.where) is not None,
          f"first stdout line is tcp:127.0.0.1:PORT (got {emu.where!r})")
    host = Host(emu.where)
    host.send("go")
    collect(host, lambda f: f[0] == "s", timeout=5)
    host.send("loop pi:2 1.2 1")
    lines, bad = collect(host, lambda f: f[0] == "s" and float(f[3]) == 1.0 and False, timeout=1.2)
    host.close()
    emu.stop()
    s = [x for x in samples_of(lines) if x[2] == 1.0]
    check(len(s) > 80, f"closed-loop samples arrived (got {len(s)})")
    if len(s) < 2:
        return
    numd, dend, _ = sig.cont2discrete(([2.0], np.polymul([0.5, 1.0], [0.1, 1.0])), h, method="zoh")
    numd = np.ravel(numd) / dend[0]
    dend = np.ravel(dend) / dend[0]
    cnum, cden, _ = sig.cont2discrete(([k, k * 2.0], [1.0, 0.0]), h, method="bilinear")
    cnum = np.ravel(cnum) / cden[0]
    cden = np.ravel(cden) / cden[0]
    n = len(s)
    delay = 3
    pad = len(dend) + delay + 2
    u = np.zeros(n + pad)
    y = np.zeros(n + pad)
    e = np.zeros(n + pad)
    for i in range(pad, n + pad):
        # y[i] from past u (strictly proper: numd[0] == 0) and past y.
        acc = 0.0
        for j in range(1, len(numd)):
            acc += numd[j] * u[i - j - delay]
        for j in range(1, len(dend)):
            acc -= dend[j] * y[i - j]
        y[i] = acc
        e[i] = 1.0 - y[i]
        if i == pad:
            u[i] = 0.0  # bumpless start from the actuator's value 0
        else:
            u[i] = -cden[1] * u[i - 1] + cnum[0] * e[i] + cnum[1] * e[i - 1]
    got_u = np.array([x[3] for x in s])
    got_y = np.array([x[4] for x in s])
    err_y = np.max(np.abs(got_y - y[pad:]))
    err_u = np.max(np.abs(got_u - u[pad:]))
    check(err_y < 1e-6 and err_u < 1e-6,
          f"closed loop equals scipy's ZOH plant + bilinear PI (worst y {err_y:.3g}, u {err_u:.3g})")
    check(bad == 0, "no corrupted lines over TCP without faults")


def case_stream_1khz():
    # 1 kHz for 60 s of rig time at 40x: every sample arrives, in order, one period apart.
    emu = Emulator("--plant", "1/(0.1*s+1)", "--rate", "1000", "--pty", "--speed", "40",
                   "--noise", "0.01", "--seed", "5")
    host = Host(emu.where)
    host.send("u 1")
    host.send("go")
    first = []

    def sixty_seconds(f):
        if f[0] != "s":
            return False
        first.append(int(f[2]))
        return int(f[2]) - first[0] >= 60_000_000

    lines, bad = collect(host, sixty_seconds, timeout=30)
    host.send("halt")
    host.close()
    emu.stop()
    s = samples_of(lines)
    seqs = [int(f[1]) for f in lines]  # samples and the acknowledgements of the heartbeats
    check(bad == 0, f"no corrupted lines (got {bad})")
    check(len(s) >= 60_001, f"60 s at 1 kHz is at least 60001 samples (got {len(s)})")
    check(all(b == a + 1 for a, b in zip(seqs, seqs[1:])), "the rig's SEQ numbers have no gap")
    check(all(b[1] - a[1] == 1000 for a, b in zip(s, s[1:])), "rig times 1000 us apart")
    summary = emu.summary()
    check(summary is not None and summary[1:] == (0, 0), f"emulator reports no faults ({summary})")


def case_faults():
    # drop and corrupt: the host's counts of bad CRCs and missing SEQ numbers equal the
    # emulator's own record exactly.
    emu = Emulator("--plant", "3/(0.2*s+1)", "--rate", "200", "--pty", "--speed", "10",
                   "--faults", "drop=0.03,corrupt=0.04", "--seed", "11", "--noise", "0.05")
    host = Host(emu.where)
    host.send("u 2")
    host.send("go")
    lines, bad = collect(host, lambda f: f[0] == "s" and int(f[2]) >= 20_000_000, timeout=20)
    halt = host.send("halt")
    more, bad2 = collect(host, lambda f: f[0] == "ok" and f[2] == str(halt), timeout=5)
    lines += more
    bad += bad2
    host.close()
    emu.stop()
    valid_seqs = [int(f[1]) for f in lines]
    missing = sum(b - a - 1 for a, b in zip(valid_seqs, valid_seqs[1:]))
    summary = emu.summary()
    check(summary is not None, "emulator prints its closing counts")
    if summary:
        intact, dropped, corrupted = summary
        check(bad == corrupted, f"every corrupted line fails the CRC: host {bad}, emulator {corrupted}")
        check(missing - bad == dropped, f"gaps not explained by bad lines are the drops: host "
              f"{missing - bad}, emulator {dropped}")
        check(len(samples_of(lines)) == intact, f"intact samples: host {len(samples_of(lines))}, "
              f"emulator {intact}")
        check(dropped > 20 and corrupted > 30, f"faults were injected ({dropped}, {corrupted})")


def case_watchdog_sigkill():
    # A host that drives the actuator to 60 and beats every 50 ms is killed with SIGKILL: the
    # emulator's watchdog (400 ms) puts the actuator to its safe value 5 without any host help.
    log = os.path.join(WORK, "watchdog_traffic.log")
    emu = Emulator("--plant", "1/(0.3*s+1)", "--rate", "100", "--pty", "--speed", "1",
                   "--saturate", "0:100", "--safe", "5", "--watchdog", "400", "--log", log)
    child = subprocess.Popen([sys.executable, "-c", f"""
import os, time, tty, sys
sys.path.insert(0, {os.path.dirname(os.path.abspath(__file__))!r})
fd = os.open({emu.where!r}, os.O_RDWR | os.O_NOCTTY)
tty.setraw(fd)
def crc(b):
    c = 0xFFFF
    for x in b:
        c ^= x << 8
        for _ in range(8):
            c = ((c << 1) ^ 0x1021) & 0xFFFF if c & 0x8000 else (c << 1) & 0xFFFF
    return c
seq = 0
def send(body):
    global seq
    w = body.split(' ', 1)
    text = w[0] + ' ' + str(seq) + (' ' + w[1] if len(w) > 1 else '')
    os.write(fd, (text + ' *%04X\\n' % crc(text.encode())).encode())
    seq += 1
send('hello 1'); send('u 60'); send('go')
print('driving', flush=True)
while True:
    send('beat')
    time.sleep(0.05)
"""], stdout=subprocess.PIPE, text=True)
    check(child.stdout.readline().strip() == "driving", "the host started driving")
    t_open, _ = emu.wait_note(r"mode open", 3)
    check(t_open is not None, "the emulator saw the host open the loop")
    time.sleep(0.5)
    child.kill()
    child.wait()
    t_trip, line = emu.wait_note(r"watchdog:", 10)
    check(t_trip is not None, "the emulator reports the watchdog after the host died")
    if t_trip is not None:
        check("safe value 5" in line, f"the note names the safe value ({line.strip()})")
    # A new host finds the rig safe, the actuator at 5.
    host = Host(emu.where)
    host.send("go")
    lines, _ = collect(host, lambda f: False, timeout=0.5)
    host.close()
    emu.stop()
    states = [f for f in lines if f[0] == "state"]
    check(any(f[2:] == ["safe", "watchdog"] for f in states),
          f"the rig said 'state safe watchdog' ({states})")
    # Lines the dead host left unread come first; everything after the trip is safe.
    trip = next((i for i, f in enumerate(lines) if f[0] == "state" and f[2:] == ["safe", "watchdog"]),
                len(lines))
    s = samples_of(lines[trip:])
    check(len(s) > 10 and all(x[3] == 5.0 for x in s),
          f"every sample after the trip has the safe actuator value 5 ({[x[3] for x in s[:5]]})")
    summary = "".join(emu.stderr)
    check("watchdog trips 1" in summary, "the closing counts show one watchdog trip")
    # On the emulator's own clock (the traffic log's HOST_US, microseconds of real time): the
    # trip comes 400 ms after the dead host's last line, never sooner, and late only by the
    # emulator's own wake-up (generous on a loaded machine).
    traffic = []
    with open(log) as f:
        for l in f:
            parts = l.rstrip("\n").split(" ", 3)
            if len(parts) == 4:
                traffic.append((int(parts[1]), parts[2], parts[3]))
    trip_at = next((t for t, d, l in traffic if d == "out" and l.split()[0] == "state" and
                    l.split()[2:4] == ["safe", "watchdog"]), None)
    before = [t for t, d, _ in traffic if d == "in" and trip_at is not None and t < trip_at]
    check(trip_at is not None and before, "the traffic log holds the host's lines and the trip")
    if trip_at is not None and before:
        waited = (trip_at - before[-1]) / 1e6
        check(0.4 <= waited <= 1.0, f"the watchdog tripped 400 ms after the host's last line "
              f"(after {waited:.3f} s)")


def case_disconnect():
    # disconnect-after=1: the rig drops the link 1 s of rig time after go; the host sees the end
    # of the stream and the emulator exits 0, saying why.
    emu = Emulator("--plant", "1/(s+1)", "--rate", "100", "--pty", "--speed", "5",
                   "--faults", "disconnect-after=1")
    host = Host(emu.where)
    host.send("u 1")
    host.send("go")
    lines, bad = collect(host, lambda f: False, timeout=3)
    check(host.closed, "the host's read ended when the link dropped")
    code = emu.proc.wait(timeout=5)
    check(code == 0, f"the emulator exits 0 after the disconnect fault (got {code})")
    time.sleep(0.1)
    check(any("disconnect-after" in l for l in emu.stderr), "the emulator says the fault dropped it")
    s = samples_of(lines)
    check(len(s) == 100, f"exactly 1 s of samples at 100 Hz before the drop (got {len(s)})")
    host.close()


def case_model_file():
    # A model file as `fit -o` writes it (io/model_file.h): G(s) = 3 exp(-0.05 s)/(s + 2), at
    # rest at the safe value 2 (y = G(0) 2 = 3), stepped to 4 over TCP. Closed form:
    # y(t) = 3 + 1.5 * 2 * (1 - exp(-2 (t - t0 - 0.05))) for t - t0 >= 0.05.
    import json
    model = os.path.join(WORK, "model.json")
    with open(model, "w") as f:
        json.dump({"format": "loopwright-model", "version": 1, "structure": "first order",
                   "tf": {"num": [3.0], "den": [1.0, 2.0], "delay": 0.05}, "parameters": [],
                   "covariance": None,
                   "provenance": {"source": "", "source_sha256": "",
                                  "created": "2026-12-02T03:00:00Z", "tool": "hand",
                                  "command_line": ""}, "details": {}}, f)
    emu = Emulator("--model", model, "--listen", "tcp:127.0.0.1:0", "--rate", "50",
                   "--saturate", "0:10", "--safe", "2", "--speed", "4", "--name", "bench-7")
    host = Host(emu.where)
    host.send("hello 1")
    host.send("go")
    first, _ = collect(host, lambda f: f[0] == "s", timeout=5)
    host.send("u 4")
    lines, bad = collect(host, lambda f: False, timeout=0.8)
    host.close()
    emu.stop()
    caps = [f for f in first if f[0] == "caps"]
    check(caps and caps[0][2:9] == ["1", "20000", "0", "10", "2", "1000", "bench-7"],
          f"caps from the options ({caps})")
    rest = [x for x in samples_of(first + lines) if x[3] == 2.0]
    check(rest and all(abs(x[4] - 3.0) < 1e-9 for x in rest), "at rest at the safe value y = 3")
    stepped = [x for x in samples_of(lines) if x[3] == 4.0]
    check(len(stepped) > 20, f"samples after the step ({len(stepped)})")
    if stepped:
        t0 = stepped[0][1] * 1e-6
        worst = 0.0
        for _, t_us, _, _, y in stepped:
            tau = t_us * 1e-6 - t0 - 0.05
            want = 3.0 + (3.0 * (1.0 - pow(2.718281828459045, -2.0 * tau)) if tau >= 0 else 0.0)
            worst = max(worst, abs(y - want))
        check(worst < 1e-7, f"samples equal the closed form (worst {worst:.3g})")


def case_errors():
    def run(*args):
        p = subprocess.run([BIN, "emulate", *args], capture_output=True, text=True, timeout=30)
        return p.returncode, p.stdout, p.stderr
    cases = [
        (("--pty",), "exactly one plant"),
        (("--plant", "1/(s+1)"), "exactly one of --pty and --listen"),
        (("--plant", "1/(s+1)", "--pty", "--listen", "tcp:127.0.0.1:0"), "exactly one of --pty"),
        (("--scenario", "boiler", "--pty"), "no such scenario"),
        (("--plant", "1/(s+1)", "--pty", "--faults", "drop=2"), "probability"),
        (("--plant", "1/(s+1)", "--listen", "tcp:127.0.0.1:99999"), "expected tcp:ADDRESS:PORT"),
        (("--plant", "1/(s+1)", "--pty", "--speed", "0"), "--speed 0"),
        (("--plant", "1/(s+1)", "--pty", "--saturate", "5:1"), "--saturate '5:1'"),
        (("--plant", "1/(s+1)", "--pty", "--saturate", "0:10", "--safe", "11"), "--safe 11"),
        (("--plant", "(s+1)^2/(s+3)", "--pty"), "improper"),
    ]
    for args, text in cases:
        code, out, err = run(*args)
        check(code == 2, f"emulate {' '.join(args)} exits 2 (got {code})")
        lines = err.strip().splitlines()
        check(len(lines) == 1 and text in err, f"emulate {' '.join(args)}: one sentence with "
              f"{text!r} (got {err.strip()!r})")
        check(out == "", f"emulate {' '.join(args)} prints nothing on stdout")
    # A scenario starts and stops cleanly on SIGINT as on SIGTERM.
    emu = Emulator("--scenario", "conveyor-drive", "--pty", "--speed", "2")
    check(emu.where.startswith("/dev/"), "a scenario serves on a pty")
    emu.proc.send_signal(signal.SIGINT)
    check(emu.proc.wait(timeout=10) == 0, "SIGINT ends the emulator with 0")


CASES = {name[5:]: fn for name, fn in globals().items() if name.startswith("case_")}

if __name__ == "__main__":
    os.makedirs(WORK, exist_ok=True)
    if CASE not in CASES:
        print(f"unknown case {CASE}; known: {sorted(CASES)}")
        sys.exit(2)
    CASES[CASE]()
    if failures:
        print(f"{len(failures)} check(s) failed in {CASE}")
        sys.exit(1)
    print(f"{CASE}: all checks passed")
