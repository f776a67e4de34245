// The search rehearsal's sky formulas, each against its named source: altitude and azimuth (Meeus), airmass
// (Kasten & Young), brightness (Bowell et al. H,G law), the logistic detection efficiency, the star-count law
// against whole-sky totals, the density band and the per-cell sky.
#include <doctest/doctest.h>

#include <cmath>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"
#include "sim/search/brightness.hpp"
#include "sim/search/starfield.hpp"
#include "sim/search/visibility.hpp"

using namespace wayward;

TEST_CASE("altitude and azimuth from hour angle, declination and latitude") {
    // Meeus, Astronomical Algorithms, 2nd ed. (1998), ch. 13, example 13.b: H = 64.352133 deg,
    // delta = -6 deg 43' 11.61", phi = +38 deg 55' 17" give h = 15.1249 deg, A = 68.0337 deg (from the south,
    // westwards).
    const double dec = -(6.0 + 43.0 / 60.0 + 11.61 / 3600.0) * deg;
    const double lat = (38.0 + 55.0 / 60.0 + 17.0 / 3600.0) * deg;
    const Horizon h = horizon_from_hour_angle(64.352133 * deg, dec, lat);
    CHECK(std::abs(h.altitude / deg - 15.1249) < 1e-4);
    CHECK(std::abs(h.azimuth / deg - 68.0337) < 1e-4);
    // At the meridian a body at the declination equal to the latitude is at the zenith (geometry).
    CHECK(std::abs(horizon_from_hour_angle(0.0, lat, lat).altitude - pi / 2) < 1e-12);
}

TEST_CASE("airmass: sec z at small zenith distances, Kasten and Young's value at the horizon") {
    // Kasten & Young (1989), Applied Optics 28, 4735: their model atmosphere gives X = 38.0868 at z = 90 deg and
    // their fitted formula reproduces it to about half a percent (from memory); within a few parts in a thousand
    // of sec z up to z = 60 deg (common practice).
    CHECK(std::abs(airmass(1e-9) / 38.0868 - 1.0) < 6e-3);
    for (double z_deg : {0.0, 20.0, 40.0, 60.0}) {
        CAPTURE(z_deg);
        const double sec_z = 1.0 / std::cos(z_deg * deg);
        CHECK(std::abs(airmass((90.0 - z_deg) * deg) / sec_z - 1.0) < 3e-3);
    }
    CHECK(std::isinf(airmass(-0.01)));
}

TEST_CASE("brightness: the H,G phase law's worked value and the size-albedo relation") {
    // Bowell et al. (1989), in Asteroids II; IAU Commission 20 (1985): H = 7.0, G = 0.15, r = 2.5 au,
    // delta = 1.8 au, star-observer 1.0 au: alpha = 19.3809 deg, V = 11.2459.
    const double alpha = phase_angle(2.5, 1.8, 1.0);
    CHECK(std::abs(alpha / deg - 19.3809) < 1e-4);
    CHECK(std::abs(apparent_magnitude(7.0, 0.15, 2.5, 1.8, alpha) - 11.2459) < 1e-4);
    // At zero phase the law reduces to H + 5 log10(r delta) (Bowell et al. 1989).
    CHECK(std::abs(apparent_magnitude(7.0, 0.15, 2.0, 1.0, 0.0) - (7.0 + 5.0 * std::log10(2.0))) < 1e-12);
    // D = 1329 km / sqrt(p) 10^(-H/5) (standard relation, from memory): H = 0 with p = 1 is D = 1329 km.
    CHECK(std::abs(absolute_magnitude(1329.0, 1.0)) < 1e-12);
    CHECK(std::abs(absolute_magnitude(1329.0 / std::sqrt(0.25) * std::pow(10.0, -7.0 / 5.0), 0.25) - 7.0) < 1e-12);
}

TEST_CASE("detection efficiency and extinction") {
    // Logistic efficiency (common practice in survey characterisation): half of eta_max at the limit, falling
    // by e per width beyond it.
    CHECK(detection_efficiency(16.0, 16.0, 0.25, 0.9) == doctest::Approx(0.45));
    CHECK(detection_efficiency(19.0, 16.0, 0.25, 0.9) < 1e-5);  // three magnitudes past the limit
    CHECK(detection_efficiency(12.0, 16.0, 0.25, 0.9) == doctest::Approx(0.9).epsilon(1e-6));
    CHECK(detection_efficiency(1e6, 16.0, 0.25, 0.9) == 0.0);
    // Extinction: 0.2 mag per airmass (common practice: 0.15-0.25) costs 0.2 mag at airmass 2 against the zenith.
    CHECK(limit_at_airmass(16.0, 0.2, 2.0) == doctest::Approx(15.8));
}

TEST_CASE("the star-count law matches the whole-sky totals") {
    // Whole-sky totals (from memory: a naked-eye catalogue, and space-astrometry catalogues of the 1990s and the
    // 2020s): about 9000 stars to V = 6.5, 2.5 million to V = 11.5, 1.8 billion to G = 20.7.
    const StarCountLaw law;
    const double sky = 41252.96125;  // square degrees in 4 pi steradians
    CHECK(std::abs(law.per_square_degree(6.5) * sky / 9000.0 - 1.0) < 0.02);
    CHECK(std::abs(law.per_square_degree(11.5) * sky / 2.5e6 - 1.0) < 0.02);
    CHECK(std::abs(law.per_square_degree(20.7) * sky / 1.8e9 - 1.0) < 0.02);
    // The slope falls with magnitude, staying positive past m = 21 (common practice: ~0.5 to ~0.3 dex/mag).
    CHECK(law.log_slope_at(6.0) > 0.5);
    CHECK(law.log_slope_at(20.0) < 0.35);
    CHECK(law.faintest_valid_mag() > 25.0);
    // The inverse CDF lands on the magnitude whose cumulative count is the fraction.
    for (double u : {0.1, 0.5, 0.9}) {
        const double m = magnitude_at_fraction(law, 10.0, 18.0, u);
        const double f = (law.per_square_degree(m) - law.per_square_degree(10.0)) /
                         (law.per_square_degree(18.0) - law.per_square_degree(10.0));
        CHECK(std::abs(f - u) < 1e-10);
    }
}

