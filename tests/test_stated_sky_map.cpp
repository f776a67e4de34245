// A team's region stated as a HEALPix map: a map written by our own writer from a cloud of weighted directions (as
// `solve --sky-map` writes it) and stated back gives the rank and field share the same directions give through
// their kernel density; flat and multi-order files agree; a map in ICRS is rotated into the fitting frame; maps in
// the wrong frame, missing files and file names a FITS reader would reinterpret are refused by name. (Maps written
// by healpy, and bad files, are checked end to end by tests/stated_sky_map_check.py.)
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <functional>
#include <fstream>
#include <string>
#include <vector>

#include <unistd.h>

#include <healpix_cxx/healpix_base.h>

#include "sim/base/errors.hpp"
#include "sim/base/random.hpp"
#include "sim/base/units.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/predict/region_density.hpp"
#include "sim/predict/sky_map.hpp"
#include "sim/record/sky_frames.hpp"
#include "sim/report/sky_map_file.hpp"
#include "sim/score/stated_prediction.hpp"
#include "sim/score/stated_sky_map.hpp"

using namespace wayward;
namespace fs = std::filesystem;

namespace {

fs::path scratch(const std::string& name) {
    const fs::path p = fs::temp_directory_path() / ("wayward-stated-map-" + name + "-" + std::to_string(::getpid()));
    fs::remove_all(p);
    fs::create_directories(p);
    return p;
}

// A tilted Gaussian cloud about (lon0, lat0): 1-sigma axes 1.5 and 0.6 deg, the major axis 30 deg from +lambda,
// with unequal weights (as a solve's importance weights are), in the fitting frame.
constexpr double lon0 = 1.0, lat0 = 0.1, major = 1.5 * deg, minor = 0.6 * deg, tilt = 30.0 * deg;

std::vector<SkySample> cloud(int n) {
    Rng rng = make_rng(21, "stated map cloud");
    std::vector<SkySample> s;
    for (int k = 0; k < n; ++k) {
        const double u = normal(rng, 0.0, major), v = normal(rng, 0.0, minor);
        const double x = u * std::cos(tilt) - v * std::sin(tilt), y = u * std::sin(tilt) + v * std::cos(tilt);
        s.push_back({lon0 + x / std::cos(lat0), lat0 + y, 0.5 + uniform01(rng)});
    }
    return s;
}

// The point d sigmas from the centre along the major (axis 0) or minor (axis 1) axis.
void along(int axis, double d, double& lon, double& lat) {
    const double u = axis == 0 ? d * major : 0.0, v = axis == 1 ? d * minor : 0.0;
    lon = lon0 + (u * std::cos(tilt) - v * std::sin(tilt)) / std::cos(lat0);
    lat = lat0 + u * std::sin(tilt) + v * std::cos(tilt);
}

// The direction moved to the centre of its map pixel (NESTED, at nside), in a frame `to_map` turns the fitting
// frame into; the centre is returned in the fitting frame. A map cannot tell places inside one pixel apart, so a
// map and the samples' density are compared at pixel centres.
void to_pixel_centre(int nside, const Eigen::Matrix3d& to_map, double& lon, double& lat) {
    const SkyPosition q = to_sky(to_map * unit_vector(lon, lat));
    const std::int64_t pixel = Healpix_Base2(nside, NEST, SET_NSIDE).ang2pix(pointing(pi / 2 - q.lat, q.lon));
    double clon = 0, clat = 0;
    sky_map_pixel_centre(nside, pixel, clon, clat);
    const SkyPosition back = to_sky(to_map.transpose() * unit_vector(clon, clat));
    lon = back.lon;
    lat = back.lat;
}

// Tolerances of a map against its samples' density (score's SampledRegion). The samples' figures are estimates
// from draws: 4 standard errors of a binomial share, at most 4 * 0.5 / sqrt(4000) = 0.032 for a rank and
// 4 * 0.5 / sqrt(20000) = 0.014 for a circle's mass. The map's own are sums over pixels of the same kernel density
// evaluated at pixel centres (pixel side at most a quarter of the minor sigma, by the nside rule): 0.01 more for
// that (a Riemann sum of a smooth density whose level set and circle edges cut pixels, gaining and losing about
// equally).
constexpr double rank_tolerance = 0.032 + 0.01, mass_tolerance = 0.014 + 0.01;

// The map's rank and field share against the samples' at points along both axes and circles about the centre.
void compare_with_samples(const RegionDensity& map, const std::vector<SkySample>& s, int nside, const Eigen::Matrix3d& to_map) {
    const SampledRegion sampled(s, 4000, 20000);  // what score uses for samples
    Rng rng = make_rng(3, "stated map draws");
    for (int axis : {0, 1})
        for (double d : {0.5, 1.0, 2.0}) {
            double lon = 0, lat = 0;
            along(axis, d, lon, lat);
            to_pixel_centre(nside, to_map, lon, lat);
            const double by_map = map.rank_of(lon, lat, rng), by_samples = sampled.rank_of(lon, lat, rng);
            CAPTURE(axis);
            CAPTURE(d);
            CAPTURE(by_map);
            CAPTURE(by_samples);
            CHECK(std::abs(by_map - by_samples) < rank_tolerance);
        }
    for (double r_deg : {0.5, 1.0, 2.0, 4.0}) {
        const double by_map = map.mass_within(lon0, lat0, r_deg * deg, rng), by_samples = sampled.mass_within(lon0, lat0, r_deg * deg, rng);
        CAPTURE(r_deg);
        CAPTURE(by_map);
        CAPTURE(by_samples);
        CHECK(std::abs(by_map - by_samples) < mass_tolerance);
    }
}

std::string write_map(const fs::path& dir, const std::string& name, const std::vector<SkySample>& s, bool icrs, SkyMapForm form) {
    const SkyMap map = make_sky_map(s, sky_map_nside(minor / arcsec));
    const std::string path = (dir / name).string();
    write_sky_map_fits(path, map, {"stated-map test", 2000.0, static_cast<int>(s.size()), icrs}, form);
    return path;
}

std::string field_of(const std::function<void()>& f) {
    try {
        f();
    } catch (const InputError& e) {
        return e.field() + " @ " + fs::path(e.file()).filename().string();
    }
    return "(accepted)";
}

}  // namespace

