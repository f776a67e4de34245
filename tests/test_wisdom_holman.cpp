// The fitting model's Wisdom-Holman map: agreement with the adaptive reference model on every bundled scenario,
// energy without secular drift, the order of the map with and without the corrector, and bit-identical reruns.
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>
#include <vector>

#include "sim/base/units.hpp"
#include "sim/model/model.hpp"
#include "sim/model/wisdom_holman.hpp"
#include "sim/solve/solve.hpp"
#include "solve_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;

namespace {

// Angle between two sky positions (radians), small-angle form is enough at the milliarcsecond level.
double separation(const SkyPosition& a, const SkyPosition& b) {
    return std::hypot(wrap_pi(a.lon - b.lon) * std::cos(0.5 * (a.lat + b.lat)), a.lat - b.lat);
}

// A star, a Jupiter-like and a Saturn-like planet on mildly eccentric, slightly tilted orbits (invented).
System two_planets(double mass_scale) {
    Elements e1;
    e1.semi_major_axis = 5.2;
    e1.eccentricity = 0.05;
    e1.inclination = 0.02;
    e1.mean_anomaly = 0.3;
    Elements e2;
    e2.semi_major_axis = 9.5;
    e2.eccentricity = 0.06;
    e2.inclination = 0.04;
    e2.ascending_node = 1.0;
    e2.arg_periapsis = 2.0;
    e2.mean_anomaly = 4.0;
    const double m1 = 1e-3 * mass_scale, m2 = 3e-4 * mass_scale;
    return system_from_helio("Lodestar", 1.0,
                             {{"Anvil", Role::known, false, m1, elements_to_state(e1, gm_from_mass(1.0 + m1))},
                              {"Bellows", Role::known, false, m2, elements_to_state(e2, gm_from_mass(1.0 + m2))}});
}

// Largest position difference (au) over bodies between two ephemerides at time t.
double position_gap(const Ephemeris& a, const Ephemeris& b, double t) {
    double worst = 0.0;
    for (std::size_t i = 0; i < a.size(); ++i) worst = std::max(worst, (a.position(i, t) - b.position(i, t)).norm());
    return worst;
}

}  // namespace

TEST_CASE("universal-variable Kepler drift: one full period returns to the start, and matches the elements") {
    const double mu = gm_from_mass(1.0);
    for (double e : {0.0, 0.3, 0.9}) {
        Elements el;
        el.semi_major_axis = 3.0;
        el.eccentricity = e;
        el.inclination = 0.3;
        el.mean_anomaly = 0.2;
        const StateVector s0 = elements_to_state(el, mu);
        const double period = orbital_period(el.semi_major_axis, mu);
        // A quarter period against the Kepler-equation solution of elements.hpp (our own, tested against ERFA).
        Vec3 x = s0.position, v = s0.velocity;
        REQUIRE(kepler_drift(mu, 0.25 * period, x, v));
        Elements quarter = el;
        quarter.mean_anomaly += 0.5 * std::acos(-1.0);
        const StateVector s1 = elements_to_state(quarter, mu);
        CHECK((x - s1.position).norm() < 1e-12 * el.semi_major_axis);
        // Drifting back returns to the start to rounding.
        REQUIRE(kepler_drift(mu, -0.25 * period, x, v));
        CHECK((x - s0.position).norm() < 1e-12 * el.semi_major_axis);
        CHECK((v - s0.velocity).norm() < 1e-12 * s0.velocity.norm());
        // Seven and a quarter periods in one drift (far outside the short-step starting guess) lands on the
        // same point.
        Vec3 xl = s0.position, vl = s0.velocity;
        REQUIRE(kepler_drift(mu, 7.25 * period, xl, vl));
        CHECK((xl - s1.position).norm() < 1e-10 * el.semi_major_axis);
    }
    // A hyperbolic orbit: energy v^2/2 - mu/r is kept.
    Vec3 x(1.0, 0.0, 0.0), v(0.0, 0.03, 0.001);
    const double energy = 0.5 * v.squaredNorm() - mu / x.norm();
    REQUIRE(energy > 0.0);
    REQUIRE(kepler_drift(mu, 400.0, x, v));
    CHECK(std::abs(0.5 * v.squaredNorm() - mu / x.norm() - energy) < 1e-12 * energy);
}

