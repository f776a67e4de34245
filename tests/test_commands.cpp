// The commands as a user runs them: score arithmetic on known cases, the sealed key, and bad input to
// residuals / solve / score (clear message, exit status 2, no crash).
#include <doctest/doctest.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "sim/commands/commands.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/score/score.hpp"
#include "sim/base/units.hpp"
#include "test_helpers.hpp"

using namespace wayward;
namespace fs = std::filesystem;

namespace {

fs::path make_dir(const std::string& name, std::uint64_t seed = 1) {
    const fs::path p = fs::temp_directory_path() / ("wayward-cmd-" + name + "-" + std::to_string(::getpid()));
    fs::remove_all(p);
    fs::remove_all(p.string() + "-answer-key");  // a key left by an earlier run under the same pid
    std::ostringstream sink;
    run_new({testing::source_path("scenarios/tutorial.toml"), seed, p.string(), "", "", false}, sink);
    return p;
}

using testing::read;
using testing::write;

double number_after(const std::string& text, const std::string& label) {
    const auto pos = text.find(label);
    REQUIRE(pos != std::string::npos);
    return std::strtod(text.c_str() + pos + label.size(), nullptr);
}

}  // namespace

TEST_CASE("score: a prediction on the true position scores zero; one degree north scores 60 arcmin") {
    const fs::path dir = make_dir("score");
    const Exercise ex = load_exercise(dir.string());
    const AnswerKey key = open_answer_key(ex.brief, exercise_paths(dir.string()).answer_key());
    const double year = ex.brief.search_epochs_year.front();
    const TruthTrack t = true_track(ex.brief, key, year, year, 1.0);
    char args[256];
    std::snprintf(args, sizeof args, " --lon %.12f --lat %.12f --epoch %.6f", t.points[0].lon / deg, t.points[0].lat / deg, year);
    const auto on = testing::run_cli("score " + dir.string() + args);
    CHECK(on.status == 0);
    CHECK(number_after(on.output, "Separation: ") < 1e-6);
    CHECK(on.output.find("HIT") != std::string::npos);
    std::snprintf(args, sizeof args, " --lon %.12f --lat %.12f --epoch %.6f", t.points[0].lon / deg, t.points[0].lat / deg + 1.0, year);
    const auto north = testing::run_cli("score " + dir.string() + args);
    CHECK(std::abs(number_after(north.output, "Separation: ") - 60.0) < 1e-3);
    CHECK(fs::exists(dir / "luck_own.csv"));
    CHECK(fs::exists(dir / "luck_own.png"));
    fs::remove_all(dir);
}

TEST_CASE("score: a trainee's own prediction never overwrites the solver's luck curve") {
    const fs::path dir = make_dir("score-own");
    const std::string solver_luck = "time,marker\n1,solver\n";
    std::ofstream(dir / "luck.csv") << solver_luck;  // stands for the solver's luck curve
    const auto r = testing::run_cli("score " + dir.string() + " --lon 10 --lat 0 --epoch " +
                                    std::to_string(load_exercise(dir.string()).brief.search_epochs_year.front()));
    CHECK(r.status == 0);
    std::ifstream in(dir / "luck.csv");
    CHECK(std::string(std::istreambuf_iterator<char>(in), {}) == solver_luck);
    CHECK(fs::exists(dir / "luck_own.csv"));
    CHECK(r.output.find("luck_own.csv") != std::string::npos);
    fs::remove_all(dir);
}

TEST_CASE("score refuses a tampered answer key and a solution made for another exercise") {
    const fs::path a = make_dir("tamper-a", 1), b = make_dir("tamper-b", 2);
    // A solution that names exercise A, placed in B.
    Solution s;
    s.exercise_sha256 = load_exercise(a.string()).brief.answer_key_sha256;
    s.prediction.epoch_year = 1940.0;
    write(b / "solution.toml", solution_toml(s));
    const auto other = testing::run_cli("score " + b.string());
    CHECK(other.status == 2);
    CHECK(other.output.find("another exercise") != std::string::npos);
    // Tamper with A's key.
    const fs::path key = fs::path(default_key_dir(a.string())) / "answer_key.toml";
    std::string text = read(key);
    text.replace(text.find("mass = "), 8, "mass = 9");
    write(key, text);
    const auto tampered = testing::run_cli("score " + a.string() + " --lon 10 --lat 0 --epoch 1940");
    CHECK(tampered.status == 2);
    CHECK(tampered.output.find("does not match the SHA-256") != std::string::npos);
    fs::remove_all(a);
    fs::remove_all(b);
}

TEST_CASE("a corrupt observations.csv row is named by its row number") {
    const fs::path dir = make_dir("corrupt");
    std::string text = read(dir / "observations.csv");
    // Row 5 of the file (header is row 1): replace its longitude with a word.
    std::size_t pos = 0;
    for (int row = 1; row < 5; ++row) pos = text.find('\n', pos) + 1;
    const std::size_t c1 = text.find(',', pos), c2 = text.find(',', c1 + 1), c3 = text.find(',', c2 + 1), c4 = text.find(',', c3 + 1);
    text.replace(c3 + 1, c4 - c3 - 1, "east");
    write(dir / "observations.csv", text);
    const auto r = testing::run_cli("residuals " + dir.string());
    CHECK(r.status == 2);
    CHECK(r.output.find("observations.csv:5") != std::string::npos);
    CHECK(r.output.find("lon_deg") != std::string::npos);
    fs::remove_all(dir);
}

TEST_CASE("too few observations for a fit is a clear error, not a crash") {
    const fs::path dir = make_dir("degenerate");
    std::string text = read(dir / "observations.csv");
    std::size_t pos = 0;
    for (int row = 0; row < 6; ++row) pos = text.find('\n', pos) + 1;
    write(dir / "observations.csv", text.substr(0, pos));
    const auto r = testing::run_cli("residuals " + dir.string());
    CHECK(r.status == 2);
    CHECK(r.output.find("degenerate fit") != std::string::npos);
    fs::remove_all(dir);
}

TEST_CASE("an epoch outside the integrable span is refused before any work") {
    const fs::path dir = make_dir("epoch");
    const auto r = testing::run_cli("solve " + dir.string() + " --epoch 2500 --quiet");
    CHECK(r.status == 2);
    CHECK(r.output.find("outside the exercise's integrable span") != std::string::npos);
    const auto s = testing::run_cli("score " + dir.string() + " --lon 1 --lat 1 --epoch 1500");
    CHECK(s.status == 2);
    CHECK(s.output.find("outside the exercise's span") != std::string::npos);
    const auto bad = testing::run_cli("solve " + dir.string() + " --distance gauss:30 --quiet");
    CHECK(bad.status == 2);
    CHECK(bad.output.find("--distance") != std::string::npos);
    fs::remove_all(dir);
}

TEST_CASE("a missing exercise folder is a clear error") {
    const auto r = testing::run_cli("residuals /nonexistent-exercise");
    CHECK(r.status == 2);
    CHECK(r.output.find("brief.toml is missing") != std::string::npos);
}

TEST_CASE("wayward --version prints the project's version and exits 0") {
    const auto r = testing::run_cli("--version");
    CHECK(r.status == 0);
    CHECK(r.output == std::string("wayward ") + WAYWARD_VERSION + "\n");
}
