// State vectors <-> orbital elements against handbook examples, and round trips over many random orbits.
#include <doctest/doctest.h>

#include <cmath>

#include "sim/physics/elements.hpp"
#include "sim/base/random.hpp"
#include "sim/base/units.hpp"

using namespace wayward;

namespace {
double true_anomaly(const Elements& el) {
    return wrap_two_pi(true_from_eccentric(solve_kepler(el.mean_anomaly, el.eccentricity), el.eccentricity));
}
}  // namespace

TEST_CASE("state to elements: Curtis example 4.3") {
    // Source: Curtis, Orbital Mechanics for Engineering Students, example 4.3 (numbering varies by edition);
    // expected values at the book's rounding.
    const StateVector s{Vec3(-6045, -3490, 2500), Vec3(-3.457, 6.618, 2.533)};
    const Elements el = state_to_elements(s, 398600.0);
    CHECK(std::abs(s.position.cross(s.velocity).norm() - 58310) < 5.0);  // 4 significant figures
    CHECK(std::abs(el.eccentricity - 0.1712) < 5e-5);
    CHECK(std::abs(el.inclination / deg - 153.2) < 0.05);
    CHECK(std::abs(el.ascending_node / deg - 255.3) < 0.05);
    CHECK(std::abs(el.arg_periapsis / deg - 20.07) < 0.005);
    CHECK(std::abs(true_anomaly(el) / deg - 28.45) < 0.005);
    CHECK(std::abs(el.semi_major_axis - 8788) < 1.0);
}

TEST_CASE("state to elements: Vallado example 2-5") {
    // Source: Vallado, Fundamentals of Astrodynamics and Applications, 4th ed., example 2-5.
    const StateVector s{Vec3(6524.834, 6862.875, 6448.296), Vec3(4.901327, 5.533756, -1.976341)};
    const double mu = 398600.4418;
    const Elements el = state_to_elements(s, mu);
    const double p = el.semi_major_axis * (1 - el.eccentricity * el.eccentricity);
    CHECK(std::abs(p - 11067.798) < 0.01);
    CHECK(std::abs(el.semi_major_axis - 36127.34) < 0.01);
    CHECK(std::abs(el.eccentricity - 0.832853) < 1e-6);
    CHECK(std::abs(el.inclination / deg - 87.869) < 0.001);
    CHECK(std::abs(el.ascending_node / deg - 227.898) < 0.001);
    CHECK(std::abs(el.arg_periapsis / deg - 53.385) < 0.001);
    CHECK(std::abs(true_anomaly(el) / deg - 92.335) < 0.001);
}

TEST_CASE("elements to state: Vallado example 2-6") {
    // Source: Vallado 4th ed., example 2-6 (printed digits from memory; recomputed). Given p and true anomaly.
    const double mu = 398600.4418, p = 11067.790, e = 0.83285, nu = 92.335 * deg;
    Elements el;
    el.eccentricity = e;
    el.semi_major_axis = p / (1 - e * e);
    el.inclination = 87.87 * deg;
    el.ascending_node = 227.89 * deg;
    el.arg_periapsis = 53.38 * deg;
    const double E = 2.0 * std::atan(std::sqrt((1 - e) / (1 + e)) * std::tan(nu / 2));
    el.mean_anomaly = E - e * std::sin(E);
    const StateVector s = elements_to_state(el, mu);
    const Vec3 r_ref(6525.368, 6861.532, 6449.119), v_ref(4.902279, 5.533140, -1.975710);
    CHECK((s.position - r_ref).norm() < 0.01 * std::sqrt(3.0));
    CHECK((s.velocity - v_ref).norm() < 1e-6 * std::sqrt(3.0) * 2);
}

TEST_CASE("elements round trips over thousands of random orbits") {
    Rng rng = make_rng(2024, "test-elements");
    const double mu = gauss_k2;
    int checked = 0;
    for (int k = 0; k < 5000; ++k) {
        Elements el;
        const bool hyperbolic = k % 10 == 9;
        el.eccentricity = hyperbolic ? uniform(rng, 1.01, 4.0) : (k % 7 == 0 ? 0.0 : uniform(rng, 0.0, 0.97));
        el.semi_major_axis = (hyperbolic ? -1.0 : 1.0) * std::exp(uniform(rng, std::log(0.1), std::log(100.0)));
        el.inclination = k % 5 == 0 ? 0.0 : (k % 11 == 0 ? pi : uniform(rng, 0.0, pi));
        el.ascending_node = uniform(rng, 0.0, two_pi);
        el.arg_periapsis = uniform(rng, 0.0, two_pi);
        el.mean_anomaly = hyperbolic ? uniform(rng, -5.0, 5.0) : uniform(rng, 0.0, two_pi);
        const StateVector s1 = elements_to_state(el, mu);
        const Elements back = state_to_elements(s1, mu);
        REQUIRE(std::isfinite(back.semi_major_axis));
        REQUIRE(std::isfinite(back.eccentricity));
        REQUIRE(std::isfinite(back.inclination));
        REQUIRE(std::isfinite(back.ascending_node));
        REQUIRE(std::isfinite(back.arg_periapsis));
        REQUIRE(std::isfinite(back.mean_anomaly));
        const StateVector s2 = elements_to_state(back, mu);
        // State-level round trip: relative to |r| and |v|, within a few thousand ulps of the trigonometry.
        CHECK((s2.position - s1.position).norm() <= 1e-12 * s1.position.norm());
        CHECK((s2.velocity - s1.velocity).norm() <= 1e-12 * s1.velocity.norm());
        if (!hyperbolic && el.eccentricity > 1e-3) {
            CHECK(std::abs(back.semi_major_axis - el.semi_major_axis) <= 1e-12 * el.semi_major_axis);
            CHECK(std::abs(back.eccentricity - el.eccentricity) <= 1e-11);
        }
        ++checked;
    }
    CHECK(checked == 5000);
}

TEST_CASE("circular and equatorial orbits give finite elements") {
    const double mu = gauss_k2;
    for (double inc : {0.0, pi}) {
        Elements el{2.0, 0.0, inc, 0.3, 0.0, 1.2};
        const StateVector s = elements_to_state(el, mu);
        const Elements back = state_to_elements(s, mu);
        CHECK(back.eccentricity < 1e-12);
        CHECK(back.ascending_node == 0.0);
        CHECK(back.arg_periapsis == 0.0);
        CHECK(std::isfinite(back.mean_anomaly));
        const StateVector s2 = elements_to_state(back, mu);
        CHECK((s2.position - s.position).norm() < 1e-13 * 2.0);
    }
}