TEST_CASE("Wisdom-Holman model agrees with the adaptive model on every bundled scenario to 1% of the smallest sigma") {
    for (const char* name : {"quick", "tutorial", "default", "classic", "hard"}) {
        CAPTURE(name);
        const Scenario sc = load_scenario(testing::source_path(std::string("scenarios/") + name + ".toml"));
        const auto m = testing::make_exercise(sc, 1, testing::no_noise());
        ModelOptions ref_options, fast_options;
        ref_options.integrator = "adaptive";
        fast_options.integrator = "wisdom-holman";
        const ModelSetup ref_setup = make_setup(m.ex.exercise, ref_options);
        const ModelSetup fast_setup = make_setup(m.ex.exercise, fast_options);
        double smallest_sigma = 1e300;
        for (const FitObservation& f : ref_setup.obs) smallest_sigma = std::min({smallest_sigma, f.sigma_lon_arcsec, f.sigma_lat_arcsec});
        ModelState state = initial_state(ref_setup);
        // With and without a trial hidden body of ten Earth masses half as far again as the outermost planet.
        for (bool hidden : {false, true}) {
            CAPTURE(hidden);
            if (hidden) {
                double outer = 0.0;
                for (const StateVector& p : state.planets) outer = std::max(outer, p.position.norm());
                HiddenOrbit h;
                h.mass = 3e-5;
                h.semi_major_axis = 1.5 * outer;
                h.k = 0.05;
                h.mean_longitude = 1.0;
                h.inclination = 0.03;
                state.hidden = h;
            }
            const ModelRun ref = run_model(ref_setup, state, ref_setup.t_end);
            const ModelRun fast = run_model(fast_setup, state, fast_setup.t_end);
            REQUIRE(ref.ok());
            REQUIRE(fast.ok());
            double worst = 0.0;
            for (const FitObservation& f : ref_setup.obs) {
                std::vector<std::size_t> bodies = {ref.planet_index[f.planet]};
                if (ref.hidden_index) bodies.push_back(*ref.hidden_index);
                for (std::size_t b : bodies)
                    worst = std::max(worst, separation(model_apparent(ref_setup, ref, b, f.time_days),
                                                       model_apparent(fast_setup, fast, b, f.time_days)));
            }
            MESSAGE(std::string(name) << (hidden ? std::string(" with hidden") : std::string(" known")) << ": worst " << worst / arcsec * 1000.0 << " mas, sigma "
                         << smallest_sigma << "\", nodes " << ref.outer.nodes() << " vs " << fast.outer.nodes());
            CHECK(worst / arcsec < 0.01 * smallest_sigma);
        }
    }
}

TEST_CASE("Wisdom-Holman map: convergence order with and without the corrector") {
    // Near-Keplerian (planets a hundred times lighter than Jupiter), so that the eps h^k terms the corrector
    // removes stand clear of the eps^2 h^2 terms it leaves.
    const System sys = two_planets(0.01);
    const double span = 3000.0;
    IntegratorOptions ref_options;
    ref_options.rel_tol = 1e-14;
    const Ephemeris ref = integrate(sys, 0.0, span, ref_options).ephemeris;
    const double period = shortest_period(sys);
    for (int order : {0, 3, 5}) {
        CAPTURE(order);
        std::vector<double> errors;
        std::vector<double> steps;
        for (double fraction : {1.0 / 12.0, 1.0 / 24.0}) {
            WisdomHolmanOptions o;
            o.corrector_order = order;
            o.step_days = span / std::round(span / (period * fraction));
            const WisdomHolmanResult r = integrate_wisdom_holman(sys, 0.0, span, o);
            REQUIRE(r.outcome == WisdomHolmanOutcome::ok);
            errors.push_back(position_gap(r.ephemeris, ref, span));
            steps.push_back(o.step_days);
        }
        const double observed = std::log(errors[0] / errors[1]) / std::log(steps[0] / steps[1]);
        MESSAGE("corrector " << order << ": errors " << errors[0] << " " << errors[1] << " au, order " << observed);
        // Order 2 without the corrector (Wisdom & Holman 1991); with it, O(eps h^4) for the two-stage and
        // O(eps h^6) for the four-stage corrector (Wisdom, Holman & Touma 1996) while eps^2 h^2 is negligible.
        if (order == 0) CHECK((observed > 1.8 && observed < 2.3));
        if (order == 3) CHECK((observed > 3.6 && observed < 4.6));
        if (order == 5) CHECK(observed > 5.5);
    }
}

TEST_CASE("Wisdom-Holman map: energy error bounded and without secular drift") {
    // Jupiter- and Saturn-like masses, 200 orbits of the inner planet at the default step (1/96 of its period).
    const System sys = two_planets(1.0);
    const double span = 200.0 * shortest_period(sys);
    const WisdomHolmanResult r = integrate_wisdom_holman(sys, 0.0, span);
    REQUIRE(r.outcome == WisdomHolmanOutcome::ok);
    const double e0 = total_energy(sys);
    std::vector<double> t, de;
    for (double time : r.ephemeris.times) {
        t.push_back(time);
        de.push_back((total_energy(r.ephemeris.system_at(time)) - e0) / std::abs(e0));
    }
    double worst = 0.0;
    for (double d : de) worst = std::max(worst, std::abs(d));
    // Least-squares slope of the relative energy error against time, times the span: the secular part.
    const double n = static_cast<double>(t.size());
    double st = 0, sd = 0, stt = 0, std_ = 0;
    for (std::size_t k = 0; k < t.size(); ++k) {
        st += t[k];
        sd += de[k];
        stt += t[k] * t[k];
        std_ += t[k] * de[k];
    }
    const double slope = (n * std_ - st * sd) / (n * stt - st * st);
    // Worst error in the last quarter against the first quarter: a drift would make the last grow.
    double first = 0.0, last = 0.0;
    for (std::size_t k = 0; k < t.size(); ++k) {
        if (t[k] < 0.25 * span) first = std::max(first, std::abs(de[k]));
        if (t[k] > 0.75 * span) last = std::max(last, std::abs(de[k]));
    }
    MESSAGE("relative energy error: worst " << worst << ", drift over the span " << slope * span << ", first quarter "
                                            << first << ", last quarter " << last);
    CHECK(worst < 1e-9);
    CHECK(std::abs(slope * span) < 0.1 * worst);
    CHECK(last < 2.0 * first);
}

