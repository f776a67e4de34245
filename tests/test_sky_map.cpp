// The sky map from weighted directions: the resolution rule, a Gaussian cloud's highest-probability areas against
// the closed form, weights honoured, and bad input refused. (The FITS file itself is read back by healpy in
// tests/sky_map_check.py.)
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>
#include <limits>
#include <vector>

#include <unistd.h>

#include "sim/base/errors.hpp"
#include "sim/base/random.hpp"
#include "sim/base/units.hpp"
#include "sim/io/fileio.hpp"
#include "sim/predict/sky_map.hpp"

using namespace wayward;

namespace {

double separation(double lon1, double lat1, double lon2, double lat2) {
    const double c = std::sin(lat1) * std::sin(lat2) + std::cos(lat1) * std::cos(lat2) * std::cos(lon1 - lon2);
    return std::acos(std::clamp(c, -1.0, 1.0));
}

// Probability of the map's pixels whose centres lie within `radius` of (lon, lat).
double probability_within(const SkyMap& m, double lon, double lat, double radius) {
    double p = 0.0;
    for (std::size_t k = 0; k < m.probability.size(); ++k) {
        if (m.probability[k] == 0.0) continue;
        double l = 0, b = 0;
        sky_map_pixel_centre(m.nside, static_cast<std::int64_t>(k), l, b);
        if (separation(l, b, lon, lat) <= radius) p += m.probability[k];
    }
    return p;
}

// A Gaussian cloud in the tangent plane at (lon0, lat0): axes a, b (radians), the major axis at `angle` from +λ.
std::vector<SkySample> gaussian_cloud(int n, double lon0, double lat0, double a, double b, double angle, std::uint64_t seed) {
    Rng rng = make_rng(seed, "sky-map-test");
    std::vector<SkySample> s;
    for (int k = 0; k < n; ++k) {
        const double u = normal(rng) * a, v = normal(rng) * b;
        const double x = u * std::cos(angle) - v * std::sin(angle), y = u * std::sin(angle) + v * std::cos(angle);
        s.push_back({lon0 + x / std::cos(lat0), lat0 + y, 1.0});
    }
    return s;
}

}  // namespace

TEST_CASE("sky map resolution: pixels at most a quarter of the minor axis, the coarsest such, capped") {
    for (double minor_arcsec : {20000.0, 3600.0, 600.0, 60.0}) {
        const int nside = sky_map_nside(minor_arcsec);
        CHECK((nside & (nside - 1)) == 0);
        if (nside < max_sky_map_nside) CHECK(sky_map_pixel_arcmin(nside) * 60.0 <= minor_arcsec / 4.0);
        if (nside > min_sky_map_nside) CHECK(sky_map_pixel_arcmin(nside / 2) * 60.0 > minor_arcsec / 4.0);
    }
    CHECK(sky_map_nside(1.0) == max_sky_map_nside);
    CHECK(sky_map_nside(1e7) == min_sky_map_nside);
    // HEALPix pixel area 4 pi / (12 nside^2) (Gorski et al. 2005): nside 1024 gives 3.44 arcmin pixels.
    CHECK(sky_map_pixel_arcmin(1024) == doctest::Approx(3.4355).epsilon(1e-4));
}

TEST_CASE("sky map of a Gaussian cloud: sums to 1, centred, 50 % and 90 % areas as the closed form") {
    const double lon0 = 1.0, lat0 = 0.1, a = 2.0 * deg, b = 0.6 * deg;
    const int n = 4000;
    const std::vector<SkySample> s = gaussian_cloud(n, lon0, lat0, a, b, 30.0 * deg, 7);
    const SkyMap m = make_sky_map(s, sky_map_nside(b / arcsec));
    CHECK(m.nside == 512);
    double sum = 0.0, x = 0.0, y = 0.0, z = 0.0;
    for (std::size_t k = 0; k < m.probability.size(); ++k) {
        sum += m.probability[k];
        if (m.probability[k] == 0.0) continue;
        double l = 0, bb = 0;
        sky_map_pixel_centre(m.nside, static_cast<std::int64_t>(k), l, bb);
        x += m.probability[k] * std::cos(bb) * std::cos(l);
        y += m.probability[k] * std::cos(bb) * std::sin(l);
        z += m.probability[k] * std::sin(bb);
    }
    CHECK(std::abs(sum - 1.0) < 1e-12);
    // The map's mean direction within 0.1 of the minor sigma of the cloud's centre (its standard error is 0.016 sigma).
    CHECK(separation(std::atan2(y, x), std::atan2(z, std::hypot(x, y)), lon0, lat0) < 0.1 * b);
    // A two-dimensional Gaussian of covariance C holds share q inside the ellipse of area pi sqrt(det C) (-2 ln(1 - q))
    // (the chi-square distribution with 2 degrees of freedom; common practice). The shrunk kernels keep the
    // cloud's covariance, so no widening enters.
    const double det_sqrt_deg2 = (a / deg) * (b / deg);
    const std::vector<SkyRegion> g = sky_regions(m, ranked_pixels(m), {0.5, 0.9});
    CHECK(g[0].area_deg2 == doctest::Approx(pi * det_sqrt_deg2 * -2.0 * std::log(0.5)).epsilon(0.05));
    CHECK(g[1].area_deg2 == doctest::Approx(pi * det_sqrt_deg2 * -2.0 * std::log(0.1)).epsilon(0.05));
    CHECK(g[0].pixels < g[1].pixels);
    CHECK(m.kernel_minor_arcsec == doctest::Approx(b / arcsec * std::pow(n, -1.0 / 6.0)).epsilon(0.05));
}