TEST_CASE("stated sky map: our own map stated back ranks and covers as its samples' density does") {
    const fs::path dir = scratch("own");
    const std::vector<SkySample> s = cloud(1500);
    const std::string fits = write_map(dir, "map.fits", s, false, SkyMapForm::flat);
    {
        std::ofstream(dir / "pred.toml") << "lon_deg = " << lon0 / deg << "\nlat_deg = " << lat0 / deg << "\nepoch_year = 2000.0\nsky_map = \"map.fits\"\n";
    }
    const std::string pred = (dir / "pred.toml").string();
    const std::vector<Prediction> p = parse_stated_predictions(detail::read_text_file(pred), pred);
    REQUIRE(p.size() == 1);
    REQUIRE(p[0].stated_map);
    CHECK(p[0].stated_map_file == fits);
    CHECK_FALSE(samples_describe_region(p[0]));
    const RegionDensity& map = *p[0].stated_map;
    compare_with_samples(map, s, sky_map_nside(minor / arcsec), Eigen::Matrix3d::Identity());
    Rng rng = make_rng(3, "unused");
    // The far sky ranks 1 (no pixel there holds anything); the whole sky holds everything.
    double far_lon = 0, far_lat = 0;
    along(0, 12.0, far_lon, far_lat);
    CHECK(map.rank_of(far_lon, far_lat, rng) == doctest::Approx(1.0).epsilon(1e-12));
    CHECK(map.mass_within(lon0, lat0, pi, rng) == doctest::Approx(1.0).epsilon(1e-12));
    fs::remove_all(dir);
}

TEST_CASE("stated sky map: flat and multi-order files of one map give the same figures") {
    const fs::path dir = scratch("forms");
    const std::vector<SkySample> s = cloud(400);
    const auto flat = read_stated_sky_map(write_map(dir, "flat.fits", s, false, SkyMapForm::flat), nullptr);
    const auto multi = read_stated_sky_map(write_map(dir, "multi.fits", s, false, SkyMapForm::multi_order), nullptr);
    CHECK(flat->cells() == multi->cells());  // the empty sky's coarse cells hold nothing and are left out
    Rng rng = make_rng(4, "unused");
    for (double d : {0.0, 0.7, 1.5, 2.5}) {
        double lon = 0, lat = 0;
        along(0, d, lon, lat);
        CHECK(flat->rank_of(lon, lat, rng) == doctest::Approx(multi->rank_of(lon, lat, rng)).epsilon(1e-12));
        CHECK(flat->mass_within(lon, lat, 1.0 * deg, rng) == doctest::Approx(multi->mass_within(lon, lat, 1.0 * deg, rng)).epsilon(1e-12));
    }
    fs::remove_all(dir);
}

