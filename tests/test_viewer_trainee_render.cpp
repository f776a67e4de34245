// Trainee-mode screenshots of a default exercise (made with the `wayward` CLI, solved with `wayward solve`):
// every panel renders at the asked size, is not blank and differs from the others; the sky and the system view
// hold no pixel of the hidden body's colour before the reveal and do after it; a changed answer key gives exit
// status 2, the message in the window and on stderr, and nothing revealed; a missing or corrupt exercise shows
// its message and exits 2; the search panel shows a card before `wayward search`, then the nights, and the hidden
// body only after the reveal. Needs an X display (CTest runs this suite under xvfb-run).
#include <doctest/doctest.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <string>

#include <SFML/Graphics/Image.hpp>

#include <unistd.h>

#include "sim/exercise/exercise.hpp"
#include "test_helpers.hpp"
#include "viewer_shots.hpp"

namespace {

namespace fs = std::filesystem;

using namespace wayward::testing::pixels;
using wayward::testing::require_display;
using wayward::testing::Shot;

const wayward::testing::ShotFolder shots("wayward-viewer-trainee-render");
const fs::path& shot_dir() { return shots.dir(); }
Shot screenshot(const std::string& args, const std::string& name) { return shots.take(args, name); }

std::string make_exercise(const std::string& name) {
    const fs::path dir = shot_dir() / name;
    fs::remove_all(dir);
    const auto r = wayward::testing::run_cli("new " + wayward::testing::source_path("scenarios/default.toml") + " --seed 1 --out " + dir.string());
    REQUIRE_MESSAGE(r.status == 0, r.output);
    return dir.string();
}

// The default exercise with its solution.toml (from `wayward solve`), made once.
const std::string& solved_exercise() {
    static const std::string dir = [] {
        const std::string d = make_exercise("solved");
        const auto r = wayward::testing::run_cli("solve " + d + " --quiet");
        REQUIRE_MESSAGE(r.status == 0, r.output);
        return d;
    }();
    return dir;
}

}  // namespace