TEST_CASE("sky map weights: two clouds weighted 3 : 1 share the probability 3 : 1, a zero weight adds nothing") {
    std::vector<SkySample> s = gaussian_cloud(500, 0.5, 0.0, 0.5 * deg, 0.5 * deg, 0.0, 1);
    std::vector<SkySample> t = gaussian_cloud(500, 0.5 + 40.0 * deg, 0.0, 0.5 * deg, 0.5 * deg, 0.0, 2);
    for (SkySample& x : s) x.weight = 3.0;
    s.insert(s.end(), t.begin(), t.end());
    s.push_back({0.5 + pi, 0.0, 0.0});  // on the far side of the sky, weight 0
    const SkyMap m = make_sky_map(s, 64);
    CHECK(m.effective_samples == doctest::Approx(2000.0 * 2000.0 / (500 * 9 + 500)).epsilon(1e-12));  // (sum w)^2 / sum w^2
    CHECK(probability_within(m, 0.5, 0.0, 20.0 * deg) == doctest::Approx(0.75).epsilon(1e-3));
    CHECK(probability_within(m, 0.5 + 40.0 * deg, 0.0, 20.0 * deg) == doctest::Approx(0.25).epsilon(1e-3));
    CHECK(probability_within(m, 0.5 + pi, 0.0, 20.0 * deg) < 1e-12);
}

TEST_CASE("sky map refuses bad input with InputError") {
    const std::vector<SkySample> ok = {{1.0, 0.0, 1.0}, {1.01, 0.01, 1.0}};
    CHECK_THROWS_AS(make_sky_map({}, 64), InputError);
    CHECK_THROWS_AS(make_sky_map({{std::numeric_limits<double>::quiet_NaN(), 0.0, 1.0}}, 64), InputError);
    CHECK_THROWS_AS(make_sky_map({{1.0, 2.0, 1.0}}, 64), InputError);
    CHECK_THROWS_AS(make_sky_map({{1.0, 0.0, -1.0}, {1.0, 0.0, 2.0}}, 64), InputError);
    CHECK_THROWS_AS(make_sky_map({{1.0, 0.0, 0.0}}, 64), InputError);
    CHECK_THROWS_AS(make_sky_map(ok, 48), InputError);
    CHECK_THROWS_AS(make_sky_map(ok, 2 * max_sky_map_nside), InputError);
    const SkyMap m = make_sky_map(ok, 64);
    CHECK_THROWS_AS(sky_regions(m, ranked_pixels(m), {0.0}), InputError);
    const std::vector<SkyRegion> all = sky_regions(m, ranked_pixels(m), {1.0});
    CHECK(all[0].pixels == ranked_pixels(m).size());
}

TEST_CASE("leftover private folders of a killed sky map writer are swept, links inside unlinked, not followed") {
    namespace fs = std::filesystem;
    const fs::path dir = fs::temp_directory_path() / ("wayward-sky-sweep-" + std::to_string(::getpid()));
    fs::remove_all(dir);
    fs::remove_all(dir.string() + "-answer-key");  // a key left by an earlier run under the same pid
    const fs::path left = dir / (std::string(".skymap.fits") + temporary_marker + "Zq81Xy");
    fs::create_directories(left);
    std::ofstream(left / "map.fits") << "half a map";
    const fs::path outside = dir / "outside.txt";
    std::ofstream(outside) << "keep";
    fs::create_symlink(outside, left / "link");
    const fs::path other = dir / ".not-ours";
    fs::create_directories(other);
    CHECK(remove_stale_temporaries(dir.string()) == 1);
    CHECK_FALSE(fs::exists(left));
    CHECK(fs::exists(other));
    std::ifstream in(outside);
    std::string text;
    std::getline(in, text);
    CHECK(text == "keep");
    fs::remove_all(dir);
}
