"""Shared by the Python checks in tests/: printed checks that collect their failures, a runner for the wayward
command, and the quick exercise (seed 3) solved with its sky map, which two of the sky-map checks start from."""
import os
import subprocess
import sys

failures = []


def check(ok, what):
    """Prints `ok` or `FAIL` before what was checked; a failure is kept for finish()."""
    print(("ok   " if ok else "FAIL ") + what, flush=True)
    if not ok:
        failures.append(what)


def finish():
    """Exit status 1 if any check failed, else 0."""
    sys.exit(1 if failures else 0)


def runner(wayward):
    """A function that runs `wayward ARGS...` and returns the completed process (text output captured)."""
    def run(*args):
        return subprocess.run([wayward, *args], capture_output=True, text=True)
    return run


def quick_solved_with_sky_map(run, src, work):
    """Makes the quick scenario's exercise with seed 3 in WORK/ex and solves it with --sky-map on 2 threads.
    Returns the exercise folder and the solve's printed output."""
    ex = os.path.join(work, "ex")
    r = run("new", os.path.join(src, "scenarios", "quick.toml"), "--seed", "3", "--out", ex)
    assert r.returncode == 0, r.stderr
    r = run("solve", ex, "--sky-map", "--quiet", "--threads", "2")
    assert r.returncode == 0, r.stderr
    return ex, r.stdout
