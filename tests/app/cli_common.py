"""What the end-to-end scripts tests/app/cli*_test.py share.

Every such script is run as SCRIPT BINARY SOURCE_DIR WORK_DIR CASE (tests/app/*.cmake), imports
this module (it sits beside them, so `import cli_common` finds it), names its cases `case_NAME`
and ends with `cli_common.main(globals())`. A case records each failed expectation with check();
the script then exits 1 and prints them, so one run shows every failure of the case.
"""
import os
import shutil
import subprocess
import sys

if len(sys.argv) < 5:
    sys.exit(f"usage: {os.path.basename(sys.argv[0])} BINARY SOURCE_DIR WORK_DIR CASE")
BIN, SOURCE, WORK, CASE = sys.argv[1:5]
BIN = os.path.abspath(BIN)  # cases may run it from another folder
failures = []


def run(*args, cwd=None, timeout=300, env=None):
    """Runs the binary with args in WORK (or cwd); returns (exit status, stdout, stderr)."""
    p = subprocess.run([BIN, *args], capture_output=True, text=True, cwd=cwd or WORK,
                       timeout=timeout, env=env)
    return p.returncode, p.stdout, p.stderr


def check(cond, what):
    """Records `what` as a failure unless cond holds (the case goes on)."""
    if not cond:
        failures.append(what)
        print("FAIL:", what)


def path(*names):
    """A path inside the case's work folder."""
    return os.path.join(WORK, *names)


def main(namespace, clean=True):
    """Runs case_CASE of the script whose globals() are `namespace` in a fresh WORK (kept as it
    is with clean=False); exit status 0 when every check held, 1 when one failed, 2 for an
    unknown case."""
    cases = {n[5:]: f for n, f in namespace.items() if n.startswith("case_") and callable(f)}
    if CASE not in cases:
        print(f"unknown case {CASE!r}; the cases are {', '.join(sorted(cases))}")
        sys.exit(2)
    if clean:
        shutil.rmtree(WORK, ignore_errors=True)
    os.makedirs(WORK, exist_ok=True)
    cases[CASE]()
    if failures:
        print(f"{len(failures)} check(s) failed in case {CASE}")
        sys.exit(1)
    print(f"case {CASE}: all checks passed")
