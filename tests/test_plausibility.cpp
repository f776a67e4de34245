// Plausibility of drawn systems (sim/truth/generate): crossing orbits and tight spacing are refused with the
// file named; the bundled scenarios' drawn systems pass the spacing and dynamics checks.
#include <doctest/doctest.h>

#include <string>

#include "sim/base/errors.hpp"
#include "sim/truth/generate.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/base/units.hpp"
#include "observe_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;
using wayward::testing::kNoisy;
using wayward::testing::replace;

TEST_CASE("plausibility: crossing orbits and tight spacing are refused, drawn systems pass the check") {
    const std::string crossing = replace(kNoisy, "a = 12.0\ne = 0.02", "a = 1.2\ne = 0.3");
    try {
        const Scenario sc = parse_scenario(crossing, "cross.toml");
        generate(sc, 1);
        FAIL("crossing orbits were accepted");
    } catch (const InputError& e) {
        CHECK(std::string(e.what()).find("cross") != std::string::npos);
        CHECK(std::string(e.what()).find("cross.toml") != std::string::npos);
    }
    const std::string tight = replace(kNoisy, "a = 12.0\ne = 0.02", "a = 1.12\ne = 0.0");
    try {
        generate(parse_scenario(tight, "tight.toml"), 1);
        FAIL("tight spacing was accepted");
    } catch (const InputError& e) {
        CHECK(std::string(e.what()).find("mutual Hill radii") != std::string::npos);
    }
    for (const char* s : {"scenarios/tutorial.toml", "scenarios/classic.toml", "scenarios/hard.toml", "scenarios/default.toml"}) {
        const Scenario sc = load_scenario(testing::source_path(s));
        IntegrationResult run;
        const Truth t = generate(sc, 2, &run);
        CHECK(check_spacing(t, sc.rules).ok);
        CHECK(check_dynamics(t, sc.rules, run).ok);
        CHECK(t.hidden_index().has_value());
    }
}

TEST_CASE("hidden_clear_of_star redraws until the hidden body is outside the elongation limit at the search epoch") {
    Scenario sc = load_scenario(testing::source_path("scenarios/default.toml"));
    REQUIRE(sc.rules.hidden_clear_of_star);
    // Over seeds 1-8 the rule holds for every accepted system, and the same draws without the rule put at
    // least one hidden body inside a wide limit (which the rule then refuses).
    sc.plan.elongation_limit_deg = 60.0;
    Scenario free = sc;
    free.rules.hidden_clear_of_star = false;
    int refused_without_rule = 0;
    for (std::uint64_t seed = 1; seed <= 8; ++seed) {
        IntegrationResult run;
        const Truth t = generate(sc, seed, &run);
        CHECK(check_search_view(t, sc, run).ok);
        const std::size_t h = *t.hidden_index();
        const double days = days_from_year(t.epoch0_year, sc.plan.search_epochs_year.front());
        CHECK(elongation(run.ephemeris, t.system.observer_index(), h, days) / deg > 60.0);
        IntegrationResult run_free;
        const Truth u = generate(free, seed, &run_free);
        if (!check_search_view(u, sc, run_free).ok) ++refused_without_rule;
    }
    CHECK(refused_without_rule > 0);
}

TEST_CASE("hidden_clear_of_star that no draw can meet fails naming the body and the rule") {
    Scenario sc = load_scenario(testing::source_path("scenarios/default.toml"));
    sc.plan.elongation_limit_deg = 179.0;  // nothing is that far from the star
    sc.rules.max_draws = 3;
    try {
        generate(sc, 1);
        FAIL("a body inside the limit was accepted");
    } catch (const InputError& e) {
        const std::string what = e.what();
        CHECK(what.find("Mirrow") != std::string::npos);
        CHECK(what.find("hidden_clear_of_star") != std::string::npos);
    }
}
