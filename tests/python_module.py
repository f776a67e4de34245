#!/usr/bin/env python3
"""The `wayward` Python module against the command-line tool, and the README's Python example.

Usage: python_module.py WAYWARD MODULE_DIR SOURCE_DIR
Each check runs one job both ways on the same input and compares what they wrote (byte for byte) or returned
(equal numbers); errors must be Python exceptions carrying the command's file, line and field; long work must
release the GIL. Then the README's example script runs and its output must equal what the README shows.
"""
import filecmp
import os
import re
import shutil
import subprocess
import sys
import tempfile
import threading
import tomllib

wayward_cli, module_dir, src = (os.path.abspath(p) for p in sys.argv[1:4])
sys.path.insert(0, module_dir)
import numpy as np  # noqa: E402
import wayward  # noqa: E402

failures = []


def check(ok, what):
    print(("ok   " if ok else "FAIL ") + what, flush=True)
    if not ok:
        failures.append(what)


def cli(*args, cwd=None):
    return subprocess.run([wayward_cli, *args], capture_output=True, text=True, cwd=cwd)


quick = os.path.join(src, "scenarios", "quick.toml")
with tempfile.TemporaryDirectory() as work:
    a, b = os.path.join(work, "a"), os.path.join(work, "b")
    # --- new: the same seed gives the same observations and observer track (the brief differs only by the key's
    # random salt, hence its digest).
    r = cli("new", quick, "--seed", "3", "--out", a)
    assert r.returncode == 0, r.stderr
    text = wayward.new_exercise(quick, b, seed=3)
    check(text == r.stdout.replace(a, b), "new_exercise prints what `wayward new` prints")
    for f in ("observations.csv", "observer.csv"):
        check(filecmp.cmp(os.path.join(a, f), os.path.join(b, f), shallow=False), f"new_exercise writes the same {f}")

    # --- From here both run on copies of one exercise, so every file can be compared byte for byte.
    shutil.rmtree(b)
    shutil.rmtree(b + "-answer-key")
    shutil.copytree(a, b)
    shutil.copytree(a + "-answer-key", b + "-answer-key")
    ex = wayward.read_exercise(b)
    obs = ex["observations"]
    check(isinstance(obs["lon_deg"], np.ndarray) and obs["lon_deg"].dtype == np.float64 and len(obs["target"]) == obs["lon_deg"].size,
          f"read_exercise: {obs['lon_deg'].size} observations as float64 arrays")
    check(ex["observer"]["position_au"].shape == (obs["lon_deg"].size, 3), "read_exercise: the observer's track as an (n, 3) array")
    with open(os.path.join(a, "observations.csv")) as fh:
        first = fh.read().splitlines()[1].split(",")
    check(abs(obs["lon_deg"][0] - float(first[3])) == 0.0 and obs["target"][0] == first[2], "read_exercise: the first row as the file has it")

    r = cli("residuals", a, "--quiet")
    res = wayward.fit_residuals(b)
    check(filecmp.cmp(os.path.join(a, "residuals.csv"), os.path.join(b, "residuals.csv"), shallow=False),
          "fit_residuals writes the same residuals.csv as `wayward residuals`")
    check(res["text"] == r.stdout.replace(a, b), "fit_residuals returns the printed text")
    check(isinstance(res["o_c_lon_arcsec"], np.ndarray), "fit_residuals returns the O-C columns as arrays")

    r = cli("solve", a, "--quiet", "--threads", "2")
    assert r.returncode == 0, r.stderr
    sol = wayward.solve(b, threads=1)
    check(filecmp.cmp(os.path.join(a, "solution.toml"), os.path.join(b, "solution.toml"), shallow=False),
          "solve writes the same solution.toml as `wayward solve` (and thread counts do not change it)")
    check(sol.text == r.stdout.replace(a, b), "solve returns the printed text")
    with open(os.path.join(a, "solution.toml"), "rb") as fh:
        want = tomllib.load(fh)
    check(sol.to_dict() == want, "Solution.to_dict() is the solution file")
    pred = want["prediction"]
    p = sol.predict([pred["epoch_year"]])
    check(abs(p["lon_deg"][0] - pred["lon_deg"]) < 1e-9 and abs(p["lat_deg"][0] - pred["lat_deg"]) < 1e-9,
          f"Solution.predict at the solution's epoch gives its point ({p['lon_deg'][0]:.9f}, {p['lat_deg'][0]:.9f})")

    r = cli("score", a)
    sc = wayward.score(b)
    check(filecmp.cmp(os.path.join(a, "luck.csv"), os.path.join(b, "luck.csv"), shallow=False), "score writes the same luck.csv as `wayward score`")
    m = re.search(r"Separation: ([0-9.]+) arcmin", r.stdout)
    check(m is not None and abs(sc["separation_arcmin"] - float(m.group(1))) < 0.01,
          f"score's separation {sc['separation_arcmin']:.3f} arcmin is the one `wayward score` prints")

    r = cli("search", a, "--nights", "5")
    assert r.returncode == 0, r.stderr
    se = wayward.search(b, nights=5)
    check(all(filecmp.cmp(os.path.join(a, "search", f), os.path.join(b, "search", f), shallow=False) for f in ("nights.csv", "plan.csv")),
          "search writes the same search/nights.csv and plan.csv as `wayward search`")
    check(se["text"] == r.stdout.replace(a, b) and se["nights"]["night"].size == 5, "search returns the printed text and the 5 nights")

    # --- Errors: Python exceptions (ValueError) with the command's file, line and field.
    r = cli("solve", os.path.join(work, "none"))
    try:
        wayward.solve(os.path.join(work, "none"))
        check(False, "a missing exercise raises")
    except wayward.InputError as e:
        check(isinstance(e, ValueError) and e.field == "" and e.file.endswith("none/brief.toml") and str(e) in r.stderr,
              f"a missing exercise: wayward.InputError({str(e)!r}), as the command says")
    rec = os.path.join(work, "rec")
    wayward.new_exercise(quick, os.path.join(work, "c"), seed=4, record=rec)
    with open(os.path.join(rec, "positions.csv")) as fh:
        lines = fh.read().splitlines()
    cells = lines[1].split(",")
    cells[3] = "95.0"
    lines[1] = ",".join(cells)
    with open(os.path.join(rec, "positions.csv"), "w") as fh:
        fh.write("\n".join(lines) + "\n")
    try:
        wayward.import_record(rec, os.path.join(work, "d"))
        check(False, "a declination of 95 deg raises")
    except wayward.InputError as e:
        check(e.file.endswith("positions.csv") and e.line == 2 and e.field == "dec", f"a bad record names file, line, field: {e}")
    # An imported record has no truth to rehearse against: search returns the fields' table, as the command writes it.
    rec2, imp = os.path.join(work, "rec2"), os.path.join(work, "imp")
    wayward.new_exercise(quick, os.path.join(work, "c2"), seed=4, record=rec2)
    wayward.import_record(rec2, imp)
    assert cli("solve", imp, "--quiet").returncode == 0
    r = cli("search", imp)
    assert r.returncode == 0, r.stderr
    with open(os.path.join(imp, "search", "fields.csv")) as fh:
        want = [float(row.split(",")[2]) for row in fh.read().splitlines()[1:]]
    fl = wayward.search(imp)
    check("nights" not in fl and list(fl["fields"]["ra_deg"]) == want and len(want) >= 1 and fl["text"] == r.stdout,
          f"search on an imported record returns its {len(want)} fields, as `wayward search` lists them")
    try:
        wayward.solve(b, samples=3)
        check(False, "a bad option raises")
    except ValueError as e:
        check("--samples" in str(e), f"a bad option raises ValueError: {e}")

    # --- The GIL is released in long work: Python keeps running while a solve runs in another thread.
    count = 0
    done = threading.Event()
    t = threading.Thread(target=lambda: (wayward.solve(b, threads=1, out=os.path.join(work, "again.toml")), done.set()))
    t.start()
    while not done.is_set():
        count += 1
    t.join()
    check(count > 10000, f"the main thread ran {count} loop turns while solve ran in another thread")

    # --- A small campaign: the same cases.csv rows as the command's.
    spec = os.path.join(work, "tiny.toml")
    shutil.copy(quick, os.path.join(work, "quick.toml"))
    with open(spec, "w") as fh:
        fh.write('[campaign]\nname = "tiny"\nseed = 5\nseeds = 2\n\n[[scenario]]\nfile = "quick.toml"\nname = "quick"\n\n'
                 '[epochs]\noffsets_years = [0]\n\n[[settings]]\nname = "free"\ndistance = "free"\nsamples = 50\n')
    r = cli("campaign", spec, "--out", os.path.join(work, "camp-cli"), "--quiet", "--threads", "2")
    assert r.returncode == 0, r.stderr
    c = wayward.campaign(spec, os.path.join(work, "camp-py"), threads=1)
    # Every column but the last, unit_seconds (the time the case took), which no two runs share.
    with open(os.path.join(work, "camp-cli", "cases.csv")) as fh:
        want_rows = sorted(row.rsplit(",", 1)[0] for row in fh.read().splitlines()[1:])
    with open(os.path.join(work, "camp-py", "cases.csv")) as fh:
        got_rows = sorted(row.rsplit(",", 1)[0] for row in fh.read().splitlines()[1:])
    check(want_rows == got_rows and len(got_rows) == 2, f"campaign: the same {len(got_rows)} rows of cases.csv as `wayward campaign` (but for the time each took)"
          + ("" if want_rows == got_rows else "\n" + "\n".join(want_rows + got_rows)))
    check(c["cases"]["seed"].size == 2, "campaign returns cases.csv as arrays")

    # --- The README's example script runs, and prints what the README shows.
    with open(os.path.join(src, "README.md"), encoding="utf-8") as fh:
        readme = fh.read()
    script = re.search(r"<!-- python-example -->\n```python\n(.*?)```", readme, re.S)
    shown = re.search(r"<!-- output of the python example -->\n```\n(.*?)```", readme, re.S)
    check(script is not None and shown is not None, "the README has a Python example and its output")
    if script and shown:
        run_dir = os.path.join(work, "readme")
        os.makedirs(run_dir)
        os.symlink(os.path.join(src, "scenarios"), os.path.join(run_dir, "scenarios"))
        env = dict(os.environ, PYTHONPATH=module_dir)
        p = subprocess.run([sys.executable, "-c", script.group(1)], capture_output=True, text=True, cwd=run_dir, env=env)
        check(p.returncode == 0, f"the README's example exits 0 {p.stderr[-400:]}")
        if "--update" in sys.argv[4:]:
            with open(os.path.join(src, "README.md"), "w", encoding="utf-8") as fh:
                fh.write(readme.replace(shown.group(0), "<!-- output of the python example -->\n```\n" + p.stdout + "```"))
            print("rewrote the README's shown output")
        else:
            check(p.stdout == shown.group(1), "the README's example prints what the README shows:\n" + p.stdout)

sys.exit(1 if failures else 0)
