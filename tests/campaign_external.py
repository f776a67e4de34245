#!/usr/bin/env python3
"""A team's own solver in a campaign (`external = [...]` settings), against Wayward's own solver on the same cases.

Usage: campaign_external.py WAYWARD SOURCE_DIR
The stand-in team solver (tests/team_solver.py) answers with Wayward's solve, so its rows must agree with the
built-in settings' rows; stated with its ellipse widened twofold its Mahalanobis distances must halve. A program
that fails, one that outlives its timeout, and a spec that mixes an external solver with solver options are
reported as such.
"""
import csv
import math
import os
import shutil
import subprocess
import sys
import tempfile

sys.dont_write_bytecode = True  # no __pycache__ in the source tree
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from check_common import check, finish  # noqa: E402

wayward, src = os.path.abspath(sys.argv[1]), os.path.abspath(sys.argv[2])
team = os.path.join(src, "tests", "team_solver.py")
python = "/usr/bin/python3"


def spec_text(settings):
    return ('[campaign]\nname = "team-check"\nseed = 7\nseeds = 2\n\n[[scenario]]\nfile = "quick.toml"\nname = "quick"\n\n'
            '[epochs]\noffsets_years = [0]\n\n' + settings)


def rows_of(path):
    with open(path) as fh:
        return list(csv.DictReader(fh))


with tempfile.TemporaryDirectory() as work:
    shutil.copy(os.path.join(src, "scenarios", "quick.toml"), work)
    spec = os.path.join(work, "spec.toml")
    with open(spec, "w") as fh:
        fh.write(spec_text(
            '[[settings]]\nname = "wayward"\n\n'
            f'[[settings]]\nname = "team"\nexternal = ["{python}", "{team}", "{wayward}"]\n\n'
            f'[[settings]]\nname = "team-wide"\nexternal = ["{python}", "{team}", "{wayward}", "--widen", "2"]\n\n'
            f'[[settings]]\nname = "team-map"\nexternal = ["{python}", "{team}", "{wayward}", "--sky-map"]\n\n'
            '[[settings]]\nname = "broken"\nexternal = ["false"]\n\n'
            '[[settings]]\nname = "slow"\nexternal = ["sh", "-c", "sleep 30"]\nexternal_timeout_s = 1\n'))
    r = subprocess.run([wayward, "campaign", spec, "--out", os.path.join(work, "out"), "--quiet", "--threads", "2"],
                       capture_output=True, text=True)
    check(r.returncode == 0, f"the campaign runs (exit {r.returncode}) {r.stderr[-300:]}")
    rows = rows_of(os.path.join(work, "out", "cases.csv"))
    by = {(row["seed"], row["settings"]): row for row in rows}
    seeds = sorted({row["seed"] for row in rows})
    check(len(rows) == 12 and len(seeds) == 2, f"{len(rows)} rows: 2 systems x 6 settings")
    for s in seeds:
        w, t, wide = by[(s, "wayward")], by[(s, "team")], by[(s, "team-wide")]
        # The team's solver reads the exercise's files, whose angles carry 1e-9 deg: a few milli-arcseconds apart.
        dsep = abs(float(w["separation_arcmin"]) - float(t["separation_arcmin"]))
        check(t["status"] == "ok" and dsep < 1e-3, f"seed {s}: the team's separation {t['separation_arcmin']} arcmin is Wayward's ({dsep:.1e} apart)")
        m_w, m_t, m_wide = float(w["mahalanobis"]), float(t["mahalanobis"]), float(wide["mahalanobis"])
        check(abs(m_t - m_w) < 1e-3 * m_w, f"seed {s}: its stated ellipse gives Wayward's normalised error ({m_t:.6f} against {m_w:.6f})")
        # cases.csv gives six decimals: each value is rounded by up to 5e-7, half of m_t by up to 2.5e-7.
        check(abs(m_wide - m_t / 2) <= 7.5e-7 + 1e-9 * m_t, f"seed {s}: an ellipse stated twice as wide halves it ({m_wide:.6f})")
        # A stated HEALPix map fills map_rank: the solve's map is its 300 samples' kernel estimate of the same
        # Gaussian, so it ranks the truth near 1 - exp(-m^2/2). Allowed 0.2: the estimate's relative noise
        # sqrt(1 / (4 pi n h^2 f)) (the kernel estimator's variance, Scott 1992, Multivariate Density Estimation,
        # ch. 6; h^2 = n^(-1/3), f in sigma units) is 0.14 at 1 sigma for n = 300, moving the rank by f / f_peak of
        # that, 0.08; and the truth's pixel centre lies up to 0.18 of the minor sigma from it (pixel side <= sigma / 4),
        # which moves a Gaussian rank by up to 0.61 * 0.18 = 0.11.
        tm = by[(s, "team-map")]
        gauss = 1 - math.exp(-0.5 * m_t ** 2)
        check(tm["status"] == "ok" and tm["map_rank"] != "" and abs(float(tm["map_rank"]) - gauss) < 0.2,
              f"seed {s}: the stated map's rank of the truth fills map_rank ({tm['map_rank'] or 'empty'}; the Gaussian's {gauss:.4f})")
        check(by[(s, "team")]["map_rank"] == "", f"seed {s}: a stated ellipse alone leaves map_rank empty")
        check(by[(s, "broken")]["status"] != "ok" and "exited with status 1" in by[(s, "broken")]["note"],
              f"seed {s}: a program that fails is reported: {by[(s, 'broken')]['note'][:80]}")
        check(by[(s, "slow")]["status"] != "ok" and "took longer than external_timeout_s" in by[(s, "slow")]["note"],
              f"seed {s}: a program that outlives its timeout is stopped and reported")
    case_dirs = os.listdir(os.path.join(work, "out", "external"))
    check(all(not os.path.exists(os.path.join(work, "out", "external", d, "answer_key.toml")) for d in case_dirs)
          and not any(d.endswith("-answer-key") for d in case_dirs), "the team's case folders hold no answer key")

    with open(spec, "w") as fh:
        fh.write(spec_text(f'[[settings]]\nname = "team"\nexternal = ["{python}", "{team}"]\nsamples = 100\n'))
    r = subprocess.run([wayward, "campaign", spec, "--out", os.path.join(work, "out2"), "--quiet"], capture_output=True, text=True)
    check(r.returncode == 2 and "samples" in r.stderr and "external solver takes no options" in r.stderr,
          f"solver options beside an external solver are refused: {r.stderr.strip()}")

finish()