TEST_CASE("stated sky map: a map in ICRS is read in the fitting frame, and the frame must be the one stated") {
    const fs::path dir = scratch("icrs");
    const std::vector<SkySample> s = cloud(800);
    // A record's fitting frame is a rotation of ICRS; the ecliptic of J2000 (ERFA's eraEcm06) stands in for it.
    const Eigen::Matrix3d to_fitting = icrs_to_ecliptic_j2000();
    std::vector<SkySample> in_icrs = s;
    for (SkySample& x : in_icrs) {
        const SkyPosition q = to_sky(to_fitting.transpose() * unit_vector(x.lon, x.lat));
        x.lon = q.lon;
        x.lat = q.lat;
    }
    const std::string icrs_file = write_map(dir, "icrs.fits", in_icrs, true, SkyMapForm::flat);
    const std::string own_file = write_map(dir, "own.fits", s, false, SkyMapForm::flat);
    const auto icrs = read_stated_sky_map(icrs_file, &to_fitting);
    // Compared with the samples in the fitting frame at the ICRS map's own pixel centres: the same tolerances.
    compare_with_samples(*icrs, s, sky_map_nside(minor / arcsec), to_fitting.transpose());
    // The frame must be the one the exercise says: an ICRS map for an invented exercise, or the exercise's own
    // frame for an imported one, is refused naming the card.
    CHECK(field_of([&] { (void)read_stated_sky_map(icrs_file, nullptr); }) == "COORDSYS @ icrs.fits");
    CHECK(field_of([&] { (void)read_stated_sky_map(own_file, &to_fitting); }) == "COORDSYS @ own.fits");
    fs::remove_all(dir);
}

TEST_CASE("stated sky map: missing files, reinterpreted names and a map beside samples are refused by field") {
    const fs::path dir = scratch("bad");
    const std::vector<SkySample> s = cloud(200);
    (void)write_map(dir, "map.fits", s, false, SkyMapForm::flat);
    { std::ofstream(dir / "text.fits") << "not a FITS file\n"; }
    const std::string head = "lon_deg = 57.3\nlat_deg = 5.7\nepoch_year = 2000.0\n";
    auto refused = [&](const std::string& body) {
        std::ofstream(dir / "p.toml") << head << body;
        const std::string pred = (dir / "p.toml").string();
        return field_of([&] { (void)parse_stated_predictions(detail::read_text_file(pred), pred); });
    };
    CHECK(refused("sky_map = \"map.fits\"\n") == "(accepted)");
    CHECK(refused("sky_map = \"absent.fits\"\n") == "sky_map @ absent.fits");
    CHECK(refused("sky_map = \"map.fits[1]\"\n") == "sky_map @ map.fits[1]");      // cfitsio would open HDU 1 of map.fits
    CHECK(refused("sky_map = \"text.fits\"\n") == "HDU 1 @ text.fits");
    CHECK(refused("sky_map = \"\"\n") == "sky_map @ p.toml");
    CHECK(refused("sky_map = \"map.fits\"\nsample_lon_deg = [57.0]\nsample_lat_deg = [5.0]\n") == "sky_map @ p.toml");
    fs::remove_all(dir);
}

TEST_CASE("stated sky map: multi-order cells of very different orders rank by density and cover by their centres") {
    // One cell at order 29 (a fraction of a milliarcsecond) and one at order 2 (15 deg), half the probability each.
    const Healpix_Base2 fine(29, NEST), coarse(2, NEST);
    const std::int64_t fine_pixel = fine.ang2pix(pointing(pi / 2 - lat0, lon0));
    double far_lon = 0, far_lat = 0;
    along(0, 40.0, far_lon, far_lat);  // 60 deg away along the major axis
    const std::int64_t coarse_pixel = coarse.ang2pix(pointing(pi / 2 - far_lat, far_lon));
    const PixelMapRegion map({{29, fine_pixel, 0.5}, {2, coarse_pixel, 0.5}}, Eigen::Matrix3d::Identity());
    Rng rng = make_rng(6, "unused");
    CHECK(map.rank_of(lon0, lat0, rng) == 0.0);                    // the fine cell is by far the denser
    CHECK(map.rank_of(far_lon, far_lat, rng) == doctest::Approx(0.5));
    CHECK(map.rank_of(lon0 + pi, -lat0, rng) == doctest::Approx(1.0));  // in no cell
    CHECK(map.mass_within(lon0, lat0, 2.0 * deg, rng) == doctest::Approx(0.5));  // the fine cell's centre only
    const vec3 c = coarse.pix2vec(coarse_pixel);
    const pointing cp(c);
    CHECK(map.mass_within(cp.phi, pi / 2 - cp.theta, 1e-3 * deg, rng) == doctest::Approx(0.5));  // a field on the coarse cell's centre
    CHECK(map.cells() == 2);
}
