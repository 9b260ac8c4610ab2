"""The rig protocol's CRC, number printing and number parsing against Python's standard library.

- CRC: binascii.crc_hqx(data, 0xFFFF) is CRC-CCITT with polynomial 0x1021 and no reflection;
  started at 0xFFFF with no final xor it is CRC-16/CCITT-FALSE (check value 0x29B1).
- Printing: Python's '%.9g' % x follows C's printf %.9g, which the protocol prescribes.
- Parsing: float(text) is correctly rounded, so a strict parser must give the same double.

Usage: rig_protocol_vs_python.py DRIVER
"""
import binascii
import random
import subprocess
import sys


def main():
    driver = sys.argv[1]
    rng = random.Random(20261202)
    commands, expected = [], []

    # CRC of random printable bodies, and of bodies with any byte except newline.
    assert binascii.crc_hqx(b"123456789", 0xFFFF) == 0x29B1  # the published check value
    for i in range(3000):
        n = rng.randrange(0, 190)
        if i % 2:
            body = bytes(rng.randrange(32, 127) for _ in range(n))
        else:
            body = bytes(b for b in (rng.randrange(0, 256) for _ in range(n)) if b not in (10, 13))
        commands.append(b"C " + body)
        expected.append(("crc", body, "%04X" % binascii.crc_hqx(body, 0xFFFF)))

    # %.9g printing of doubles over many magnitudes, with the CRC of the whole body.
    for _ in range(3000):
        x = rng.uniform(-1, 1) * 10 ** rng.uniform(-12, 12)
        if rng.random() < 0.1:
            x = float(rng.randrange(-100000, 100000))
        body = "u 0 " + ("%.9g" % x)
        line = "%s *%04X" % (body, binascii.crc_hqx(body.encode(), 0xFFFF))
        commands.append(("E " + x.hex()).encode())
        expected.append(("encode", x, line))

    # Parsing numbers written in several ways, all of which %.9g-style parsing must accept.
    formats = ["%.9g", "%.17g", "%.3f", "%e", "%.12E", "%d"]
    for _ in range(3000):
        values = []
        texts = []
        for _ in range(3):
            fmt = rng.choice(formats)
            x = rng.uniform(-1, 1) * 10 ** rng.uniform(-8, 8)
            text = fmt % (int(x) if fmt == "%d" else x)
            texts.append(text)
            values.append(float(text))
        t_us = rng.randrange(0, 2 ** 64)
        body = "s %d %d %s" % (rng.randrange(0, 2 ** 32), t_us, " ".join(texts))
        line = "%s *%04X" % (body, binascii.crc_hqx(body.encode(), 0xFFFF))
        commands.append(("P " + line).encode())
        expected.append(("parse", line, (t_us, values)))

    # Lines Python's float() would take but the protocol forbids.
    for bad in ["inf", "nan", "+1", "1_000", " 1", "0x1p3", "1e", "--1", "."]:
        body = "s 1 2 %s 0 0" % bad
        line = "%s *%04X" % (body, binascii.crc_hqx(body.encode(), 0xFFFF))
        commands.append(("P " + line).encode())
        expected.append(("refuse", line, None))

    out = subprocess.run([driver], input=b"\n".join(commands) + b"\n", capture_output=True,
                         check=True).stdout.decode().splitlines()
    assert len(out) == len(expected), (len(out), len(expected))
    failures = 0
    for got, (kind, what, want) in zip(out, expected):
        if kind in ("crc", "encode"):
            ok = got == want
        elif kind == "parse":
            fields = got.split(" ")
            ok = (fields[0] == "ok" and int(fields[1]) == want[0] and
                  [float.fromhex(f) for f in fields[2:]] == want[1])
        else:
            ok = got == "malformed"
        if not ok:
            failures += 1
            if failures <= 10:
                print("MISMATCH %s %r: got %r want %r" % (kind, what, got, want))
    print("rig protocol vs Python: %d checks (CRC %d, %%.9g printing %d, parsing %d, refusals %d), "
          "%d mismatches" % (len(expected), 3000, 3000, 3000, len(expected) - 9000, failures))
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
