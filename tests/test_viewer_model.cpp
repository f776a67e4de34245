// The viewer's non-drawing parts: the calendar-style dates, the model built from
// a scenario (its samples must be sim's numbers), load errors, and the panels' mouse handling (placing and
// sizing the prediction marker, panning, zooming about the cursor). No window needed.
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <fstream>

#include <SFML/Window/Event.hpp>

#include "sim/physics/geometry.hpp"
#include "sim/base/units.hpp"
#include "test_helpers.hpp"
#include "viewer_events.hpp"
#include "viewer/calendar.hpp"
#include "viewer/fonts.hpp"
#include "viewer/model.hpp"
#include "viewer/panels.hpp"

using namespace wayward;
using namespace wayward::viewer;
using namespace wayward::testing;

namespace {

const ViewerModel* default_model() {
    static const LoadOutcome loaded = load_model(wayward::testing::source_path("scenarios/default.toml"), LoadOptions{});
    return loaded.model ? &*loaded.model : nullptr;
}

}  // namespace

TEST_SUITE("viewer_model") {

TEST_CASE("calendar-style dates from decimal years") {
    // J2000.0 is JD 2451545.0 = 2000 January 1.5 (the IAU definition of the epoch).
    CalendarDate d = calendar_date(2000.0);
    CHECK(d.valid);
    CHECK(d.year == 2000);
    CHECK(d.month == 1);
    CHECK(d.day == 1);
    CHECK(d.day_fraction == doctest::Approx(0.5));
    CHECK(format_calendar_date(d) == "2000 Jan 1");
    // JD 2436116.31 = 1957 October 4.81 (Meeus, Astronomical Algorithms, 2nd ed., example 7.a; from memory).
    d = calendar_date(2000.0 + (2436116.31 - 2451545.0) / 365.25);
    CHECK(d.year == 1957);
    CHECK(d.month == 10);
    CHECK(d.day == 4);
    CHECK(d.day_fraction == doctest::Approx(0.81).epsilon(1e-6));
    // 300 Julian years (109575 d) before J2000.0 is 3 days before 1700 January 1.5, since the Gregorian years
    // 1700-1999 hold 109572 days (72 leap days; 1700, 1800 and 1900 are not leap years).
    d = calendar_date(1700.0);
    CHECK(format_calendar_date(d) == "1699 Dec 29");
    CHECK(format_decimal_year(1843.19871) == "1843.199");
    CHECK(format_calendar_date(calendar_date(-6000.0)) == "\u2014");
}

TEST_CASE("the model of the default scenario: bodies by role, author mode, samples straight from sim") {
    const ViewerModel* m = default_model();
    REQUIRE(m != nullptr);
    REQUIRE(m->body_count() == 6);
    CHECK(m->bodies[0].role == Role::star);
    int hidden = 0, observers = 0;
    for (const BodyView& b : m->bodies) {
        hidden += b.role == Role::hidden;
        observers += b.observer;
        if (b.role == Role::hidden) CHECK(m->shows(b.index));  // author mode shows it
    }
    CHECK(hidden == 1);
    CHECK(observers == 1);
    CHECK(m->bodies[m->observer].name == "Hearth");
    CHECK(m->mode == ViewerMode::author);
    CHECK(m->elongation_limit() == doctest::Approx(25.0 * deg));

    const std::size_t n = m->body_count();
    REQUIRE(m->sample_times.size() > 1000);
    for (std::size_t k : {std::size_t{0}, std::size_t{777}, m->sample_times.size() - 1}) {
        const double t = m->sample_times[k];
        for (std::size_t i = 0; i < n; ++i) {
            const Vec3 p = m->run.ephemeris.position(i, t);
            CHECK(m->sample_xyz[(k * n + i) * 3 + 0] == static_cast<float>(p.x()));
            CHECK(m->sample_xyz[(k * n + i) * 3 + 1] == static_cast<float>(p.y()));
            if (i == m->observer) {
                CHECK(std::isnan(m->sample_lon[k * n + i]));
                continue;
            }
            const Apparent a = apparent(m->run.ephemeris, m->frame, m->observer, i, t);
            CHECK(m->sample_lon[k * n + i] == static_cast<float>(a.sky.lon));
            CHECK(m->sample_lat[k * n + i] == static_cast<float>(a.sky.lat));
        }
    }
    CHECK(m->year(0.0) == doctest::Approx(1700.0));
    CHECK(m->days_at_year(1701.0) == doctest::Approx(365.25));
}

TEST_CASE("load problems come back as messages naming the input") {
    CHECK(load_model("", {}).error.find("nothing to open") != std::string::npos);
    const LoadOutcome missing = load_model("/nonexistent/orrin.toml", {});
    CHECK_FALSE(missing.model);
    CHECK(missing.error.find("/nonexistent/orrin.toml") != std::string::npos);
    CHECK(missing.error.find("no such file") != std::string::npos);
    const auto dir = std::filesystem::temp_directory_path() / "wayward-viewer-model-test";
    std::filesystem::create_directories(dir);
    // A folder is opened as an exercise (trainee mode): without a brief it is refused, naming the file.
    CHECK(load_model(dir.string(), {}).error.find("brief.toml is missing") != std::string::npos);
    const auto bad = dir / "bad.toml";
    std::ofstream(bad) << "[scenario]\nname = \"x\"\nepoch0_year = 1700.0\nspan_years = 300.0\nbogus_field = 1\n";
    const LoadOutcome malformed = load_model(bad.string(), {});
    CHECK_FALSE(malformed.model);
    CHECK(malformed.error.find("bad.toml") != std::string::npos);
    std::filesystem::remove_all(dir);
}

TEST_CASE("sky panel: click places the prediction at the current epoch, drag sets its radius") {
    const ViewerModel* m = default_model();
    REQUIRE(m != nullptr);
    auto sky = make_sky_panel();
    ViewerControls c;
    c.time_days = 1234.5;
    // Canvas 900 x 600 at (100, 20): zoom 1 fits 360 degrees across, 143.24 px per radian; centre (550, 320).
    const sf::FloatRect canvas(100, 20, 900, 600);
    const double scale = 900.0 / two_pi;
    sky->on_mouse(press(sf::Mouse::Left, 550, 320), canvas, c, *m);
    REQUIRE(c.marker.placed);
    CHECK(c.marker.lon == doctest::Approx(pi));  // the view's centre longitude
    CHECK(c.marker.lat == doctest::Approx(0.0));
    CHECK(c.marker.epoch_days == doctest::Approx(1234.5));
    CHECK(c.marker.radius == doctest::Approx(m->scenario.plan.field_radius_deg * deg));  // the plan's field to start
    CHECK(m->field_radius() == doctest::Approx(m->scenario.plan.field_radius_deg * deg));
    sky->on_mouse(move_event(550, 270), canvas, c, *m);
    CHECK(c.marker.radius == doctest::Approx(50.0 / scale).epsilon(1e-9));
    sky->on_mouse(release(sf::Mouse::Left, 550, 270), canvas, c, *m);
    sky->on_mouse(move_event(550, 100), canvas, c, *m);  // no button: nothing changes
    CHECK(c.marker.radius == doctest::Approx(50.0 / scale).epsilon(1e-9));
    // A new click moves the marker (longitude grows to the left) and keeps the radius.
    c.time_days = 2000.0;
    sky->on_mouse(press(sf::Mouse::Left, 650, 320), canvas, c, *m);
    sky->on_mouse(release(sf::Mouse::Left, 650, 320), canvas, c, *m);
    CHECK(c.marker.lon == doctest::Approx(pi - 100.0 / scale));
    CHECK(c.marker.epoch_days == doctest::Approx(2000.0));
    CHECK(c.marker.radius == doctest::Approx(50.0 / scale).epsilon(1e-9));
}

TEST_CASE("sky panel: right-drag pans, the wheel zooms about the cursor") {
    const ViewerModel* m = default_model();
    REQUIRE(m != nullptr);
    auto sky = make_sky_panel();
    ViewerControls c;
    const sf::FloatRect canvas(100, 20, 900, 600);
    const double scale = 900.0 / two_pi;
    sky->on_mouse(press(sf::Mouse::Right, 550, 320), canvas, c, *m);
    sky->on_mouse(move_event(650, 300), canvas, c, *m);
    sky->on_mouse(release(sf::Mouse::Right, 650, 300), canvas, c, *m);
    CHECK_FALSE(c.marker.placed);
    CHECK(c.sky.center_lon == doctest::Approx(pi + 100.0 / scale));  // the sky follows the mouse
    CHECK(c.sky.center_lat == doctest::Approx(-20.0 / scale));

    // The sky point under the cursor stays under it (plate carree, longitude growing to the left).
    auto under = [&](int x, int y, double& lon, double& lat) {
        const double s = scale * c.sky.zoom;
        lon = c.sky.center_lon + (550.0 - x) / s;
        lat = c.sky.center_lat + (320.0 - y) / s;
    };
    double lon0, lat0, lon1, lat1;
    under(800, 150, lon0, lat0);
    sky->on_mouse(wheel_event(sf::Mouse::VerticalWheel, 2.0f, 800, 150), canvas, c, *m);
    CHECK(c.sky.zoom == doctest::Approx(1.15 * 1.15));
    under(800, 150, lon1, lat1);
    CHECK(std::abs(wrap_pi(lon1 - lon0)) < 1e-6);
    CHECK(lat1 == doctest::Approx(lat0));
}

TEST_CASE("system panel: dragging pans with the mouse, the wheel zooms towards the cursor") {
    const ViewerModel* m = default_model();
    REQUIRE(m != nullptr);
    auto plan = make_system_panel();
    ViewerControls c;
    const sf::FloatRect canvas(0, 0, 800, 600);
    plan->on_mouse(press(sf::Mouse::Left, 400, 300), canvas, c, *m);
    plan->on_mouse(move_event(500, 250), canvas, c, *m);
    plan->on_mouse(release(sf::Mouse::Left, 500, 250), canvas, c, *m);
    CHECK(c.plan.center_x < 0.0);  // content moved right and up: the view centre moved left and down
    CHECK(c.plan.center_y < 0.0);
    const double cx = c.plan.center_x, cy = c.plan.center_y;
    plan->on_mouse(wheel_event(sf::Mouse::VerticalWheel, 1.0f, 400, 300), canvas, c, *m);  // at the centre: the centre stays
    CHECK(c.plan.zoom == doctest::Approx(1.15));
    CHECK(c.plan.center_x == doctest::Approx(cx));
    CHECK(c.plan.center_y == doctest::Approx(cy));
    plan->on_mouse(wheel_event(sf::Mouse::VerticalWheel, 1.0f, 700, 300), canvas, c, *m);  // right of centre: the centre moves right
    CHECK(c.plan.center_x > cx);
    CHECK(c.plan.center_y == doctest::Approx(cy));
    plan->reset_view(c);
    CHECK(c.plan.zoom == doctest::Approx(1.0));
}

TEST_CASE("the bundled font has the glyphs the labels use") {
    ImGuiContext* context = ImGui::CreateContext();
    FontSet fonts;
    std::string error;
    REQUIRE_MESSAGE(load_imgui_fonts(fonts, 16.0f, &error), error);
    unsigned char* pixels = nullptr;
    int w = 0, h = 0;
    ImGui::GetIO().Fonts->GetTexDataAsRGBA32(&pixels, &w, &h);
    for (ImFont* font : fonts.fonts) {
        REQUIRE(font != nullptr);
        // minus, lambda, beta, sigma, middle dot, double prime, degree, en dash, left/right arrows, triangles
        for (unsigned c : {0x2212u, 0x03BBu, 0x03B2u, 0x03C3u, 0x00B7u, 0x2033u, 0x00B0u, 0x2013u, 0x2190u, 0x2192u, 0x25B6u, 0x25C0u}) {
            CAPTURE(c);
            CHECK(font->FindGlyphNoFallback(static_cast<ImWchar>(c)) != nullptr);
        }
    }
    CHECK(fonts.pick(30.0f) == fonts.fonts[2]);
    CHECK(fonts.pick(11.0f) == fonts.fonts[0]);
    ImGui::DestroyContext(context);
}

}  // TEST_SUITE
