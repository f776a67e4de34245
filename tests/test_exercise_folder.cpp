// Exercise folders (sim/truth/exercise_writer, `wayward new`): byte-identical for the same seed, the answer
// key sealed by its SHA-256 in the brief, no overwrite without --force, and no complete-looking partial file
// after a kill.
#include <doctest/doctest.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <vector>

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

namespace {
// The answer key folder `new` makes beside an exercise folder by default.
fs::path key_dir(const fs::path& dir) { return default_key_dir(dir.string()); }
// Every output file of an exercise at `dir`, the key's beside it.
std::vector<fs::path> exercise_files(const fs::path& dir) {
    return {dir / "brief.toml", dir / "observations.csv", dir / "observer.csv", key_dir(dir) / "answer_key.toml",
            key_dir(dir) / "true_positions.csv"};
}
// A file's text without the lines that hold the key's random salt or the digest over it: the salt is drawn afresh
// for every key (so the brief's digest cannot be matched by regenerating keys for guessed seeds); all else repeats.
std::string without_salt(const std::string& text) {
    std::istringstream in(text);
    std::string line, out;
    while (std::getline(in, line))
        if (line.rfind("salt = ", 0) != 0 && line.rfind("answer_key_sha256 = ", 0) != 0) out += line + "\n";
    return out;
}
void remove_exercise(const fs::path& dir) {
    fs::remove_all(dir);
    fs::remove_all(key_dir(dir));
}
}  // namespace

TEST_CASE("exercise folders are byte-identical for the same seed and differ for another") {
    const fs::path a = fresh_dir("det-a"), b = fresh_dir("det-b"), c = fresh_dir("det-c");
    std::ostringstream sink;
    const std::string sc = testing::source_path("scenarios/tutorial.toml");
    run_new({sc, 5, a.string(), "", "", false}, sink);
    run_new({sc, 5, b.string(), "", "", false}, sink);
    run_new({sc, 6, c.string(), "", "", false}, sink);
    const auto fa = exercise_files(a), fb = exercise_files(b), fc = exercise_files(c);
    for (std::size_t k = 0; k < fa.size(); ++k) {
        CAPTURE(fa[k]);
        CHECK(without_salt(read(fa[k])) == without_salt(read(fb[k])));
        CHECK(!read(fa[k]).empty());
    }
    // The salt itself differs from run to run, so the sealed digests do too.
    CHECK(read(key_dir(a) / "answer_key.toml") != read(key_dir(b) / "answer_key.toml"));
    CHECK(read(a / "observations.csv") != read(c / "observations.csv"));
    CHECK(without_salt(read(key_dir(a) / "answer_key.toml")) != without_salt(read(key_dir(c) / "answer_key.toml")));
    for (const auto& p : {a, b, c}) remove_exercise(p);
}

TEST_CASE("the answer key's SHA-256 is sealed in the brief; a changed key is refused") {
    const fs::path dir = fresh_dir("key");
    std::ostringstream sink;
    run_new({testing::source_path("scenarios/tutorial.toml"), 2, dir.string(), "", "", false}, sink);
    const Exercise ex = load_exercise(dir.string());
    const std::string key = (key_dir(dir) / "answer_key.toml").string();
    CHECK(sha256_file(key) == ex.brief.answer_key_sha256);
    const AnswerKey k = open_answer_key(ex.brief, key);
    CHECK(k.hidden_name == "Ember");
    CHECK(sha256_file((key_dir(dir) / "true_positions.csv").string()) == k.true_positions_sha256);
    // Change one digit of the key.
    std::string text = read(key);
    const auto pos = text.find("mass = ");
    REQUIRE(pos != std::string::npos);
    text[pos + 7] = text[pos + 7] == '1' ? '2' : '1';
    std::ofstream(key, std::ios::binary) << text;
    CHECK_THROWS_WITH_AS(open_answer_key(ex.brief, key), doctest::Contains("does not match the SHA-256"), InputError);
    remove_exercise(dir);
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
    remove_exercise(dir);
}

TEST_CASE("a killed `new` leaves no partial file that looks complete") {
    const fs::path ref = fresh_dir("kill-ref");
    const std::string sc = testing::source_path("scenarios/classic.toml");
    REQUIRE(testing::run_cli("new " + sc + " --seed 4 --out " + ref.string()).status == 0);
    const auto ref_files = exercise_files(ref);
    int killed_early = 0;
    for (int delay_ms : {5, 20, 40, 60, 90, 120, 160, 220}) {
        const fs::path dir = fresh_dir("kill");
        const std::string cmd = "timeout -s KILL " + std::to_string(delay_ms / 1000.0) + " " + std::string(WAYWARD_CLI) +
                                " new " + sc + " --seed 4 --out " + dir.string() + " >/dev/null 2>&1";
        [[maybe_unused]] const int rc = std::system(cmd.c_str());
        if (!fs::exists(dir / "brief.toml")) ++killed_early;
        const auto files = exercise_files(dir);
        for (std::size_t k = 0; k < files.size(); ++k)
            if (fs::exists(files[k]))
                CHECK_MESSAGE(without_salt(read(files[k])) == without_salt(read(ref_files[k])), files[k] << " after " << delay_ms << " ms");
        // The brief (written last) implies every other file is complete.
        if (fs::exists(dir / "brief.toml"))
            for (const auto& f : files) CHECK(fs::exists(f));
        remove_exercise(dir);
    }
    CHECK(killed_early > 0);  // at least one kill really interrupted the run
    remove_exercise(ref);
}
