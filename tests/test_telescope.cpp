// The [telescope] table: defaults, every field checked at the boundary (file, line, field), carried from the
// scenario into the brief and back, a stand-alone telescope file, and the hidden body's surface in the key only.
#include <doctest/doctest.h>

#include <string>

#include "sim/base/errors.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/exercise/telescope.hpp"
#include "sim/scenario/scenario.hpp"
#include "sim/truth/answer_key.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/truth/generate.hpp"
#include "sim/truth/observe.hpp"
#include "test_helpers.hpp"

using namespace wayward;

namespace {
const std::string kTelescope = R"([telescope]
field_shape = "square"
field_of_view_deg = 1.5
limiting_mag = 15.0
exposure_min = 5.0
overhead_min = 2.0
site_latitude_deg = 35.0
rotation_period_hours = 23.93
min_altitude_deg = 30.0
clear_fraction = 0.65
weather_correlation = 0.5
astrometric_error_arcsec = 0.8
)";

struct Caught {
    long line = -1;
    std::string field, message;
};

Caught telescope_error(const std::string& text) {
    try {
        parse_telescope(text, "tel.toml");
    } catch (const InputError& e) {
        return {e.line(), e.field(), e.what()};
    }
    return {-1, "", "no error"};
}

std::string with_line(const std::string& key, const std::string& value) {
    // Replaces the line that sets `key`, or appends one.
    std::string s = kTelescope;
    const auto pos = s.find("\n" + key + " = ");
    if (pos == std::string::npos) return s + key + " = " + value + "\n";
    const auto end = s.find('\n', pos + 1);
    return s.substr(0, pos + 1) + key + " = " + value + s.substr(end);
}
}  // namespace

TEST_CASE("a telescope file reads with its defaults") {
    const Telescope t = parse_telescope(kTelescope, "tel.toml");
    CHECK(t.shape == FieldShape::square);
    CHECK(t.field_of_view_deg == 1.5);
    CHECK(t.minutes_per_field() == 7.0);
    CHECK(t.axial_tilt_deg == 0.0);        // default: the axis normal to the orbit
    CHECK(t.dark_depression_deg == 18.0);  // astronomical twilight (common practice)
    CHECK(t.chart_limit_mag == 17.0);      // default: two magnitudes past the telescope's limit
    CHECK(t.field_area_square_degrees() == doctest::Approx(2.25));
}

TEST_CASE("every bad telescope field is named with its line") {
    struct Bad {
        std::string key, value;
    };
    const Bad bad[] = {{"field_of_view_deg", "-1.0"},     {"site_latitude_deg", "91.0"}, {"site_latitude_deg", "-90.5"},
                       {"exposure_min", "0.0"},           {"clear_fraction", "1.2"},     {"clear_fraction", "-0.1"},
                       {"weather_correlation", "1.0"},    {"min_altitude_deg", "90.0"},  {"rotation_period_hours", "0.0"},
                       {"astrometric_error_arcsec", "0"}, {"field_shape", "\"hexagon\""}, {"limiting_mag", "nan"},
                       {"axial_tilt_deg", "181.0"},       {"dark_depression_deg", "-3.0"}};
    for (const Bad& b : bad) {
        CAPTURE(b.key);
        CAPTURE(b.value);
        const std::string text = with_line(b.key, b.value);
        const Caught c = telescope_error(text);
        CHECK(c.field == "telescope." + b.key);
        // The line is the one that sets the field.
        long expect = 1;
        for (std::size_t p = 0; p < text.find("\n" + b.key + " = ") + 1; ++p) expect += text[p] == '\n' ? 1 : 0;
        CHECK(c.line == expect);
        CHECK(c.message.find("tel.toml") != std::string::npos);
    }
    CHECK(telescope_error(kTelescope + "mirror_m = 1.0\n").field == "telescope.mirror_m");  // unknown field
    CHECK(telescope_error("[scope]\n").field == "telescope");
}

TEST_CASE("every bundled scenario has a telescope and a surface for its hidden body") {
    for (const char* name : {"classic", "default", "hard", "quick", "tutorial"}) {
        CAPTURE(name);
        const Scenario sc = load_scenario(testing::source_path(std::string("scenarios/") + name + ".toml"));
        REQUIRE(sc.telescope.has_value());
        CHECK(sc.telescope->limiting_mag > 10.0);
        CHECK(sc.telescope->min_altitude_deg >= 20.0);
        bool surface = false;
        for (const BodySpec& b : sc.bodies) surface |= b.role == Role::hidden && b.radius_km && b.albedo;
        CHECK(surface);
    }
}

TEST_CASE("the telescope reaches the brief and the surface stays in the answer key") {
    const Scenario sc = load_scenario(testing::source_path("scenarios/quick.toml"));
    IntegrationResult run;
    const Truth truth = generate(sc, 3, &run);
    const Brief brief = make_brief(sc, truth, 3);
    REQUIRE(brief.telescope.has_value());
    const std::string text = format_brief(brief);
    CHECK(text.find("[telescope]") != std::string::npos);
    CHECK(text.find("radius_km") == std::string::npos);
    CHECK(text.find("albedo") == std::string::npos);
    const auto dir = std::filesystem::temp_directory_path() / "wayward_test_telescope_brief";
    std::filesystem::create_directories(dir);
    testing::write(dir / "brief.toml", text);
    const Brief back = load_brief((dir / "brief.toml").string());
    REQUIRE(back.telescope.has_value());
    CHECK(back.telescope->limiting_mag == sc.telescope->limiting_mag);
    CHECK(back.telescope->site_latitude_deg == sc.telescope->site_latitude_deg);

    const std::string key = answer_key_text(sc, truth, "0");
    CHECK(key.find("radius_km") != std::string::npos);
    CHECK(key.find("geometric_albedo") != std::string::npos);
    const auto hidden = truth.hidden_index();
    REQUIRE(hidden);
    const DrawnBody& h = truth.bodies[*hidden - 1];
    CHECK(h.radius_km >= 12000.0);  // quick.toml draws it from [12000, 20000] km and albedo from [0.3, 0.5]
    CHECK(h.radius_km <= 20000.0);
    CHECK(h.geometric_albedo >= 0.3);
    CHECK(h.geometric_albedo <= 0.5);
    std::filesystem::remove_all(dir);
}

TEST_CASE("a surface on a known planet, or a bad one, is refused") {
    const Scenario ok = load_scenario(testing::source_path("scenarios/quick.toml"));
    std::string text = testing::read(testing::source_path("scenarios/quick.toml"));
    const auto pos = text.find("albedo = ");
    REQUIRE(pos != std::string::npos);
    const auto end = text.find('\n', pos);
    const std::string bad = text.substr(0, pos) + "albedo = -0.2" + text.substr(end);
    try {
        parse_scenario(bad, "q.toml");
        FAIL("no error");
    } catch (const InputError& e) {
        CHECK(e.field().find("albedo") != std::string::npos);
        CHECK(e.line() > 0);
    }
    CHECK(ok.telescope.has_value());
}
