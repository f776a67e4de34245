#!/usr/bin/env python3
"""A team's region stated as a HEALPix map (`sky_map = "FILE"` in a prediction file), end to end through `wayward score`.

Usage: stated_sky_map_check.py WAYWARD SOURCE_DIR
1. A solve's own map (`solve --sky-map`, flat and multi-order) stated back gives the rank and field share its
   samples give when stated as samples.
2. Maps of a known Gaussian written by healpy (Debian's python3-healpy) in RING ordering: the truth's rank at
   Mahalanobis distance d is 1 - exp(-d^2/2), and the field's share of a circular Gaussian 1 - exp(-R^2/2 sigma^2).
3. Bad maps are refused with exit status 2, naming the file and the field.
"""
import math
import os
import re
import sys
import tempfile
import tomllib

import healpy as hp
import numpy as np
from astropy.io import fits

sys.dont_write_bytecode = True  # no __pycache__ in the source tree
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from check_common import check, finish, quick_solved_with_sky_map, runner  # noqa: E402

wayward, src = sys.argv[1], sys.argv[2]
run = runner(wayward)


def score(ex, pred_file):
    r = run("score", ex, "--prediction", pred_file)
    assert r.returncode == 0, r.stderr
    m = re.search(r"rank of the truth (\S+)%, the field covered (\S+)%", r.stdout)
    assert m, r.stdout
    return float(m.group(1)) / 100, float(m.group(2)) / 100, r.stdout


def write_prediction(path, lon, lat, epoch, extra):
    with open(path, "w") as fh:
        fh.write(f"lon_deg = {lon!r}\nlat_deg = {lat!r}\nepoch_year = {epoch!r}\n{extra}")


# The largest change of a two-dimensional Gaussian's rank 1 - exp(-d^2/2) per sigma of d: max d exp(-d^2/2) at d = 1.
RANK_SLOPE = math.exp(-0.5)