TEST_CASE("Wisdom-Holman model: the same inputs give bit-identical ephemerides") {
    const System sys = two_planets(1.0);
    CentralQuadrupole q;
    q.q = Eigen::Matrix3d::Identity() * 0.3;
    q.gm_reduced = 1e-8;
    WisdomHolmanOptions o;
    o.central_quadrupole = q;
    const WisdomHolmanResult a = integrate_wisdom_holman(sys, -2000.0, 9000.0, o);
    const WisdomHolmanResult b = integrate_wisdom_holman(sys, -2000.0, 9000.0, o);
    REQUIRE(a.outcome == WisdomHolmanOutcome::ok);
    CHECK(a.ephemeris.times == b.ephemeris.times);
    CHECK(a.ephemeris.states == b.ephemeris.states);
    CHECK(a.ephemeris.accels == b.ephemeris.accels);
    CHECK(a.ephemeris.jerks == b.ephemeris.jerks);
    CHECK(a.ephemeris.t_begin() <= -2000.0);
    CHECK(a.ephemeris.t_end() >= 9000.0);
}

TEST_CASE("the fitting model's integrators are chosen by name from one table") {
    std::vector<std::string> names;
    for (const ModelIntegrator& m : model_integrators()) {
        names.push_back(m.name);
        CHECK(!m.description.empty());
    }
    CHECK(names == std::vector<std::string>{"adaptive", "wisdom-holman"});
    CHECK(ModelOptions{}.integrator == "wisdom-holman");
    const auto m = testing::make_exercise(load_scenario(testing::source_path("scenarios/quick.toml")), 1, testing::no_noise());
    ModelOptions o;
    o.integrator = "leapfrog";
    CHECK_THROWS_AS(make_setup(m.ex.exercise, o), std::invalid_argument);
}

TEST_SUITE("slow") {
TEST_CASE("solutions with the Wisdom-Holman model and its tangent map agree with the adaptive model's to a tenth of their own sigma") {
    // Every bundled scenario, seed 1, the noise `wayward new` draws; default solve options with each model: the
    // reference takes its Jacobians by forward differences, the map by its tangent map.
    for (const char* name : {"quick", "tutorial", "default", "classic", "hard"}) {
        CAPTURE(name);
        const Scenario sc = load_scenario(testing::source_path(std::string("scenarios/") + name + ".toml"));
        const auto m = testing::make_exercise(sc, 1);
        SolveOptions o;
        o.threads = 2;
        o.model.integrator = "adaptive";
        o.model.derivatives = "differences";
        const Solution ref = solve(m.ex.exercise, o);
        o.model.integrator = "wisdom-holman";
        o.model.derivatives = "variational";
        const Solution fast = solve(m.ex.exercise, o);
        const Prediction& p = ref.prediction;
        const double sep = separation({p.lon, p.lat}, {fast.prediction.lon, fast.prediction.lat}) / arcsec;
        const double mass_shift = std::abs(fast.best.mass - ref.best.mass) / ref.mass_sigma;
        const double distance_shift = std::abs(fast.best.semi_major_axis - ref.best.semi_major_axis) / ref.distance_sigma_au;
        MESSAGE(std::string(name) << ": prediction moved " << sep << "\" (1-sigma minor axis " << p.semi_minor_arcsec
                                  << "\"), mass by " << mass_shift << " sigma, distance by " << distance_shift
                                  << " sigma; chi2 " << ref.chi2 << " vs " << fast.chi2);
        CHECK(ref.detection.detected() == fast.detection.detected());
        if (!ref.detection.detected()) {
            // A record that does not demand a hidden body (hard, seed 1: mass 3e-8 +- 4e-8) has no determined
            // minimum, only a valley flat to a small fraction of one in chi2, along which the two optimisers
            // stop at different places (here predictions 1.5 deg apart, distances 0.2 sigma). What must agree
            // is the fit: chi2 to well under 1, i.e. statistically the same.
            CHECK(std::abs(ref.chi2 - fast.chi2) < 0.5);
            continue;
        }
        CHECK(sep < 0.1 * p.semi_minor_arcsec);
        CHECK(mass_shift < 0.1);
        CHECK(distance_shift < 0.1);
    }
}
}  // TEST_SUITE("slow")