TEST_SUITE("viewer_trainee_render") {

TEST_CASE("each panel of a default exercise renders full size, not blank, each unlike the others") {
    require_display();
    const std::string common = solved_exercise() + " --size 960x600 --frames 2 --year 1960 --prediction 100,1";
    const char* names[] = {"system", "sky", "residuals", "solve", "score"};
    std::vector<Shot> shots;
    for (const char* panel : names) {
        CAPTURE(panel);
        shots.push_back(screenshot(common + " --panel " + panel, std::string("panel-") + panel + ".png"));
        const Shot& s = shots.back();
        CHECK(s.run.status == 0);
        REQUIRE(s.loaded);
        CHECK(s.image.getSize() == sf::Vector2u(960, 600));
        CHECK(distinct_colours(s.image) > 150);
    }
    for (std::size_t i = 0; i < shots.size(); ++i)
        for (std::size_t j = i + 1; j < shots.size(); ++j) {
            CAPTURE(std::string(names[i]) + " vs " + names[j]);
            CHECK(differing_fraction(shots[i].image, shots[j].image) > 0.05);
        }
    // What each shows: the residual plots' era colours; the solver's prediction (loaded from solution.toml).
    CHECK(count_near(shots[2].image, era_orange, 10, true) > 500);
    CHECK(count_near(shots[2].image, era_green, 10, true) > 500);
    CHECK(count_near(shots[3].image, solver_blue, 10, true) > 200);
    CHECK(count_near(shots[1].image, solver_blue, 10, true) > 20);
}

TEST_CASE("trainee mode shows no pixel of the hidden body's colour before the reveal, and shows it after") {
    require_display();
    for (const std::string panel : {"sky", "system"}) {
        CAPTURE(panel);
        const std::string common = solved_exercise() + " --size 960x600 --frames 2 --year 1960 --prediction 100,1 --panel " + panel;
        const Shot sealed = screenshot(common, "sealed-" + panel + ".png");
        const Shot open = screenshot(common + " --reveal", "revealed-" + panel + ".png");
        CHECK(sealed.run.status == 0);
        CHECK(open.run.status == 0);
        REQUIRE(sealed.loaded);
        REQUIRE(open.loaded);
        CHECK(count_near(sealed.image, hidden_vermillion, 12, false) == 0);  // nowhere in the window
        CHECK(count_near(open.image, hidden_vermillion, 12, true) > 20);     // in the drawing itself
    }
    const Shot score = screenshot(solved_exercise() + " --size 960x600 --frames 2 --prediction 100,1 --panel score --reveal", "revealed-score.png");
    REQUIRE(score.loaded);
    CHECK(count_near(score.image, hidden_vermillion, 12, true) > 20);
}

TEST_CASE("a changed answer key: exit 2, the message in the window and on stderr, nothing revealed") {
    require_display();
    const std::string dir = make_exercise("tampered");
    const std::string key = wayward::default_key_dir(dir) + "/answer_key.toml";
    std::string text;
    {
        std::ifstream in(key, std::ios::binary);
        std::ostringstream s;
        s << in.rdbuf();
        text = s.str();
    }
    text += "\n# edited\n";
    std::ofstream(key, std::ios::binary) << text;
    for (const std::string panel : {"score", "sky"}) {
        CAPTURE(panel);
        const Shot s = screenshot(dir + " --size 960x600 --frames 2 --year 1960 --prediction 100,1 --reveal --panel " + panel,
                                  "tampered-" + panel + ".png");
        CHECK(s.run.status == 2);
        CHECK(s.run.output.find("SHA-256") != std::string::npos);
        CHECK(s.run.output.find("nothing revealed") != std::string::npos);
        CHECK(s.run.output.find("score trainee") == std::string::npos);  // nothing scored
        REQUIRE(s.loaded);
        CHECK(count_near(s.image, hidden_vermillion, 12, false) == 0);
        if (panel == "score") CHECK(count_near(s.image, refused_purple, 12, true) > 100);  // the refusal card
    }
}

TEST_CASE("a missing or corrupt exercise: the screenshot shows the message, stderr says it, the exit status is 2") {
    require_display();
    const Shot missing = screenshot((shot_dir() / "no-such-exercise").string() + " --size 800x500", "missing.png");
    CHECK(missing.run.status == 2);
    CHECK(missing.run.output.find("no-such-exercise") != std::string::npos);
    REQUIRE(missing.loaded);
    CHECK(count_near(missing.image, hidden_vermillion, 12, false) > 100);  // the message box's border and heading

    const std::string dir = make_exercise("corrupt");
    const std::string obs = dir + "/observations.csv";
    std::string text;
    {
        std::ifstream in(obs, std::ios::binary);
        std::ostringstream s;
        s << in.rdbuf();
        text = s.str();
    }
    std::size_t at = 0;
    for (int k = 0; k < 9; ++k) at = text.find('\n', at) + 1;  // line 10
    text.replace(at, text.find('\n', at) - at, "not,a,row");
    std::ofstream(obs, std::ios::binary) << text;
    for (const std::string panel : {"residuals", "sky"}) {
        CAPTURE(panel);
        const Shot s = screenshot(dir + " --size 800x500 --panel " + panel, "corrupt-" + panel + ".png");
        CHECK(s.run.status == 2);
        CHECK(s.run.output.find("observations.csv:10") != std::string::npos);
        REQUIRE(s.loaded);
        CHECK(count_near(s.image, hidden_vermillion, 12, false) > 100);
    }
}

TEST_CASE("the search panel: a card before `wayward search`, then the nights; the hidden body only after the reveal") {
    require_display();
    const std::string dir = make_exercise("search");
    const auto solved = wayward::testing::run_cli("solve " + dir + " --quiet");
    REQUIRE_MESSAGE(solved.status == 0, solved.output);
    const std::string common = dir + " --size 1280x800 --frames 2 --year 1960 --panel search";
    const Shot before = screenshot(common, "search-none.png");
    CHECK(before.run.status == 0);
    REQUIRE(before.loaded);
    const auto searched = wayward::testing::run_cli("search " + dir);
    REQUIRE_MESSAGE(searched.status == 0, searched.output);
    const Shot sealed = screenshot(common, "search-sealed.png");
    const Shot open = screenshot(common + " --reveal", "search-revealed.png");
    CHECK(sealed.run.status == 0);
    CHECK(open.run.status == 0);
    REQUIRE(sealed.loaded);
    REQUIRE(open.loaded);
    CHECK(distinct_colours(sealed.image) > 150);
    CHECK(differing_fraction(before.image, sealed.image) > 0.05);      // the nights replaced the card
    CHECK(count_near(sealed.image, hidden_vermillion, 12, false) == 0);  // nowhere in the window before the reveal
    CHECK(count_near(open.image, hidden_vermillion, 12, true) > 20);     // the body's true place after it
}

}  // TEST_SUITE