with tempfile.TemporaryDirectory() as work:
    ex, _ = quick_solved_with_sky_map(run, src, work)
    with open(os.path.join(ex, "solution.toml"), "rb") as fh:
        pred = tomllib.load(fh)["prediction"]
    lon, lat, epoch = pred["lon_deg"], pred["lat_deg"], pred["epoch_year"]

    # --- 1. The solve's own map against its own samples.
    samples = os.path.join(ex, "as_samples.toml")
    weights = pred.get("sample_weight", [1.0] * len(pred["sample_lon_deg"]))
    write_prediction(samples, lon, lat, epoch, f"sample_lon_deg = {pred['sample_lon_deg']!r}\nsample_lat_deg = {pred['sample_lat_deg']!r}\n"
                                               f"sample_weight = {weights!r}\n")
    as_map = os.path.join(ex, "as_map.toml")
    write_prediction(as_map, lon, lat, epoch, 'sky_map = "skymap.fits"\n')
    rank_s, field_s, out = score(ex, samples)
    rank_m, field_m, out_m = score(ex, as_map)
    check("By the stated sky map " in out_m and "skymap.fits" in out_m, "score names the stated map it used")
    m = re.search(r"True position of .* at \S+: λ = (\S+) deg, β = (\S+) deg", out)
    true_lon, true_lat = float(m.group(1)), float(m.group(2))
    flat = hp.read_map(os.path.join(ex, "skymap.fits"), nest=True, dtype=np.float64)
    nside = hp.npix2nside(flat.size)
    own = hp.ang2pix(nside, true_lon, true_lat, nest=True, lonlat=True)
    centre = hp.pix2ang(nside, own, nest=True, lonlat=True)
    offset_arcsec = math.degrees(hp.rotator.angdist([true_lon, true_lat], list(centre), lonlat=True)[0]) * 3600
    sigma_minor = pred["sampled_semi_minor_arcmin"] * 60  # the ellipse the map's nside follows
    # Tolerances. Score ranks samples from 4000 draws of their density and covers the field with 20000 (4 binomial
    # standard errors: 0.032 and 0.014); the map ranks the truth's pixel, whose centre lies `offset` from the truth,
    # which moves a Gaussian rank by at most RANK_SLOPE * offset / sigma_minor; 0.01 for the pixel sums (a Riemann
    # sum of the same kernel density at pixel centres); the printed figures have 0.1 % steps.
    tol_rank = 0.032 + RANK_SLOPE * offset_arcsec / sigma_minor + 0.01 + 0.001
    tol_field = 0.014 + 0.01 + 0.001
    check(abs(rank_m - rank_s) <= tol_rank, f"the solve's map ranks the truth {rank_m:.3f}, its samples {rank_s:.3f} (within {tol_rank:.3f}; "
                                            f"the truth {offset_arcsec:.0f} arcsec from its pixel's centre, sigma_minor {sigma_minor:.0f} arcsec)")
    check(abs(field_m - field_s) <= tol_field, f"the field covers {field_m:.3f} of the map, {field_s:.3f} of the samples (within {tol_field:.3f})")
    r = run("solve", ex, "--sky-map", "--sky-map-form", "multiorder", "--quiet", "--threads", "2")
    assert r.returncode == 0, r.stderr
    rank_mo, field_mo, _ = score(ex, as_map)
    check((rank_mo, field_mo) == (rank_m, field_m), f"the multi-order file of the same map gives the same figures ({rank_mo:.3f}, {field_mo:.3f})")

    # --- 2. healpy's maps of a known Gaussian, in RING order, in the exercise's own frame (COORDSYS 'OBSPLANE').
    field_deg = float(re.search(r"field radius (\S+) arcmin", out).group(1)) / 60
    nside = 512
    plon, plat = hp.pix2ang(nside, np.arange(hp.nside2npix(nside)), lonlat=True)  # RING order (healpy.pix2ang)
    scale = math.cos(math.radians(true_lat))

    def gaussian_map(name, lon0, lat0, s_major, s_minor, tilt_deg, coord="OBSPLANE"):
        # The Gaussian in the tangent coordinates (Δλ cos β_truth, Δβ) in degrees, axes tilted from +λ towards +β.
        x = ((plon - lon0 + 180.0) % 360.0 - 180.0) * scale
        y = plat - lat0
        c, s = math.cos(math.radians(tilt_deg)), math.sin(math.radians(tilt_deg))
        u, v = x * c + y * s, -x * s + y * c
        m = np.exp(-0.5 * ((u / s_major) ** 2 + (v / s_minor) ** 2))
        path = os.path.join(ex, name)
        hp.write_map(path, m / m.sum(), nest=False, column_names=["PROB"], extra_header=[("COORDSYS", coord)], overwrite=True)
        return path

    s_major, s_minor, tilt = 4.0, 2.0, 30.0
    # The truth's pixel at this nside: its centre's offset bounds the rank's error as above.
    tc = hp.pix2ang(nside, hp.ang2pix(nside, true_lon, true_lat, lonlat=True), lonlat=True)
    off = math.degrees(hp.rotator.angdist([true_lon, true_lat], list(tc), lonlat=True)[0])
    for d in (0.5, 1.0, 2.0, 3.0):
        # The centre placed so that the truth lies d sigmas out, 40 deg from the major axis in the ellipse's frame.
        u, v = d * math.cos(math.radians(40)) * s_major, d * math.sin(math.radians(40)) * s_minor
        c, s = math.cos(math.radians(tilt)), math.sin(math.radians(tilt))
        x, y = u * c - v * s, u * s + v * c
        lon0, lat0 = true_lon - x / scale, true_lat - y
        gaussian_map(f"gauss_{d}.fits", lon0, lat0, s_major, s_minor, tilt)
        p = os.path.join(ex, f"gauss_{d}.toml")
        write_prediction(p, lon0, lat0, epoch, f'sky_map = "gauss_{d}.fits"\n')
        rank, _, _ = score(ex, p)
        expected = 1 - math.exp(-0.5 * d * d)  # the highest-density region of a 2-D Gaussian through d sigmas (standard result)
        # The truth's pixel centre is `off` from it (rank moves by at most RANK_SLOPE per sigma), the pixel sum of a
        # smooth density 0.005, the printed figure 0.001.
        tol = RANK_SLOPE * off / s_minor + 0.005 + 0.001
        check(abs(rank - expected) <= tol, f"healpy's RING Gaussian map: the truth at d = {d} ranks {rank:.3f}, 1 - exp(-d^2/2) = {expected:.3f} "
                                           f"(within {tol:.3f})")
    # A circular Gaussian of sigma R / 1.5 about the stated point: the field holds 1 - exp(-1.5^2 / 2) (standard result).
    sigma = field_deg / 1.5
    gaussian_map("gauss_round.fits", true_lon, true_lat, sigma, sigma, 0.0)
    p = os.path.join(ex, "gauss_round.toml")
    write_prediction(p, true_lon, true_lat, epoch, 'sky_map = "gauss_round.fits"\n')
    rank, field, _ = score(ex, p)
    expected = 1 - math.exp(-0.5 * 1.5 ** 2)
    # Pixels whose centres lie inside the field count whole: with a pixel side of 1/20 of R, the half-pixel ring at
    # the edge holds 2 % of the probability, gained and lost about equally; 0.01 allowed.
    check(abs(field - expected) <= 0.01, f"healpy's round Gaussian: the field of radius {field_deg} deg covers {field:.3f}, "
                                         f"1 - exp(-R^2/2 sigma^2) = {expected:.3f}")
    check(rank <= RANK_SLOPE * off / sigma + 0.005 + 0.001, f"the truth at the peak ranks {rank:.3f}")

    # --- 3. Bad maps: exit status 2, the file and the field named, nothing scored.
    def refused(name, field, why):
        p = os.path.join(ex, "bad.toml")
        write_prediction(p, true_lon, true_lat, epoch, f'sky_map = "{name}"\n')
        r = run("score", ex, "--prediction", p)
        check(r.returncode == 2 and name in r.stderr and field in r.stderr and "Traceback" not in r.stderr,
              f"{why}: exit {r.returncode}, {r.stderr.strip()}")

    def healpy_map(name, values, **kw):
        hp.write_map(os.path.join(ex, name), values, nest=False, column_names=["PROB"], overwrite=True,
                     extra_header=kw.pop("extra", [("COORDSYS", "OBSPLANE")]), **kw)

    base = np.full(hp.nside2npix(4), 1.0)
    bad = base.copy(); bad[5] = np.nan
    healpy_map("nan.fits", bad)
    refused("nan.fits", "PROB", "a NaN pixel")
    bad = base.copy(); bad[7] = hp.UNSEEN
    healpy_map("negative.fits", bad)
    refused("negative.fits", "PROB", "a negative (UNSEEN) pixel")
    healpy_map("zero.fits", np.zeros_like(base))
    refused("zero.fits", "PROB", "an all-zero map")
    healpy_map("galactic.fits", base, extra=[("COORDSYS", "G")])
    refused("galactic.fits", "COORDSYS", "a map in another frame")
    hp.write_map(os.path.join(ex, "noframe.fits"), base, column_names=["PROB"], overwrite=True)
    refused("noframe.fits", "COORDSYS", "a map that does not say its frame")
    fits.HDUList([fits.PrimaryHDU(), fits.ImageHDU(np.ones((4, 4)))]).writeto(os.path.join(ex, "image.fits"), overwrite=True)
    refused("image.fits", "HDU 2", "an image where a table belongs (astropy.io.fits)")
    fits.PrimaryHDU(np.ones((4, 4))).writeto(os.path.join(ex, "primary.fits"), overwrite=True)
    refused("primary.fits", "HDU 2", "a file with no extension")

    def table(name, cols, **header):
        h = fits.BinTableHDU.from_columns(cols)
        for k, v in header.items():
            h.header[k] = v
        fits.HDUList([fits.PrimaryHDU(), h]).writeto(os.path.join(ex, name), overwrite=True)

    hp_keys = dict(PIXTYPE="HEALPIX", COORDSYS="OBSPLANE", INDXSCHM="IMPLICIT")
    table("huge.fits", [fits.Column(name="PROB", format="D", array=np.ones(12))], ORDERING="RING", NSIDE=8192, **hp_keys)
    refused("huge.fits", "NSIDE", "an nside beyond the cap")
    table("short.fits", [fits.Column(name="PROB", format="D", array=np.ones(100))], ORDERING="RING", NSIDE=4, **hp_keys)
    refused("short.fits", "PROB", "a column of the wrong length")
    table("ordering.fits", [fits.Column(name="PROB", format="D", array=np.ones(192))], ORDERING="SPIRAL", NSIDE=4, **hp_keys)
    refused("ordering.fits", "ORDERING", "an unknown ordering")
    table("empty.fits", [fits.Column(name="UNIQ", format="K", array=np.zeros(0, dtype=np.int64)),
                         fits.Column(name="PROBDENSITY", format="D", array=np.zeros(0))], ORDERING="NUNIQ", **hp_keys)
    refused("empty.fits", "PROBDENSITY", "an empty multi-order map")
    # Order 0 pixel 0 (UNIQ 4) and order 1 pixel 0 (UNIQ 16) cover the same sky.
    table("overlap.fits", [fits.Column(name="UNIQ", format="K", array=np.array([4, 16], dtype=np.int64)),
                           fits.Column(name="PROBDENSITY", format="D", array=np.array([1.0, 1.0]))], ORDERING="NUNIQ", **hp_keys)
    refused("overlap.fits", "UNIQ", "overlapping multi-order cells")
    refused("absent.fits", "sky_map", "a missing file")
    # A header card with bytes outside printable ASCII (FITS Standard 4.0, 4.1.1 forbids them; Debian's cfitsio
    # 4.2.0 overflows a buffer on such a table header, so they are refused before cfitsio reads it).
    with open(os.path.join(ex, "nan.fits"), "rb") as fh:
        raw = bytearray(fh.read())
    at = raw.index(b"TTYPE1  =") + 11
    raw[at:at + 4] = b"\xd7\xd7\xd7\xd7"
    with open(os.path.join(ex, "not_ascii.fits"), "wb") as fh:
        fh.write(raw)
    refused("not_ascii.fits", "HDU 2", "a header card that is not ASCII")

finish()
