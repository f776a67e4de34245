// Every plausible solution: each minimum's Laplace probability and the physical checks that flag implausible ones.
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>

#include <unistd.h>

#include "sim/solve/minima.hpp"
#include "sim/solve/solve.hpp"
#include "solve_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;

namespace {

Brief two_planet_brief() {
    Brief b;
    b.star_mass = 1.0;
    BriefPlanet inner;
    inner.name = "Inner";
    inner.mass = 1e-3;
    inner.elements.semi_major_axis = 10.0;
    inner.elements.eccentricity = 0.05;
    BriefPlanet outer = inner;
    outer.name = "Outer";
    outer.mass = 5e-5;
    outer.elements.semi_major_axis = 20.0;
    outer.elements.eccentricity = 0.02;
    b.planets = {inner, outer};
    return b;
}

}  // namespace

TEST_CASE("minima: a planet-mass body far from every known orbit is plausible") {
    HiddenOrbit h;
    h.mass = 3e-5;
    h.semi_major_axis = 35.0;
    h.k = 0.05;
    CHECK(implausibility_flags(h, two_planet_brief()).empty());
}

TEST_CASE("minima: star and brown-dwarf masses are flagged") {
    HiddenOrbit h;
    h.semi_major_axis = 500.0;
    h.mass = 0.1;
    auto f = implausibility_flags(h, two_planet_brief());
    REQUIRE(f.size() == 1);
    CHECK(f[0].find("star's mass") != std::string::npos);
    h.mass = 0.02;
    f = implausibility_flags(h, two_planet_brief());
    REQUIRE(f.size() == 1);
    CHECK(f[0].find("brown dwarf") != std::string::npos);
    h.mass = 0.01;  // 10.5 Jupiter masses: a planet
    CHECK(implausibility_flags(h, two_planet_brief()).empty());
}

TEST_CASE("minima: an orbit within 2 sqrt(3) mutual Hill radii of a known planet's is flagged, one just beyond is not") {
    const Brief b = two_planet_brief();
    // Outer planet: a 20 au, e 0.02, apoapsis 20.4 au. For a circular hidden orbit at a, the mutual Hill radius is
    // ((m_p + m) / 3)^(1/3) (20 + a) / 2 (Gladman 1993, Icarus 106, 247, eq. for R_H with the mean semi-major axis);
    // the boundary a solves a - 20.4 = 2 sqrt(3) R_H. Bisection here, independent of the code's own arithmetic.
    const double m = 1e-5;
    auto excess = [&](double a) { return (a - 20.4) - 3.4641016151377544 * std::cbrt((5e-5 + m) / 3.0) * 0.5 * (20.0 + a); };
    double lo = 20.5, hi = 40.0;
    for (int i = 0; i < 100; ++i) (excess(0.5 * (lo + hi)) < 0 ? lo : hi) = 0.5 * (lo + hi);
    HiddenOrbit h;
    h.mass = m;
    h.semi_major_axis = lo * 0.999;
    auto f = implausibility_flags(h, b);
    REQUIRE(f.size() == 1);
    CHECK(f[0].find("Outer") != std::string::npos);
    h.semi_major_axis = hi * 1.001;
    CHECK(implausibility_flags(h, b).empty());
    // Crossing orbits: periapsis inside the outer planet's apoapsis.
    h.semi_major_axis = 30.0;
    h.k = 0.4;  // periapsis 18 au
    f = implausibility_flags(h, b);
    REQUIRE_FALSE(f.empty());
    CHECK(f[0].find("cross") != std::string::npos);
}

TEST_CASE("minima: Laplace weights and probabilities") {
    // J = diag(1/s1, 1/s2): det C = (s1 s2)^2, so log sqrt(det C) = log(s1 s2).
    Eigen::MatrixXd J = Eigen::MatrixXd::Zero(5, 2);
    J(0, 0) = 1.0 / 2.0;
    J(1, 1) = 1.0 / 3.0;
    CHECK(laplace_log_weight(10.0, J, 1.0) == doctest::Approx(-5.0 + std::log(6.0)).epsilon(1e-12));
    // The chi2/dof scale s: chi2 / 2s, and C scaled by s (log sqrt(s^k) added).
    CHECK(laplace_log_weight(10.0, J, 4.0) == doctest::Approx(-1.25 + std::log(6.0) + std::log(4.0)).epsilon(1e-12));
    // A direction the data do not fix: no Gaussian basin.
    Eigen::MatrixXd flat = J;
    flat(1, 1) = 0.0;
    CHECK(std::isnan(laplace_log_weight(10.0, flat, 1.0)));
    // Equal volumes, chi2 apart by 2: odds e^-1; probabilities sum to one; NaN left out.
    const std::vector<double> p = probabilities_from_log_weights({-0.5 * 100.0, -0.5 * 102.0, NAN});
    CHECK(p[1] / p[0] == doctest::Approx(std::exp(-1.0)).epsilon(1e-12));
    CHECK(p[0] + p[1] == doctest::Approx(1.0).epsilon(1e-15));
    CHECK(std::isnan(p[2]));
}

TEST_CASE("minima: every other minimum gets its own prediction, kept through solution.toml") {
    // Hard, seed 1: three distinct minima, none demanded by the record (the table shows them all the same).
    const Scenario sc = load_scenario(testing::source_path("scenarios/hard.toml"));
    const auto m = testing::make_exercise(sc, 1);
    SolveOptions o;
    o.threads = 2;
    o.samples = 0;
    const Solution s = solve(m.ex.exercise, o);
    REQUIRE(s.minima.size() >= 2);
    CHECK_FALSE(s.minima.front().prediction);  // the best's prediction is the solution's own
    double total = 0.0;
    for (std::size_t i = 0; i < s.minima.size(); ++i) {
        CAPTURE(i);
        total += std::isfinite(s.minima[i].probability) ? s.minima[i].probability : 0.0;
        if (i == 0) continue;
        REQUIRE(s.minima[i].prediction);
        CHECK(std::isfinite(s.minima[i].prediction->lon));
        CHECK(s.minima[i].prediction->semi_major_arcsec >= s.minima[i].prediction->semi_minor_arcsec);
        CHECK(s.minima[i].prediction->semi_minor_arcsec > 0.0);
    }
    CHECK(total == doctest::Approx(1.0).epsilon(1e-9));
    const std::filesystem::path file = std::filesystem::temp_directory_path() / ("wayward-minima-" + std::to_string(::getpid()) + ".toml");
    std::ofstream(file) << solution_toml(s);
    const Solution back = load_solution(file.string());
    REQUIRE(back.minima.size() == s.minima.size());
    for (std::size_t i = 1; i < s.minima.size(); ++i) {
        REQUIRE(back.minima[i].prediction);
        CHECK(back.minima[i].prediction->lon == doctest::Approx(s.minima[i].prediction->lon).epsilon(1e-12));
        CHECK(back.minima[i].probability == doctest::Approx(s.minima[i].probability).epsilon(1e-12));
        CHECK(back.minima[i].flags == s.minima[i].flags);
    }
    std::filesystem::remove(file);
}
