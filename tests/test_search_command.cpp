// `wayward search` from the command line: a run writes plan, log, summary and picture and prints the caution;
// the same inputs give byte-identical plan and log; bad telescope or plan input exits with status 2 naming file,
// line and field, and writes nothing.
#include <doctest/doctest.h>

#include <filesystem>
#include <string>

#include "sim/score/truth_ephemeris.hpp"
#include "sim/solve/solve.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "solve_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;
namespace fs = std::filesystem;

namespace {

// An exercise folder of the quick scenario with a solution that predicts the truth with a 20' circle (one folder
// per test case, so that CTest may run them at once).
fs::path exercise_folder(const std::string& name) {
    const fs::path dir = [&] {
        const fs::path d = fs::temp_directory_path() / ("wayward_test_search_" + name);
        fs::remove_all(d);
        const Scenario sc = load_scenario(testing::source_path("scenarios/quick.toml"));
        const testing::MadeExercise m = testing::make_exercise(sc, 1);
        write_exercise(exercise_paths(d.string()), sc, m.truth, m.obs, make_brief(sc, m.truth, 1), m.run.ephemeris, true);
        const Brief brief = load_brief((d / "brief.toml").string());
        const TruthTrack track = true_track(brief, m.ex.key, 1994.5, 1995.5, 0.05);
        Solution s;
        s.exercise_sha256 = brief.answer_key_sha256;
        s.prediction.epoch_year = 1995.0;
        const TrackPoint& mid = track.points[track.points.size() / 2];
        s.prediction.lon = mid.lon;
        s.prediction.lat = mid.lat;
        s.prediction.distance_au = 20.0;
        s.prediction.cov_ll = s.prediction.cov_bb = 1200.0 * 1200.0;
        s.prediction.semi_major_arcsec = s.prediction.semi_minor_arcsec = 1200.0;
        s.prediction.track = track.points;
        testing::write(d / "solution.toml", solution_toml(s));
        return d;
    }();
    return dir;
}

}  // namespace

TEST_CASE("wayward search writes its folder, prints the caution, and repeats itself byte for byte") {
    const fs::path dir = exercise_folder("run");
    fs::remove_all(dir / "search");
    const auto a = testing::run_cli("search " + dir.string() + " --nights 3 --strategy sweep");
    REQUIRE(a.status == 0);
    CHECK(a.output.find("safety rules and scheduling tools take precedence") != std::string::npos);
    CHECK(a.output.find("cross-checking with the team's own software") != std::string::npos);
    for (const char* f : {"plan.csv", "log.csv", "summary.txt", "search.png"}) CHECK(fs::exists(dir / "search" / f));
    const std::string plan = testing::read(dir / "search/plan.csv"), log = testing::read(dir / "search/log.csv");
    CHECK(plan.rfind("night,order,field,lon_deg,lat_deg,probability,observable_hours\n", 0) == 0);
    const auto b = testing::run_cli("search " + dir.string() + " --nights 3 --strategy sweep");
    REQUIRE(b.status == 0);
    CHECK(testing::read(dir / "search/plan.csv") == plan);
    CHECK(testing::read(dir / "search/log.csv") == log);
    CHECK(a.output == b.output);
    // --telescope replaces the brief's telescope.
    testing::write(dir / "scope.toml", "[telescope]\nfield_of_view_deg = 0.5\nlimiting_mag = 12.0\n");
    const auto c = testing::run_cli("search " + dir.string() + " --nights 1 --telescope " + (dir / "scope.toml").string());
    REQUIRE(c.status == 0);
    CHECK(c.output.find("0.50 deg square field, limit 12.0 mag") != std::string::npos);
}

TEST_CASE("bad telescope or plan input: exit 2 naming file, line and field, nothing written") {
    const fs::path dir = exercise_folder("bad_input");
    const fs::path tmp = dir / "inputs";
    fs::create_directories(tmp);
    struct Case {
        std::string file, text, args, expect_field;
        long expect_line;
    };
    const Case cases[] = {
        {"tel_fov.toml", "[telescope]\nfield_of_view_deg = -1.0\n", "--telescope", "telescope.field_of_view_deg", 2},
        {"tel_lat.toml", "[telescope]\nlimiting_mag = 15\nsite_latitude_deg = 95\n", "--telescope", "telescope.site_latitude_deg", 3},
        {"tel_exp.toml", "[telescope]\nexposure_min = 0\n", "--telescope", "telescope.exposure_min", 2},
        {"tel_clear.toml", "[telescope]\nclear_fraction = 1.5\n", "--telescope", "telescope.clear_fraction", 2},
        {"plan_lat.csv", "night,lon_deg,lat_deg\n1,10.0,0.5\n1,12.0,95.0\n", "--strategy plan --plan", "lat_deg", 3},
        {"plan_night.csv", "night,lon_deg,lat_deg\n1.5,10.0,0.5\n", "--plan", "night", 2},
        {"plan_head.csv", "n,lon,lat\n1,10.0,0.5\n", "--plan", "header", 1},
        {"plan_text.csv", "night,lon_deg,lat_deg\n1,east,0.5\n", "--plan", "lon_deg", 2},
    };
    for (const Case& c : cases) {
        CAPTURE(c.file);
        fs::remove_all(dir / "search");
        testing::write(tmp / c.file, c.text);
        const auto r = testing::run_cli("search " + dir.string() + " --nights 2 " + c.args + " " + (tmp / c.file).string());
        CHECK(r.status == 2);
        CHECK(r.output.find(c.file) != std::string::npos);
        CHECK(r.output.find(c.expect_field) != std::string::npos);
        CHECK(r.output.find((tmp / c.file).string() + ":" + std::to_string(c.expect_line) + ":") != std::string::npos);
        CHECK(!fs::exists(dir / "search"));
    }
    fs::remove_all(dir / "search");
    const auto s = testing::run_cli("search " + dir.string() + " --strategy zigzag");
    CHECK(s.status == 2);
    CHECK(s.output.find("--strategy") != std::string::npos);
    CHECK(!fs::exists(dir / "search"));
}

TEST_CASE("an exercise whose brief has no telescope needs --telescope") {
    std::string text = testing::read(testing::source_path("scenarios/quick.toml"));
    text = text.substr(0, text.find("[telescope]"));
    const Scenario sc = parse_scenario(text, "quick-without-telescope.toml");
    REQUIRE(!sc.telescope.has_value());
    const fs::path d = fs::temp_directory_path() / "wayward_test_search_no_telescope";
    fs::remove_all(d);
    const testing::MadeExercise m = testing::make_exercise(sc, 1);
    write_exercise(exercise_paths(d.string()), sc, m.truth, m.obs, make_brief(sc, m.truth, 1), m.run.ephemeris, true);
    Solution sol;
    sol.exercise_sha256 = load_brief((d / "brief.toml").string()).answer_key_sha256;
    sol.prediction.epoch_year = 1995.0;
    testing::write(d / "solution.toml", solution_toml(sol));
    const auto s = testing::run_cli("search " + d.string() + " --nights 1");
    CHECK(s.status == 2);
    CHECK(s.output.find("brief.toml") != std::string::npos);
    CHECK(s.output.find("field 'telescope'") != std::string::npos);
    CHECK(!fs::exists(d / "search"));
    testing::write(d / "scope.toml", "[telescope]\nlimiting_mag = 12.0\n");
    CHECK(testing::run_cli("search " + d.string() + " --nights 1 --telescope " + (d / "scope.toml").string()).status == 0);
    fs::remove_all(d);
}
