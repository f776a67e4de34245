// The viewer's headless screenshots: each panel of the default scenario renders at the asked size, is not
// blank, shows the role colours it should, differs from the other panel and from another time, and renders the
// same twice; bad input still writes a screenshot with the message and exits 2. Needs an X display (CTest runs
// this suite under xvfb-run). PNGs are read back with sf::Image.
#include <doctest/doctest.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <set>
#include <string>

#include <SFML/Graphics/Image.hpp>

#include <unistd.h>

#include "test_helpers.hpp"
#include "viewer_shots.hpp"

namespace {

namespace fs = std::filesystem;

using namespace wayward::testing::pixels;
using wayward::testing::require_display;
using wayward::testing::Shot;

const wayward::testing::ShotFolder shots("wayward-viewer-render");
const fs::path& shot_dir() { return shots.dir(); }
Shot screenshot(const std::string& args, const std::string& name) { return shots.take(args, name); }

std::string scenario() { return wayward::testing::source_path("scenarios/default.toml"); }

}  // namespace

TEST_SUITE("viewer_render") {

TEST_CASE("each panel of the default scenario renders a full-size, non-blank screenshot with its colours") {
    require_display();
    for (const std::string panel : {"system", "sky"}) {
        CAPTURE(panel);
        const std::string args = scenario() + " --panel " + panel + " --size 960x600 --frames 3";
        const Shot s = screenshot(args + " --year 1843.2", panel + ".png");
        const Shot later = screenshot(args + " --year 1901.7", panel + "-later.png");
        CHECK(s.run.status == 0);
        REQUIRE(s.loaded);
        REQUIRE(later.loaded);
        CHECK(s.image.getSize() == sf::Vector2u(960, 600));
        CHECK(distinct_colours(s.image) > 200);
        // In the drawing (not the sidebar's swatches or the legends): the star, known planets, the hidden body.
        CHECK(count_near(s.image, star_yellow, 12, true) > 30);
        CHECK(count_near(s.image, known_sky_blue, 12, true) > 30);
        CHECK(count_near(s.image, hidden_vermillion, 12, true) > 10);
        // Author mode shows the hidden body where sim puts it: its disc moves between the two times.
        CHECK(count_moved(s.image, later.image, hidden_vermillion, 12) > 20);
    }
}

TEST_CASE("the panels differ from each other, a later time differs, the same run is identical") {
    require_display();
    const std::string common = scenario() + " --size 800x500 --frames 2";
    const Shot system = screenshot(common + " --panel system --year 1843.2", "a-system.png");
    const Shot sky = screenshot(common + " --panel sky --year 1843.2", "a-sky.png");
    const Shot later = screenshot(common + " --panel system --year 1901.7", "a-later.png");
    const Shot again = screenshot(common + " --panel system --year 1843.2", "a-again.png");
    REQUIRE(system.loaded);
    REQUIRE(sky.loaded);
    REQUIRE(later.loaded);
    REQUIRE(again.loaded);
    CHECK(differing_fraction(system.image, sky.image) > 0.2);
    CHECK(differing_fraction(system.image, later.image) > 0.001);
    CHECK(differing_fraction(system.image, again.image) == 0.0);
}

TEST_CASE("a denser star field changes the sky, not the system view") {
    require_display();
    const std::string common = scenario() + " --size 800x500 --frames 2 --year 1843.2";
    const Shot few = screenshot(common + " --panel sky --stars 100", "sky-few.png");
    const Shot many = screenshot(common + " --panel sky --stars 20000", "sky-many.png");
    const Shot plan_few = screenshot(common + " --panel system --stars 100", "plan-few.png");
    const Shot plan_many = screenshot(common + " --panel system --stars 20000", "plan-many.png");
    REQUIRE(few.loaded);
    REQUIRE(many.loaded);
    REQUIRE(plan_few.loaded);
    REQUIRE(plan_many.loaded);
    CHECK(differing_fraction(few.image, many.image) > 0.01);
    CHECK(differing_fraction(plan_few.image, plan_many.image) < 0.002);  // only the sidebar's star count line
}

TEST_CASE("bad input: the screenshot shows the message, stderr says it, the exit status is 2") {
    require_display();
    const Shot missing = screenshot("/nonexistent/nowhere.toml --size 800x500", "missing.png");
    CHECK(missing.run.status == 2);
    CHECK(missing.run.output.find("/nonexistent/nowhere.toml") != std::string::npos);
    REQUIRE(missing.loaded);
    CHECK(missing.image.getSize() == sf::Vector2u(800, 500));
    CHECK(count_near(missing.image, hidden_vermillion, 12) > 100);  // the message box's border and heading

    const fs::path bad = shot_dir() / "broken.toml";
    {
        std::FILE* f = std::fopen(bad.c_str(), "w");
        REQUIRE(f);
        std::fputs("[scenario]\nname = \"broken\"\nepoch0_year = \"soon\"\n", f);
        std::fclose(f);
    }
    const Shot malformed = screenshot(bad.string() + " --size 800x500", "malformed.png");
    CHECK(malformed.run.status == 2);
    CHECK(malformed.run.output.find("broken.toml") != std::string::npos);
    CHECK(malformed.loaded);

    const Shot outside = screenshot(scenario() + " --size 800x500 --year 2500", "outside.png");
    CHECK(outside.run.status == 2);
    CHECK(outside.run.output.find("outside the scenario's span") != std::string::npos);
}

}  // TEST_SUITE