TEST_CASE("the density band: whole-sky mean one, several times denser in its plane than at its pole") {
    const DensityBand band;
    // The sphere's mean by a midpoint rule in sin(latitude) and longitude (uniform in area).
    const int n = 400;
    double sum = 0.0;
    for (int i = 0; i < n; ++i)
        for (int j = 0; j < n; ++j) sum += band.factor(two_pi * (j + 0.5) / n, std::asin(-1.0 + 2.0 * (i + 0.5) / n));
    CHECK(std::abs(sum / (n * n) - 1.0) < 2e-3);
    // A point on the band's circle against its pole (the pole is at latitude 60 deg towards -y).
    const double plane = band.factor(0.0, 0.0);  // (1, 0, 0) is perpendicular to the pole
    const double pole = band.factor(-pi / 2, pi / 3);
    CHECK(plane / pole > 3.0);
}

TEST_CASE("sky cells: the same cell gives the same stars, counts follow the law") {
    SkySpec spec;
    spec.seed = 5;
    spec.faint_mag = 14.0;
    const auto cells = cells_near(spec, 1.0, 0.1, 1.0 * deg);
    REQUIRE(!cells.empty());
    double n = 0.0, expected = 0.0;
    for (const SkyCell& c : cells) {
        const auto a = cell_stars(spec, c), b = cell_stars(spec, c);
        REQUIRE(a.size() == b.size());
        for (std::size_t k = 0; k < a.size(); ++k) {
            CHECK(a[k].lon == b[k].lon);
            CHECK(a[k].mag == b[k].mag);
            CHECK(a[k].lon >= c.lon_min);
            CHECK(a[k].lon <= c.lon_max);
            CHECK(a[k].lat >= c.lat_min);
            CHECK(a[k].lat <= c.lat_max);
        }
        n += static_cast<double>(a.size());
        const double area = (c.lon_max - c.lon_min) * (std::sin(c.lat_max) - std::sin(c.lat_min)) * (180.0 / pi) * (180.0 / pi);
        expected += area * expected_density(spec, 0.5 * (c.lon_min + c.lon_max), 0.5 * (c.lat_min + c.lat_max));
    }
    CHECK(std::abs(n - expected) < 5.0 * std::sqrt(expected));  // Poisson
    // Every cell touching the cap is listed: points on the cap's edge fall inside a listed cell.
    for (int k = 0; k < 36; ++k) {
        const auto ring = small_circle(1.0, 0.1, 1.0 * deg, 36);
        bool inside = false;
        for (const SkyCell& c : cells) {
            const SkyPoint p = ring[static_cast<std::size_t>(k)];
            inside |= p.lon >= c.lon_min && p.lon <= c.lon_max && p.lat >= c.lat_min && p.lat <= c.lat_max;
        }
        CHECK(inside);
    }
}

TEST_CASE("darkness: at the equator with the axis normal to the orbit, 24 h minus two 1.2 h twilights") {
    // The star on the celestial equator seen from latitude 0 sinks 15 deg per hour, so astronomical twilight
    // (18 deg, common practice) lasts 1.2 h at each end of a 12 h night: 9.6 h of darkness (geometry).
    Site site;
    site.rotation_period_days = 1.0;
    site.dark_depression = 18.0 * deg;
    site.min_altitude = 30.0 * deg;
    site.elongation_limit = 30.0 * deg;
    // An observer on a circular 1 au orbit whose year is long against the day (the star barely moves nightly).
    const ObserverPath path = [](double t) { const double a = two_pi * t / 36525.0; return Vec3(std::cos(a), std::sin(a), 0.0); };
    const auto nights = nights_from(site, path, 0.0, 3, 1.0);
    REQUIRE(nights.size() == 3);
    for (const Night& n : nights) {
        CHECK(std::abs(n.dark_hours() - 9.6) < 0.1);
        CHECK(std::abs((n.end_days - n.start_days) - 1.0) < 0.01);
    }
    // Opposite the star, a direction on the equator is at the zenith in the middle of the night and observable
    // for as long as it is above 30 deg in darkness: +-60 deg of hour angle = 8 h, all of it dark.
    const Night& n = nights[1];
    const Vec3 anti = -(-path(0.5 * (n.dark_start_days + n.dark_end_days)));
    CHECK(std::abs(observable_hours(site, path, n, anti, 1.0) - 8.0) < 0.1);
    // A planet that turns once per orbit has no nights: refused, not searched for ever.
    Site locked = site;
    locked.rotation_period_days = 36525.0;
    CHECK_THROWS_AS(nights_from(locked, path, 0.0, 1, 5.0), InputError);
    // The star's own direction is never allowed.
    CHECK(check_pointing(site, path, -path(n.dark_start_days), n.dark_start_days).outcome == Pointing::too_near_star);
}
