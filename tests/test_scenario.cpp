// Scenario files: the bundled ones load; bad input gets an error naming file, line and field.
#include <doctest/doctest.h>

#include <cmath>
#include <string>

#include "sim/base/errors.hpp"
#include "sim/truth/generate.hpp"
#include "sim/scenario/scenario.hpp"
#include "test_helpers.hpp"

using namespace wayward;

namespace {
const char* kGood = R"(
[scenario]
name = "t"
epoch0_year = 1800.0
span_years = 50

[star]
name = "S"
mass = 1.0

[[body]]
name = "A"
role = "known"
observer = true
mass = 3e-6
a = 1.0
e = 0.01
mean_anomaly_deg = 0

[[body]]
name = "B"
role = "known"
mass = 1e-4
a = 6.0
e = 0.02
mean_anomaly_deg = 40
)";

struct Caught {
    std::string message;
    long line = -1;
    std::string field;
};

Caught parse_error(const std::string& text) {
    try {
        parse_scenario(text, "bad.toml");
    } catch (const InputError& e) {
        return {e.what(), e.line(), e.field()};
    }
    return {"no error", -1, ""};
}

std::string replace(std::string s, const std::string& from, const std::string& to) {
    const auto pos = s.find(from);
    REQUIRE(pos != std::string::npos);
    return s.replace(pos, from.size(), to);
}
}  // namespace

TEST_CASE("a good scenario parses and builds") {
    const Scenario sc = parse_scenario(kGood, "good.toml");
    CHECK(sc.bodies.size() == 2);
    const System s = build_fixed_system(sc);
    CHECK(s.size() == 3);
    CHECK(s.bodies[s.observer_index()].name == "A");
}

TEST_CASE("the bundled default scenario loads") {
    const Scenario sc = load_scenario(testing::source_path("scenarios/default.toml"));
    CHECK_FALSE(sc.all_fixed());  // the hidden body is drawn, so the repository does not hold the answer
    CHECK(sc.rules.hidden_clear_of_star);
    CHECK(sc.bodies.size() >= 5);
}

TEST_CASE("malformed TOML names file and line") {
    const Caught c = parse_error(replace(kGood, "mass = 1e-4", "mass = = 1e-4"));
    CHECK(c.message.find("bad.toml:") == 0);
    CHECK(c.line == 23);
    CHECK(c.message.find("malformed TOML") != std::string::npos);
}

TEST_CASE("an unknown field is named") {
    const Caught c = parse_error(replace(kGood, "mass = 1e-4", "mass = 1e-4\nmas = 3"));
    CHECK(c.field == "body[2].mas");
    CHECK(c.line == 24);
    CHECK(c.message.find("unknown field") != std::string::npos);
}

TEST_CASE("a negative mass is refused") {
    const Caught c = parse_error(replace(kGood, "mass = 1e-4", "mass = -1e-4"));
    CHECK(c.field == "body[2].mass");
    CHECK(c.line == 23);
}

TEST_CASE("e >= 1 for a bound orbit is refused") {
    const Caught c = parse_error(replace(kGood, "e = 0.02", "e = 1.0"));
    CHECK(c.field == "body[2].e");
    CHECK(c.line == 25);
    CHECK(c.message.find("[0, 1)") != std::string::npos);
}

TEST_CASE("no observer and two observers are refused") {
    const Caught none = parse_error(replace(kGood, "observer = true\n", ""));
    CHECK(none.field == "observer");
    CHECK(none.message.find("no observer") != std::string::npos);
    const Caught two = parse_error(replace(kGood, "mass = 1e-4", "mass = 1e-4\nobserver = true"));
    CHECK(two.field == "body[2].observer");
    CHECK(two.message.find("two observers") != std::string::npos);
}

TEST_CASE("nan and wrong types are refused") {
    CHECK(parse_error(replace(kGood, "a = 6.0", "a = nan")).field == "body[2].a");
    CHECK(parse_error(replace(kGood, "a = 6.0", "a = \"six\"")).field == "body[2].a");
    CHECK(parse_error(replace(kGood, "role = \"known\"\nmass = 1e-4", "role = \"seen\"\nmass = 1e-4")).field == "body[2].role");
}

TEST_CASE("state vectors with a stated frame are accepted") {
    const std::string text = replace(kGood, "a = 6.0\ne = 0.02\nmean_anomaly_deg = 40",
                                     "[body.state]\nframe = \"equatorial\"\nposition = [6.0, 0.0, 0.0]\nvelocity = [0.0, 0.007, 0.001]");
    const Scenario sc = parse_scenario(text, "s.toml");
    CHECK_FALSE(sc.bodies[1].has_elements);
    CHECK(sc.bodies[1].frame == BodySpec::Frame::equatorial);
    const System s = build_fixed_system(sc);
    // Rotated about x by the default obliquity: z_ref = -sin(eps) y_eq + cos(eps) z_eq.
    const double eps = sc.obliquity_deg * 3.14159265358979323846 / 180.0;
    const StateVector h = heliocentric(s, 2);
    CHECK(std::abs(h.velocity.z() - (-std::sin(eps) * 0.007 + std::cos(eps) * 0.001)) < 1e-17);
    CHECK(std::abs(h.position.z()) < 1e-15);
}

TEST_CASE("the CLI reports a bad file with status 2 and names it") {
    const auto r = testing::run_cli("ephemeris /nonexistent.toml --at 0");
    CHECK(r.status == 2);
    CHECK(r.output.find("/nonexistent.toml") != std::string::npos);
}
