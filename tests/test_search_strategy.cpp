// The team's planning: the region's samples follow the solution's covariance, the tiling covers the region, and
// each strategy orders the fields as it says (greedy by probability, rows along the track, rings outwards).
#include <doctest/doctest.h>

#include <cmath>

#include "sim/base/units.hpp"
#include "sim/search/region.hpp"
#include "sim/base/errors.hpp"
#include "sim/search/strategy.hpp"

using namespace wayward;

namespace {
Solution ellipse_solution(double major_arcsec, double minor_arcsec) {
    Solution s;
    s.prediction.epoch_year = 2000.0;
    s.prediction.lon = 1.0;
    s.prediction.lat = 0.02;
    s.prediction.cov_ll = major_arcsec * major_arcsec;
    s.prediction.cov_bb = minor_arcsec * minor_arcsec;
    s.prediction.semi_major_arcsec = major_arcsec;
    s.prediction.semi_minor_arcsec = minor_arcsec;
    // A track moving east 0.1 deg per year.
    for (int k = -4; k <= 4; ++k) s.prediction.track.push_back({2000.0 + 0.25 * k, 1.0 + 0.025 * k * deg, 0.02});
    return s;
}
}  // namespace

TEST_CASE("region samples follow the covariance and the tangent plane round-trips") {
    const SearchRegion r = region_from_solution(ellipse_solution(3600.0, 1800.0), 20000, 3);
    double sxx = 0.0, syy = 0.0, sxy = 0.0;
    for (const RegionSample& s : r.samples) sxx += s.xi * s.xi, syy += s.eta * s.eta, sxy += s.xi * s.eta;
    const double n = static_cast<double>(r.samples.size());
    // Sample variances within 4 standard errors (sqrt(2/n) relative for a Gaussian variance).
    CHECK(std::abs(std::sqrt(sxx / n) / (1.0 * deg) - 1.0) < 4.0 * std::sqrt(0.5 / n));
    CHECK(std::abs(std::sqrt(syy / n) / (0.5 * deg) - 1.0) < 4.0 * std::sqrt(0.5 / n));
    CHECK(std::abs(sxy / n) / (0.5 * deg * deg) < 4.0 / std::sqrt(n));
    double lon = 0.0, lat = 0.0, xi = 0.0, eta = 0.0;
    from_tangent(1.0, 0.3, 0.01, -0.02, lon, lat);
    to_tangent(1.0, 0.3, lon, lat, xi, eta);
    CHECK(std::abs(xi - 0.01) < 1e-14);
    CHECK(std::abs(eta + 0.02) < 1e-14);
    // The centre moves along the track: a year later, 0.1 deg further east.
    region_centre(r, 2001.0, lon, lat);
    CHECK(std::abs((lon - 1.0) / deg - 0.1) < 1e-9);
}

TEST_CASE("tiling covers the region and the field probabilities add up") {
    Telescope tel;
    tel.field_of_view_deg = 1.0;
    const SearchRegion r = region_from_solution(ellipse_solution(3600.0, 1800.0), 20000, 3);
    const auto fields = tile_region(r, tel, 3.0);
    CHECK(fields.size() > 20);
    const auto p = field_probabilities(r, tel, fields);
    double sum = 0.0;
    for (double v : p) sum += v;
    // Neighbouring square fields touch without overlapping, so the probabilities add to what lies within 3
    // sigma along the major axis and more: nearly all of it.
    CHECK(sum > 0.97);
    CHECK(sum <= 1.0 + 1e-12);
    CHECK(p[0] > 0.1);  // the central field (first: nearest the centre) holds the most
}

TEST_CASE("strategies order the fields as they say") {
    Telescope tel;
    tel.field_of_view_deg = 1.0;
    SearchRegion r = region_from_solution(ellipse_solution(3600.0, 1800.0), 5000, 3);
    const auto fields = tile_region(r, tel, 2.0);
    const std::vector<bool> none(fields.size(), false);
    auto p = field_probabilities(r, tel, fields);
    const auto greedy = night_order(strategy_by_name("probability"), r, fields, p, none);
    for (std::size_t k = 1; k < greedy.size(); ++k) CHECK(p[greedy[k - 1]] >= p[greedy[k]]);
    // After the best field is searched without a detection, Bayes' rule moves it down the order.
    lower_weights(r, tel, fields[greedy[0]], 0.9);
    p = field_probabilities(r, tel, fields);
    CHECK(night_order(strategy_by_name("probability"), r, fields, p, none)[0] != greedy[0]);
    // Spiral: rings outwards from the best point.
    const auto spiral = night_order(strategy_by_name("spiral"), r, fields, p, none);
    auto ring = [&](std::size_t i) { return std::lround(std::max(std::abs(fields[i].xi), std::abs(fields[i].eta)) / (1.0 * deg)); };
    CHECK(ring(spiral[0]) == 0);
    for (std::size_t k = 1; k < spiral.size(); ++k) CHECK(ring(spiral[k - 1]) <= ring(spiral[k]));
    // Sweep: the track runs east, so rows are lines of constant eta, taken in order, alternating direction.
    const auto sweep = night_order(strategy_by_name("sweep"), r, fields, p, none);
    for (std::size_t k = 1; k < sweep.size(); ++k) CHECK(fields[sweep[k - 1]].eta <= fields[sweep[k]].eta + 1e-12);
    // Fields already covered go last in a sweep.
    std::vector<bool> covered(fields.size(), false);
    covered[sweep[0]] = true;
    CHECK(night_order(strategy_by_name("sweep"), r, fields, p, covered).back() == sweep[0]);
    CHECK_THROWS_AS(strategy_by_name("zigzag"), InputError);
}
