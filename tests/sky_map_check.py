#!/usr/bin/env python3
"""`wayward solve --sky-map` read back by an independent reader (healpy, Debian's python3-healpy).

Usage: sky_map_check.py WAYWARD SOURCE_DIR [PNG]
Makes a quick exercise, solves it with --sky-map, and checks the HEALPix FITS map and the regions CSV against
healpy's reading of the file; a symbolic link planted at skymap.fits must be refused (exit 2) with nothing
written through it. With PNG, also saves a gnomonic view of the map around its peak (to look at).
"""
import csv
import math
import os
import re
import sys
import tempfile
import tomllib

import healpy as hp
import numpy as np

sys.dont_write_bytecode = True  # no __pycache__ in the source tree
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from check_common import check, finish, quick_solved_with_sky_map, runner  # noqa: E402

wayward, src = sys.argv[1], sys.argv[2]
png = sys.argv[3] if len(sys.argv) > 3 else None
run = runner(wayward)


with tempfile.TemporaryDirectory() as work:
    ex, solved = quick_solved_with_sky_map(run, src, work)
    line = next(l for l in solved.splitlines() if l.startswith("Sky map at "))
    print(line)

    # --- The map as healpy reads it (healpy.read_map with nest=None keeps the file's own ordering).
    prob, header = hp.read_map(os.path.join(ex, "skymap.fits"), nest=None, h=True, dtype=np.float64)
    comments = " ".join(str(v) for k, v in header if k == "COMMENT")
    header = dict(header)
    nside = hp.npix2nside(prob.size)
    # HEALPix FITS convention (Gorski et al. 2005; healpy reads ORDERING to decide NESTED or RING).
    check(header.get("ORDERING") == "NESTED", "ORDERING keyword says NESTED (healpy.read_map header)")
    check(header.get("PIXTYPE") == "HEALPIX" and int(header.get("NSIDE", -1)) == nside, "PIXTYPE and NSIDE keywords")
    check(header.get("COORDSYS") == "OBSPLANE", "COORDSYS keyword names the observer's orbital plane")
    check("NOT ICRS" in comments and "orbital plane at epoch 0" in comments, "a header comment says the frame is not ICRS")
    # healpy.read_map: probabilities sum to 1.
    check(abs(prob.sum() - 1.0) < 1e-9 and prob.min() >= 0.0, f"probabilities sum to 1 within 1e-9 (sum - 1 = {prob.sum() - 1:.2e})")

    # --- The peak against the solve's predicted point (healpy.ang2pix, healpy.get_all_neighbours, healpy.rotator.angdist).
    # The map is a kernel density estimate from a few hundred samples: its top is flat over several pixels, and
    # where exactly its highest pixel falls moves with the draws by about n^(-1/6) of the ellipse's minor axis
    # (two to three pixels here; Scott 1992, Multivariate Density Estimation, ch. 6, for the estimate's noise).
    # So "the peak is where the solve says" is read at the resolution the samples support: the predicted point's
    # own pixel holds at least 90 % of the peak probability.
    with open(os.path.join(ex, "solution.toml"), "rb") as fh:
        pred = tomllib.load(fh)["prediction"]
    peak = int(np.argmax(prob))
    peak_lon, peak_lat = hp.pix2ang(nside, peak, nest=True, lonlat=True)
    sep = math.degrees(hp.rotator.angdist([peak_lon, peak_lat], [pred["lon_deg"], pred["lat_deg"]], lonlat=True)[0])
    pixel_deg = math.degrees(hp.nside2resol(nside))
    own = int(hp.ang2pix(nside, pred["lon_deg"], pred["lat_deg"], nest=True, lonlat=True))
    check(prob[own] >= 0.9 * prob[peak], f"the predicted point's pixel holds {prob[own] / prob[peak]:.4f} of the peak (at least 0.9); "
          f"the peak pixel is {sep * 60:.2f} arcmin from the point ({sep / pixel_deg:.2f} pixel sides)")
    # The map's probability-weighted mean direction (healpy.pix2vec) within one pixel side of the predicted point.
    nz = np.nonzero(prob)[0]
    mean = (np.array(hp.pix2vec(nside, nz, nest=True)) * prob[nz]).sum(axis=1)
    mean_lon, mean_lat = hp.vec2ang(mean, lonlat=True)
    msep = math.degrees(hp.rotator.angdist([mean_lon[0], mean_lat[0]], [pred["lon_deg"], pred["lat_deg"]], lonlat=True)[0])
    check(msep <= pixel_deg, f"the map's mean {msep * 60:.2f} arcmin from the predicted point, one pixel is {pixel_deg * 60:.2f} arcmin")

    # --- The 90 % region: healpy's count of the most probable pixels holding 90 %, times healpy.nside2pixarea.
    ranked = np.sort(prob)[::-1]
    n90 = int(np.searchsorted(np.cumsum(ranked), 0.9) + 1)
    area_pix = hp.nside2pixarea(nside, degrees=True)
    area90 = n90 * area_pix
    printed = [float(x) for x in re.search(r"regions (\S+) / (\S+) / (\S+) square degrees", line).groups()]
    with open(os.path.join(ex, "skymap_regions.csv")) as fh:
        rows = list(csv.DictReader(fh))
    csv90 = sum(1 for row in rows if float(row["region"]) <= 90)
    check(abs(csv90 - n90) <= 1, f"90 % region: {csv90} pixels in the CSV, {n90} by healpy")
    # The printed figure has 4 significant digits: within one pixel plus its rounding.
    check(abs(printed[1] - area90) <= area_pix + 5e-4 * area90, f"90 % area printed {printed[1]} deg2, healpy {area90:.4f} deg2")
    check(printed[0] < printed[1] < printed[2], "the 50/90/99 % areas grow")
    # The CSV's pixels are healpy's (healpy.pix2ang of the NESTED index gives the centre it lists).
    first = rows[0]
    lon0, lat0 = hp.pix2ang(nside, int(first["pixel"]), nest=True, lonlat=True)
    check(int(first["pixel"]) == peak and abs(float(first["lon_deg"]) - lon0) < 1e-5 and abs(float(first["lat_deg"]) - lat0) < 1e-5,
          "the CSV's first row is the peak pixel, at healpy's centre")
    check(abs(float(rows[-1]["cumulative"]) - 0.99) < 0.01 + float(rows[-1]["probability"]), "the CSV ends where 99 % is reached")

    # The picture of the map: named in the printed line and a PNG file (its signature, PNG specification 5.2).
    check("skymap.png" in line, "the printed line names skymap.png")
    with open(os.path.join(ex, "skymap.png"), "rb") as fh:
        check(fh.read(8) == b"\x89PNG\r\n\x1a\n", "skymap.png is a PNG file")

    if png:
        import matplotlib
        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
        reso = pixel_deg * 60 / 7  # arcmin per image pixel: a few degrees across, the ellipse filling the middle
        hp.gnomview(prob, nest=True, rot=(peak_lon, peak_lat), xsize=400, reso=reso, title="skymap.fits around its peak")
        hp.projplot(pred["lon_deg"], pred["lat_deg"], "w+", lonlat=True, markersize=12)
        plt.savefig(png, dpi=80)

    # --- The multi-order form of the same map, read by astropy.io.fits (Debian's python3-astropy): NUNIQ cells
    # (UNIQ = 4 * 4^order + NESTED index) whose densities, spread over the flat map's pixels, give it back.
    flat_size = os.path.getsize(os.path.join(ex, "skymap.fits"))
    r = run("solve", ex, "--sky-map", "--sky-map-form", "multiorder", "--quiet", "--threads", "2")
    assert r.returncode == 0, r.stderr
    from astropy.io import fits
    with fits.open(os.path.join(ex, "skymap.fits")) as hdul:
        table, mhead = hdul[1].data, hdul[1].header
        uniq = np.asarray(table["UNIQ"], dtype=np.int64)
        density = np.asarray(table["PROBDENSITY"], dtype=np.float64)
    check(mhead.get("ORDERING") == "NUNIQ" and mhead.get("PIXTYPE") == "HEALPIX" and mhead.get("COORDSYS") == "OBSPLANE",
          "multi-order map: ORDERING NUNIQ, PIXTYPE HEALPIX, the frame named (astropy.io.fits)")
    order = np.floor(np.log2(uniq // 4) / 2).astype(np.int64)
    ipix = uniq - 4 * 4 ** order
    top = int(mhead["MOCORDER"])
    check(hp.order2nside(top) == nside, f"MOCORDER {top} is the flat map's nside {nside}")
    area = np.array([hp.nside2pixarea(hp.order2nside(int(o))) for o in order])
    check(abs((density * area).sum() - 1.0) < 1e-9, f"multi-order probabilities sum to 1 (sum - 1 = {(density * area).sum() - 1:.1e})")
    span = 4 ** (top - order)
    check(int(span.sum()) == prob.size and np.all(np.diff(uniq) > 0), "the cells tile the sky once, each pixel of the flat map in one cell")
    back = np.zeros(prob.size)
    fine_area = hp.nside2pixarea(nside)
    for o, p, d in zip(order, ipix, density):
        first = int(p) * 4 ** (top - int(o))
        back[first:first + 4 ** (top - int(o))] = d * fine_area
    check(np.max(np.abs(back - prob)) <= 1e-12 * prob.max(), "spread back over the flat pixels, it is the flat map (to 1e-12 of its peak)")
    multi_size = os.path.getsize(os.path.join(ex, "skymap.fits"))
    check(multi_size * 10 < flat_size, f"the multi-order file is {multi_size / 1e3:.0f} kB against the flat {flat_size / 1e6:.1f} MB")
    r = run("solve", ex, "--sky-map", "--sky-map-form", "round", "--quiet")
    check(r.returncode == 2 and "--sky-map-form" in r.stderr, f"an unknown form is refused: {r.stderr.strip()}")

    # --- Bad input: a symbolic link at skymap.fits is refused before any work, and nothing is written through it.
    target = os.path.join(work, "elsewhere.fits")
    with open(target, "w") as fh:
        fh.write("untouched")
    os.remove(os.path.join(ex, "skymap.fits"))
    os.symlink(target, os.path.join(ex, "skymap.fits"))
    r = run("solve", ex, "--sky-map", "--quiet")
    check(r.returncode == 2 and "symbolic link" in r.stderr, f"a link at skymap.fits: exit {r.returncode}, {r.stderr.strip()}")
    check(open(target).read() == "untouched" and os.path.islink(os.path.join(ex, "skymap.fits")), "nothing written through the link")
    os.remove(os.path.join(ex, "skymap.fits"))
    r = run("solve", ex, "--sky-map", "--samples", "5", "--quiet")
    check(r.returncode == 2 and "--samples" in r.stderr and not os.path.exists(os.path.join(ex, "skymap.fits")),
          f"too few samples: exit {r.returncode}, {r.stderr.strip()}")
    check(not any(".wayward-tmp-" in f for f in os.listdir(ex)), "no temporaries left in the folder")

    # --- A record in the record form, imported and solved: its map is in ICRS ('C'), as planning software reads it.
    rec, imp = os.path.join(work, "record"), os.path.join(work, "imported")
    r = run("new", os.path.join(src, "scenarios", "quick.toml"), "--seed", "3", "--out", os.path.join(work, "ex2"), "--record", rec)
    assert r.returncode == 0, r.stderr
    r = run("import", rec, "--out", imp)
    assert r.returncode == 0, r.stderr
    r = run("solve", imp, "--sky-map", "--quiet", "--threads", "2")
    assert r.returncode == 0, r.stderr
    m = re.search(r"ICRS \(astrometric\) at \S+ TDB: RA \S+ \((\S+) deg\), Dec \S+ \((\S+) deg\)", r.stdout)
    check(m is not None, "the imported solve prints its pointing in ICRS")
    ra, dec = float(m.group(1)), float(m.group(2))
    prob, header = hp.read_map(os.path.join(imp, "skymap.fits"), nest=None, h=True, dtype=np.float64)
    comments = " ".join(str(v) for k, v in header if k == "COMMENT")
    header = dict(header)
    nside = hp.npix2nside(prob.size)
    check(header.get("COORDSYS") == "C" and "FRAME: ICRS" in comments, "an imported record's map: COORDSYS C (ICRS), said in a comment")
    check(abs(prob.sum() - 1.0) < 1e-9, "its probabilities sum to 1 (healpy.read_map)")
    peak = int(np.argmax(prob))
    own = int(hp.ang2pix(nside, ra, dec, nest=True, lonlat=True))
    check(prob[own] >= 0.9 * prob[peak], f"the printed ICRS pointing's pixel holds {prob[own] / prob[peak]:.4f} of the peak (at least 0.9)")
    with open(os.path.join(imp, "skymap_regions.csv")) as fh:
        rows = list(csv.DictReader(fh))
    lon0, lat0 = hp.pix2ang(nside, int(rows[0]["pixel"]), nest=True, lonlat=True)
    check(abs(float(rows[0]["ra_deg"]) - lon0) < 1e-5 and abs(float(rows[0]["dec_deg"]) - lat0) < 1e-5,
          "its regions CSV lists ra_deg, dec_deg at healpy's pixel centres")

finish()
