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

using wayward::testing::Shot;

const fs::path& shot_dir() {
    static const fs::path dir = wayward::testing::fresh_shot_dir("wayward-viewer-render");
    return dir;
}

Shot screenshot(const std::string& args, const std::string& name) { return wayward::testing::take_screenshot(shot_dir(), args, name); }

std::string scenario() { return wayward::testing::source_path("scenarios/default.toml"); }

bool near(sf::Color p, sf::Color c, int tol) {
    return std::abs(p.r - c.r) <= tol && std::abs(p.g - c.g) <= tol && std::abs(p.b - c.b) <= tol;
}

// Whether a pixel belongs to the drawing: right of the sidebar (min(350 px, half the width), viewer/app.cpp)
// and outside the top-right and bottom-right corners, where the panels put their legends.
bool in_drawing(const sf::Image& img, unsigned x, unsigned y) {
    const sf::Vector2u size = img.getSize();
    if (x < std::min(350u, size.x / 2)) return false;
    const bool right_corner = x + 240 > size.x;
    return !(right_corner && (y < 140 || y + 140 > size.y));
}

// Pixels within `tol` (per channel) of `c`, optionally only in the drawing.
int count_near(const sf::Image& img, sf::Color c, int tol, bool drawing_only = false) {
    int n = 0;
    const sf::Vector2u size = img.getSize();
    for (unsigned y = 0; y < size.y; ++y)
        for (unsigned x = 0; x < size.x; ++x)
            n += near(img.getPixel(x, y), c, tol) && (!drawing_only || in_drawing(img, x, y));
    return n;
}

// Pixels near `c` in `a` and not in `b`: something of that colour moved.
int count_moved(const sf::Image& a, const sf::Image& b, sf::Color c, int tol) {
    if (a.getSize() != b.getSize()) return 0;
    int n = 0;
    for (unsigned y = 0; y < a.getSize().y; ++y)
        for (unsigned x = 0; x < a.getSize().x; ++x) n += near(a.getPixel(x, y), c, tol) && !near(b.getPixel(x, y), c, tol);
    return n;
}

std::size_t distinct_colours(const sf::Image& img) {
    std::set<sf::Uint32> colours;
    const sf::Vector2u size = img.getSize();
    for (unsigned y = 0; y < size.y; y += 2)
        for (unsigned x = 0; x < size.x; x += 2) colours.insert(img.getPixel(x, y).toInteger());
    return colours.size();
}

double differing_fraction(const sf::Image& a, const sf::Image& b) {
    if (a.getSize() != b.getSize()) return 1.0;
    const sf::Vector2u size = a.getSize();
    double n = 0;
    for (unsigned y = 0; y < size.y; ++y)
        for (unsigned x = 0; x < size.x; ++x) n += a.getPixel(x, y) != b.getPixel(x, y);
    return n / (static_cast<double>(size.x) * size.y);
}

// The Okabe-Ito colours the viewer gives the roles (viewer/palette.hpp).
const sf::Color star_yellow{240, 228, 66};
const sf::Color hidden_vermillion{213, 94, 0};
const sf::Color known_sky_blue{86, 180, 233};

void require_display() {
    const char* d = std::getenv("DISPLAY");
    REQUIRE_MESSAGE((d && *d), "the render tests need an X display: run them under xvfb-run");
}

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
