// The background star field (sim/search/starfield): reproducible from its seed, the count law's defaults,
// magnitudes following the cumulative count law, uniform on the sphere and inside a box, bad specs refused;
// the small circles drawn around a place.
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <tuple>

#include "sim/base/units.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/search/starfield.hpp"

using namespace wayward;

namespace {

// Fraction of stars brighter than m under the law between bright and faint (the CDF the generator inverts).
double law_fraction(const StarCountLaw& law, double bright, double faint, double m) {
    return (law.per_square_degree(m) - law.per_square_degree(bright)) / (law.per_square_degree(faint) - law.per_square_degree(bright));
}

}  // namespace

TEST_CASE("star field: the same spec gives the same stars, another seed other stars") {
    StarFieldSpec spec;
    spec.count = 500;
    const auto a = generate_star_field(spec), b = generate_star_field(spec);
    spec.seed = 2;
    const auto c = generate_star_field(spec);
    REQUIRE(a.size() == 500);
    REQUIRE(c.size() == 500);
    bool same = true, differs = false;
    for (std::size_t k = 0; k < a.size(); ++k) {
        same = same && a[k].lon == b[k].lon && a[k].lat == b[k].lat && a[k].mag == b[k].mag;
        differs = differs || a[k].lon != c[k].lon;
    }
    CHECK(same);
    CHECK(differs);
}

TEST_CASE("star field: the count law's defaults and the sphere's area") {
    StarCountLaw law;
    // About 5000 stars brighter than magnitude 6 over the whole sky (common practice, from memory).
    StarFieldSpec spec;
    spec.bright_mag = -30.0;
    spec.faint_mag = 6.0;
    CHECK(expected_star_count(spec) > 4500.0);
    CHECK(expected_star_count(spec) < 5500.0);
    // 4 pi steradians = 41252.96 square degrees (geometry).
    CHECK(field_area_square_degrees(spec) == doctest::Approx(41252.96125).epsilon(1e-9));
    // Growth per magnitude is the law's local slope in dex, at the interval's midpoint for a quadratic law.
    CHECK(std::log10(law.per_square_degree(8.0) / law.per_square_degree(7.0)) == doctest::Approx(law.log_slope_at(7.5)));
    spec.count = -1;
    spec.bright_mag = -1.0;
    spec.faint_mag = 7.0;
    CHECK(static_cast<double>(generate_star_field(spec).size()) == doctest::Approx(std::round(expected_star_count(spec))));
}

TEST_CASE("star field: magnitudes follow the cumulative count law") {
    StarFieldSpec spec;
    spec.count = 20000;
    spec.bright_mag = -1.0;
    spec.faint_mag = 7.0;
    const auto stars = generate_star_field(spec);
    for (double m : {3.0, 5.0, 6.0}) {
        const double p = law_fraction(spec.law, spec.bright_mag, spec.faint_mag, m);
        double n = 0;
        for (const Star& s : stars) n += s.mag < m ? 1.0 : 0.0;
        const double sigma = std::sqrt(p * (1.0 - p) / static_cast<double>(stars.size()));  // binomial
        CHECK(std::abs(n / static_cast<double>(stars.size()) - p) < 4.0 * sigma);
    }
    double lo = 1e9, hi = -1e9;
    for (const Star& s : stars) lo = std::min(lo, s.mag), hi = std::max(hi, s.mag);
    CHECK(lo >= spec.bright_mag);
    CHECK(hi <= spec.faint_mag);
    CHECK(magnitude_at_fraction(spec.law, -1.0, 7.0, 0.0) == doctest::Approx(-1.0));
    CHECK(magnitude_at_fraction(spec.law, -1.0, 7.0, 1.0) == doctest::Approx(7.0));
}

TEST_CASE("star field: uniform on the sphere, and inside its box") {
    StarFieldSpec spec;
    spec.count = 20000;
    const auto sphere = generate_star_field(spec);
    double band = 0;
    for (const Star& s : sphere) band += std::abs(s.lat) < 30.0 * deg ? 1.0 : 0.0;
    // Uniform in area: the fraction within 30 degrees of the equator is sin 30 = 1/2.
    CHECK(std::abs(band / 20000.0 - 0.5) < 4.0 * std::sqrt(0.25 / 20000.0));

    spec.whole_sphere = false;
    spec.lon_min = 6.0;  // runs past 2 pi: the box wraps through longitude 0
    spec.lon_max = 6.6;
    spec.lat_min = -0.2;
    spec.lat_max = 0.1;
    spec.count = 3000;
    for (const Star& s : generate_star_field(spec)) {
        const bool in_lon = s.lon >= 6.0 || s.lon <= 6.6 - two_pi;
        CHECK(in_lon);
        CHECK(s.lat >= -0.2);
        CHECK(s.lat <= 0.1);
    }
    spec.faint_mag = spec.bright_mag;
    CHECK_THROWS_AS(generate_star_field(spec), std::invalid_argument);
}

TEST_CASE("small circles lie at their radius from the centre, also around a pole") {
    for (const auto& [lon, lat, r] : {std::tuple{0.3, 0.2, 0.4}, std::tuple{5.0, 1.5, 0.2}, std::tuple{2.0, -0.4, 0.02}}) {
        const auto ring = small_circle(lon, lat, r, 64);
        REQUIRE(ring.size() == 64);
        for (const SkyPoint& p : ring) CHECK(separation(lon, lat, p.lon, p.lat) == doctest::Approx(r).epsilon(1e-12));
    }
}
