// The caution near the star: a region any part of which lies within the brief's elongation limit at its epoch is
// flagged by the solve and the score, a region clear of it never is, and `new` tells the trainer when the hidden
// body itself stands within the limit at a search epoch.
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <string>

#include <unistd.h>

#include "sim/base/units.hpp"
#include "sim/exercise/observer_path.hpp"
#include "sim/predict/near_star.hpp"
#include "solve_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;
namespace fs = std::filesystem;

namespace {
const Brief& tutorial_brief() {
    static const testing::MadeExercise m = testing::make_exercise(load_scenario(testing::source_path("scenarios/tutorial.toml")), 5);
    return m.ex.exercise.brief;
}
// The star's direction (lon, lat) seen from the observer at the year.
void star_direction(const Brief& b, double year, double& lon, double& lat) {
    const Vec3 s = -kepler_observer_path(b)(days_from_year(b.epoch0_year, year));
    lon = std::atan2(s.y(), s.x());
    lat = std::asin(s.z() / s.norm());
}
Prediction region_at(double year, double lon, double lat, double sigma_arcsec) {
    Prediction p;
    p.epoch_year = year;
    p.lon = lon;
    p.lat = lat;
    p.semi_major_arcsec = p.semi_minor_arcsec = sigma_arcsec;
    p.radius90_arcsec = 2.146 * sigma_arcsec;
    return p;
}
}  // namespace

TEST_CASE("near the star: the caution fires for a region inside the elongation limit and never for one outside") {
    const Brief& b = tutorial_brief();
    REQUIRE(b.elongation_limit_deg > 5.0);
    const double limit = b.elongation_limit_deg;
    for (double year : {1820.3, 1880.0, 1940.7}) {
        CAPTURE(year);
        double sl = 0.0, sb = 0.0;
        star_direction(b, year, sl, sb);
        // Centre on the star; centre at half the limit; opposite the star; a small region just outside the limit.
        const NearStar on = near_star(b, region_at(year, sl, sb, 60.0));
        CHECK(on.centre_deg < 0.01);
        CHECK(on.centre_inside());
        CHECK_FALSE(near_star_caution(on, year).empty());
        const NearStar half = near_star(b, region_at(year, sl + 0.5 * limit * deg, sb, 60.0));
        CHECK(std::abs(half.centre_deg - 0.5 * limit) < 1.0);  // (off the ecliptic by the star's small latitude)
        CHECK(half.part_inside());
        const NearStar away = near_star(b, region_at(year, sl + pi, -sb, 3600.0));
        CHECK(away.centre_deg > 179.0);
        CHECK_FALSE(away.part_inside());
        CHECK(near_star_caution(away, year).empty());
        // Centre 5 deg outside the limit: a 1-deg-sigma region (90% radius 2.1 deg) stays clear ...
        const NearStar clear = near_star(b, region_at(year, sl + (limit + 5.0) * deg, sb, 3600.0));
        CHECK_FALSE(clear.centre_inside());
        CHECK_FALSE(clear.part_inside());
        CHECK(near_star_caution(clear, year).empty());
        // ... while a 3-deg-sigma region around the same centre (90% radius 6.4 deg) does: part of it is inside.
        const NearStar straddle = near_star(b, region_at(year, sl + (limit + 5.0) * deg, sb, 3.0 * 3600.0));
        CHECK_FALSE(straddle.centre_inside());
        CHECK(straddle.part_inside());
        CHECK(near_star_caution(straddle, year).find("part of the region") != std::string::npos);
    }
}

TEST_CASE("near the star: tutorial seed 3 puts its body 2 deg from the star in 1940; new, solve and score all say so") {
    const fs::path dir = fs::temp_directory_path() / ("wayward-near-star-" + std::to_string(::getpid()));
    fs::remove_all(dir);
    fs::remove_all(dir.string() + "-answer-key");  // a key left by an earlier run under the same pid
    const std::string ex = (dir / "ex").string();
    const auto made = testing::run_cli("new " + testing::source_path("scenarios/tutorial.toml") + " --seed 3 --out " + ex);
    REQUIRE(made.status == 0);
    CHECK(made.output.find("Trainer's note") != std::string::npos);
    const auto solved = testing::run_cli("solve " + ex + " --quiet --samples 30");
    REQUIRE(solved.status == 0);
    CHECK(solved.output.find("Caution: at 1940.00 the predicted place is") != std::string::npos);
    CHECK(solved.output.find("safety rules") != std::string::npos);
    const auto scored = testing::run_cli("score " + ex);
    REQUIRE(scored.status == 0);
    CHECK(scored.output.find("Caution: at 1940.00") != std::string::npos);
    // The trainee's folder carries no such note: nothing about the truth goes into it.
    CHECK(testing::read(fs::path(ex) / "brief.toml").find("Trainer") == std::string::npos);
    // A seed whose body is well clear of the star gets no note and no caution.
    const std::string ex2 = (dir / "ex2").string();
    const auto made2 = testing::run_cli("new " + testing::source_path("scenarios/tutorial.toml") + " --seed 12 --out " + ex2);
    REQUIRE(made2.status == 0);
    CHECK(made2.output.find("Trainer's note") == std::string::npos);
    const auto solved2 = testing::run_cli("solve " + ex2 + " --quiet --samples 30");
    CHECK(solved2.output.find("Caution: at") == std::string::npos);
    fs::remove_all(dir);
}
