// Plausibility of drawn systems (sim/truth/generate): crossing orbits and tight spacing are refused with the
// file named; the bundled scenarios' drawn systems pass the spacing and dynamics checks.
#include <doctest/doctest.h>

#include <string>

#include "sim/base/errors.hpp"
#include "sim/truth/generate.hpp"
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
