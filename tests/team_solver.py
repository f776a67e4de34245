#!/usr/bin/env python3
"""A stand-in for a team's own solver, for the campaign tests: `team_solver.py WAYWARD [--widen F] [--sky-map] CASE_DIR`.

It solves the case's exercise with Wayward's command-line tool (so its answers are known) and states the
prediction the way any program would: prediction.toml with lon_deg, lat_deg, epoch_year and a 1-sigma ellipse,
the ellipse's axes multiplied by F (default 1) to play a team that over- or understates its uncertainty; with
--sky-map, also the solve's HEALPix map (skymap.fits beside it) as the region.
"""
import subprocess
import sys
import tomllib

wayward, case = sys.argv[1], sys.argv[-1]
widen = float(sys.argv[sys.argv.index("--widen") + 1]) if "--widen" in sys.argv else 1.0
sky_map = "--sky-map" in sys.argv
subprocess.run([wayward, "solve", case, "--quiet", "--threads", "1", "--point-anyway"] + (["--sky-map"] if sky_map else []), check=True,
               stdout=subprocess.DEVNULL)
with open(case + "/solution.toml", "rb") as fh:
    p = tomllib.load(fh)["prediction"]
# The solution's orientation runs from +lambda towards +beta; a position angle from +beta through +lambda.
pa = (90.0 - p["orientation_deg"]) % 180.0
with open(case + "/prediction.toml", "w") as fh:
    fh.write(f"[[prediction]]\nlon_deg = {p['lon_deg']!r}\nlat_deg = {p['lat_deg']!r}\nepoch_year = {p['epoch_year']!r}\n"
             f"sigma_major_arcmin = {p['semi_major_arcmin'] * widen!r}\nsigma_minor_arcmin = {p['semi_minor_arcmin'] * widen!r}\n"
             f"position_angle_deg = {pa!r}\n" + ('sky_map = "skymap.fits"\n' if sky_map else ""))
