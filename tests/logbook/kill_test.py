#!/usr/bin/env python3
"""The logbook survives SIGKILL of its writer: kill_test.py CRASH_HELPER WORK_DIR.

Several rounds: a writer (crash_helper write) adds results of about 20 kB each in a loop and
prints "committed N" after each one returns; after a random while it is killed with SIGKILL, most
likely in the middle of a transaction. In some rounds a reader (crash_helper read) reads the whole
logbook again and again while the writer writes, and must see only complete results.
After each kill the file is opened with Python's own sqlite3 module (not loopwright's code) and
must pass PRAGMA integrity_check, hold every result the writer reported committed (ids 1..N
without gaps, each with its 3 recordings and 3 parameters, the summary intact) and no partial
result: at most one more result than reported (committed, killed before it could print).
"""
import json
import os
import random
import shutil
import signal
import sqlite3
import subprocess
import sys
import threading
import time

HELPER, WORK = sys.argv[1:3]
failures = []


def check(cond, what):
    if not cond:
        failures.append(what)
        print("FAIL:", what)


def collect(stream, lines):
    for line in stream:
        lines.append(line.strip())


shutil.rmtree(WORK, ignore_errors=True)
os.makedirs(WORK)
db = os.path.join(WORK, "logbook.sqlite")
subprocess.run([HELPER, "create", db], check=True, timeout=30)
rng = random.Random(20261202)
last_committed = 0
for round_no in range(8):
    writer = subprocess.Popen([HELPER, "write", db], stdout=subprocess.PIPE, text=True)
    lines = []
    t = threading.Thread(target=collect, args=(writer.stdout, lines))
    t.start()
    reader = None
    if round_no % 2 == 0:
        reader = subprocess.Popen([HELPER, "read", db, "1.5"], stdout=subprocess.PIPE,
                                  stderr=subprocess.PIPE, text=True)
    # Let it commit a few results, then kill it at a random moment.
    deadline = time.time() + 30
    while len(lines) < 3 and time.time() < deadline and writer.poll() is None:
        time.sleep(0.01)
    time.sleep(rng.uniform(0.0, 0.4))
    check(writer.poll() is None, f"round {round_no}: the writer was still running when killed")
    os.kill(writer.pid, signal.SIGKILL)
    writer.wait()
    t.join()
    check(writer.returncode == -signal.SIGKILL, f"round {round_no}: writer died of SIGKILL")
    committed = [int(l.split()[1]) for l in lines if l.startswith("committed ")]
    check(len(committed) >= 3, f"round {round_no}: the writer committed at least 3 results")
    if committed:
        check(committed[0] == last_committed + 1,
              f"round {round_no}: the writer went on right after the results in the file")
        last_committed = committed[-1]
    if reader is not None:
        out, err = reader.communicate(timeout=60)
        check(reader.returncode == 0, f"round {round_no}: concurrent reader succeeded ({err.strip()})")
        fields = out.split()
        check(len(fields) == 4 and int(fields[1]) > 0 and int(fields[3]) > 0,
              f"round {round_no}: the reader read while the writer wrote ({out.strip()})")

    con = sqlite3.connect(db)
    try:
        check(con.execute("PRAGMA integrity_check").fetchone()[0] == "ok",
              f"round {round_no}: PRAGMA integrity_check is ok")
        check(con.execute("PRAGMA journal_mode").fetchone()[0] == "wal", "the logbook is in WAL mode")
        check(con.execute("PRAGMA user_version").fetchone()[0] == 1, "schema version 1")
        ids = [r[0] for r in con.execute("SELECT id FROM results ORDER BY id")]
        check(ids == list(range(1, len(ids) + 1)), f"round {round_no}: result ids have no gaps")
        check(last_committed <= len(ids) <= last_committed + 1,
              f"round {round_no}: {len(ids)} results for {last_committed} reported committed")
        for rid, summary in con.execute("SELECT id, summary FROM results"):
            s = json.loads(summary)
            if s.get("seq") != rid or len(s.get("pad", "")) != 20000:
                check(False, f"round {round_no}: result {rid} has its summary intact")
                break
        per_result = dict(con.execute(
            "SELECT result_id, count(*) FROM parameters GROUP BY result_id").fetchall())
        links = dict(con.execute(
            "SELECT result_id, count(*) FROM result_recordings GROUP BY result_id").fetchall())
        check(all(per_result.get(i) == 3 for i in ids) and len(per_result) == len(ids),
              f"round {round_no}: every result has exactly its 3 parameters")
        check(all(links.get(i) == 3 for i in ids) and len(links) == len(ids),
              f"round {round_no}: every result has exactly its 3 recordings")
        n_recordings = con.execute("SELECT count(*) FROM recordings").fetchone()[0]
        check(n_recordings == 3 * len(ids), f"round {round_no}: no orphan recordings")
        # The next writer goes on after what is in the file (one more when the kill came
        # between its commit and its print).
        last_committed = len(ids)
    finally:
        con.close()
    print(f"round {round_no}: {len(committed)} reported this round, {last_committed} in the logbook")

if failures:
    print(f"{len(failures)} failure(s)")
    sys.exit(1)
print("ok")
