// Apparent directions: light-time iteration, frames and separations.
#include <doctest/doctest.h>

#include <cmath>

#include "sim/truth/generate.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/base/units.hpp"
#include "test_helpers.hpp"

using namespace wayward;

TEST_CASE("light time over 30 au matches the exact constants and the iteration converges") {
    // A star, an observer at 1 au and a target at 31 au on the same side: 30 au between them.
    std::vector<DrawnBody> bodies;
    DrawnBody obs{"O", Role::known, true, 1e-12, Elements{1.0, 0.0, 0.0, 0.0, 0.0, 0.0}, {}};
    DrawnBody tgt{"T", Role::known, false, 1e-12, Elements{31.0, 0.0, 0.0, 0.0, 0.0, 0.0}, {}};
    obs.helio = elements_to_state(obs.elements, gauss_k2);
    tgt.helio = elements_to_state(tgt.elements, gauss_k2);
    const System s = make_system("S", 1.0, {obs, tgt});
    const IntegrationResult r = integrate(s, -1.0, 1.0);
    const ObserverFrame f = observer_frame(s, 1);
    const Apparent a = apparent(r.ephemeris, f, 1, 2, 0.0);
    CHECK(a.converged);
    CHECK(a.iterations <= 4);
    // Source: derived from the exact au and c: 30 au -> 14970.14 s. The target moves during the flight, so
    // the light path is slightly longer than 30 au; the difference is below 0.01 s here.
    CHECK(std::abs(a.light_time_days * seconds_per_day - 14970.14) < 0.05);
    // Neglecting light time moves the target by v * tau ~ 5.4 km/s * 4.2 h: about 5" at 30 au.
    const Apparent g = apparent(r.ephemeris, f, 1, 2, 0.0, LightTime::neglected);
    const double shift = separation(a.sky.lon, a.sky.lat, g.sky.lon, g.sky.lat) / arcsec;
    CHECK(shift > 3.0);
    CHECK(shift < 8.0);
}

TEST_CASE("separation: Vincenty form against haversine, poles and the 0/360 seam") {
    auto haversine = [](double l1, double b1, double l2, double b2) {
        const double h = std::pow(std::sin((b2 - b1) / 2), 2) + std::cos(b1) * std::cos(b2) * std::pow(std::sin((l2 - l1) / 2), 2);
        return 2 * std::asin(std::sqrt(h));
    };
    CHECK(std::abs(separation(359.9 * deg, 0.0, 0.1 * deg, 0.0) / deg - 0.2) < 1e-12);
    CHECK(std::abs(separation(0.0, 90 * deg, 123 * deg, 89 * deg) / deg - 1.0) < 1e-12);
    CHECK(std::abs(separation(10 * deg, -90 * deg, 200 * deg, 90 * deg) / deg - 180.0) < 1e-12);
    CHECK(std::abs(separation(1.0, 0.5, 1.0 + 1e-9, 0.5)) > 0.0);
    for (double l2 : {0.1, 1.0, 2.5, 4.0})
        for (double b2 : {-1.2, -0.1, 0.3, 1.4}) CHECK(std::abs(separation(0.3, 0.2, l2, b2) - haversine(0.3, 0.2, l2, b2)) < 1e-12);
}

TEST_CASE("observer frame: the observer's own orbit has zero latitude") {
    DrawnBody obs{"O", Role::known, true, 3e-6, Elements{1.0, 0.02, 7.0 * deg, 40 * deg, 10 * deg, 1.0}, {}};
    obs.helio = elements_to_state(obs.elements, gauss_k2);
    const System s = make_system("S", 1.0, {obs});
    const ObserverFrame f = observer_frame(s, 1);
    const StateVector h = heliocentric(s, 1);
    CHECK(std::abs(f.to_frame(h.position).z()) < 1e-15);
    CHECK(std::abs(f.to_frame(h.velocity).z()) < 1e-17);
}
