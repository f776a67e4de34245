// Exercise folders (sim/truth/exercise_writer, `wayward new`): byte-identical for the same seed, the answer
// key sealed by its SHA-256 in the brief, no overwrite without --force, and no complete-looking partial file
// after a kill.
#include <doctest/doctest.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "sim/base/errors.hpp"
#include "sim/commands/commands.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/io/hash.hpp"
#include "sim/truth/answer_key.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "observe_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;
namespace fs = std::filesystem;
using wayward::testing::fresh_dir;
using wayward::testing::read;

TEST_CASE("exercise folders are byte-identical for the same seed and differ for another") {
    const fs::path a = fresh_dir("det-a"), b = fresh_dir("det-b"), c = fresh_dir("det-c");
    std::ostringstream sink;
    const std::string sc = testing::source_path("scenarios/tutorial.toml");
    run_new({sc, 5, a.string(), "", false}, sink);
    run_new({sc, 5, b.string(), "", false}, sink);
    run_new({sc, 6, c.string(), "", false}, sink);
    for (const char* f : {"brief.toml", "observations.csv", "observer.csv", "answer-key/answer_key.toml", "answer-key/true_positions.csv"}) {
        CHECK(read(a / f) == read(b / f));
        CHECK(!read(a / f).empty());
    }
    CHECK(read(a / "observations.csv") != read(c / "observations.csv"));
    CHECK(read(a / "answer-key/answer_key.toml") != read(c / "answer-key/answer_key.toml"));
    for (const auto& p : {a, b, c}) fs::remove_all(p);
}

TEST_CASE("the answer key's SHA-256 is sealed in the brief; a changed key is refused") {
    const fs::path dir = fresh_dir("key");
    std::ostringstream sink;
    run_new({testing::source_path("scenarios/tutorial.toml"), 2, dir.string(), "", false}, sink);
    const Exercise ex = load_exercise(dir.string());
    const std::string key = (dir / "answer-key/answer_key.toml").string();
    CHECK(sha256_file(key) == ex.brief.answer_key_sha256);
    const AnswerKey k = open_answer_key(ex.brief, key);
    CHECK(k.hidden_name == "Ember");
    CHECK(sha256_file((dir / "answer-key/true_positions.csv").string()) == k.true_positions_sha256);
    // Change one digit of the key.
    std::string text = read(key);
    const auto pos = text.find("mass = ");
    REQUIRE(pos != std::string::npos);
    text[pos + 7] = text[pos + 7] == '1' ? '2' : '1';
    std::ofstream(key, std::ios::binary) << text;
    CHECK_THROWS_WITH_AS(open_answer_key(ex.brief, key), doctest::Contains("does not match the SHA-256"), InputError);
    fs::remove_all(dir);
}

TEST_CASE("an existing exercise is not overwritten without --force") {
    const fs::path dir = fresh_dir("force");
    const std::string sc = testing::source_path("scenarios/tutorial.toml");
    auto r1 = testing::run_cli("new " + sc + " --seed 1 --out " + dir.string());
    CHECK(r1.status == 0);
    auto r2 = testing::run_cli("new " + sc + " --seed 2 --out " + dir.string());
    CHECK(r2.status == 2);
    CHECK(r2.output.find("--force") != std::string::npos);
    auto r3 = testing::run_cli("new " + sc + " --seed 2 --out " + dir.string() + " --force");
    CHECK(r3.status == 0);
    fs::remove_all(dir);
}

TEST_CASE("a killed `new` leaves no partial file that looks complete") {
    const fs::path ref = fresh_dir("kill-ref");
    const std::string sc = testing::source_path("scenarios/classic.toml");
    REQUIRE(testing::run_cli("new " + sc + " --seed 4 --out " + ref.string()).status == 0);
    const char* files[] = {"brief.toml", "observations.csv", "observer.csv", "answer-key/answer_key.toml", "answer-key/true_positions.csv"};
    int killed_early = 0;
    for (int delay_ms : {5, 20, 40, 60, 90, 120, 160, 220}) {
        const fs::path dir = fresh_dir("kill");
        const std::string cmd = "timeout -s KILL " + std::to_string(delay_ms / 1000.0) + " " + std::string(WAYWARD_CLI) +
                                " new " + sc + " --seed 4 --out " + dir.string() + " >/dev/null 2>&1";
        [[maybe_unused]] const int rc = std::system(cmd.c_str());
        if (!fs::exists(dir / "brief.toml")) ++killed_early;
        for (const char* f : files)
            if (fs::exists(dir / f)) CHECK_MESSAGE(read(dir / f) == read(ref / f), f << " after " << delay_ms << " ms");
        // The brief (written last) implies every other file is complete.
        if (fs::exists(dir / "brief.toml"))
            for (const char* f : files) CHECK(fs::exists(dir / f));
        fs::remove_all(dir);
    }
    CHECK(killed_early > 0);  // at least one kill really interrupted the run
    fs::remove_all(ref);
}
