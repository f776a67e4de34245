// Bad and hostile input to the `wayward` commands: planted links, two writers in one folder, broken answer keys and
// solutions, inputs that would hang or exhaust memory, and names the tables cannot carry. Each case checks the exit
// status, that the message names the file/option and field, and that nothing outside the folder (or half-written)
// is left behind.
#include <doctest/doctest.h>

#include <cstdio>
#include <filesystem>
#include <string>

#include <sys/stat.h>
#include <unistd.h>

#include "sim/base/errors.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/io/fileio.hpp"
#include "sim/io/hash.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/truth/answer_key.hpp"
#include "test_helpers.hpp"

using namespace wayward;
namespace fs = std::filesystem;
using testing::read;
using testing::run_cli;
using testing::run_command;
using testing::write;

namespace {

fs::path scratch(const std::string& name) {
    const fs::path p = fs::temp_directory_path() / ("wayward-rel-" + name + "-" + std::to_string(::getpid()));
    fs::remove_all(p);
    fs::remove_all(p.string() + "-answer-key");  // a key left by an earlier run under the same pid
    fs::create_directories(p);
    return p;
}

std::string tutorial() { return testing::source_path("scenarios/tutorial.toml"); }

// A complete tutorial exercise at dir/ex (key beside it in dir/ex-answer-key).
fs::path make_exercise(const fs::path& dir) {
    const fs::path ex = dir / "ex";
    const auto r = run_cli("new " + tutorial() + " --seed 3 --out " + ex.string());
    REQUIRE(r.status == 0);
    return ex;
}

bool contains(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

// Replaces the answer key by `text` and seals it again in the brief, as a trainer editing both would.
void reseal_key(const fs::path& ex, const std::string& text) {
    const fs::path key = fs::path(default_key_dir(ex.string())) / "answer_key.toml";
    write(key, text);
    std::string brief = read(ex / "brief.toml");
    const auto at = brief.find("answer_key_sha256 = '");
    REQUIRE(at != std::string::npos);
    const auto start = at + std::string("answer_key_sha256 = '").size();
    brief.replace(start, 64, sha256_hex(text));
    write(ex / "brief.toml", brief);
}

std::string replace_line(std::string text, const std::string& starts_with, const std::string& by) {
    const auto at = text.find("\n" + starts_with);
    REQUIRE(at != std::string::npos);
    const auto end = text.find('\n', at + 1);
    text.replace(at + 1, end - at - 1, by);
    return text;
}

}  // namespace

TEST_CASE("reliability: atomic writes never follow a planted link, at the temporary name or the final one") {
    const fs::path dir = scratch("atomic");
    const fs::path victim = dir / "victim.txt";
    write(victim, "precious");
    fs::create_directories(dir / "out");
    // The temporary name older builds used (PATH.tmp-PID) and the output name itself, both planted.
    fs::create_symlink(victim, dir / "out" / ("a.txt.tmp-" + std::to_string(::getpid())));
    write_file_atomic((dir / "out" / "a.txt").string(), "new");
    CHECK(read(dir / "out" / "a.txt") == "new");
    CHECK_FALSE(fs::is_symlink(dir / "out" / "a.txt"));
    CHECK(read(victim) == "precious");

    fs::create_symlink(victim, dir / "out" / "b.txt");
    try {
        write_file_atomic((dir / "out" / "b.txt").string(), "new");
        FAIL("a link at the output name was written through");
    } catch (const InputError& e) {
        CHECK(contains(e.what(), "b.txt"));
        CHECK(contains(e.what(), "symbolic link"));
    }
    CHECK(read(victim) == "precious");
    CHECK(fs::is_symlink(dir / "out" / "b.txt"));
    // No temporary is left behind by the refusal or the success.
    for (const auto& e : fs::directory_iterator(dir / "out")) CHECK_FALSE(contains(e.path().filename().string(), temporary_marker));
    // Key files get owner-only permissions.
    write_file_atomic((dir / "out" / "secret").string(), "x", 0600);
    CHECK((fs::status(dir / "out" / "secret").permissions() & fs::perms::all) == (fs::perms::owner_read | fs::perms::owner_write));
    fs::remove_all(dir);
}

TEST_CASE("reliability: a link planted at any name new, residuals, solve or score writes is refused; nothing outside changes") {
    const fs::path dir = scratch("links");
    const fs::path victim = dir / "victim.txt";
    write(victim, "precious");

    // new: each output name of the exercise and of the key, one at a time, in a fresh folder.
    for (const std::string name : {"new/brief.toml", "new/observations.csv", "new/observer.csv", "new-answer-key",
                                   "new-answer-key/answer_key.toml", "new-answer-key/true_positions.csv", "new/.wayward.lock"}) {
        CAPTURE(name);
        const fs::path ex = dir / "new";
        fs::remove_all(ex);
        fs::remove_all(dir / "new-answer-key");
        fs::create_directories(ex);
        fs::create_directories((dir / name).parent_path());
        fs::create_symlink(victim, dir / name);
        const auto r = run_cli("new " + tutorial() + " --seed 3 --out " + ex.string());
        CHECK(r.status == 2);
        CHECK(contains(r.output, "symbolic link"));
        CHECK(read(victim) == "precious");
        // No brief was written (the planted one, if that was the name, is still the link).
        if (name == "new/brief.toml") CHECK(fs::is_symlink(ex / "brief.toml"));
        else CHECK_FALSE(fs::exists(ex / "brief.toml"));
    }

    const fs::path ex = make_exercise(dir);
    // residuals, solve and score: a link at each of their outputs is refused before any work.
    const std::pair<std::string, std::string> cases[] = {
        {"residuals", "residuals.csv"}, {"residuals", "residuals.png"}, {"solve", "solution.toml"},
        {"score --lon 10 --lat 0 --epoch 1940", "luck_own.csv"}, {"score --lon 10 --lat 0 --epoch 1940", "luck_own.png"}};
    for (const auto& [command, name] : cases) {
        CAPTURE(name);
        fs::create_symlink(victim, ex / name);
        const std::string verb = command.substr(0, command.find(' '));
        const std::string rest = command.find(' ') == std::string::npos ? "" : command.substr(command.find(' '));
        const auto r = run_cli(verb + " " + ex.string() + rest + (verb == "score" ? "" : " --quiet"));
        CHECK(r.status == 2);
        CHECK(contains(r.output, name));
        CHECK(contains(r.output, "symbolic link"));
        CHECK(read(victim) == "precious");
        CHECK(fs::is_symlink(ex / name));
        fs::remove(ex / name);
    }
    fs::remove_all(dir);
}

TEST_CASE("reliability: two `new` runs into one folder never mix; a killed run's temporary is cleared") {
    const fs::path dir = scratch("race");
    for (int trial = 0; trial < 4; ++trial) {
        CAPTURE(trial);
        const fs::path ex = dir / ("ex" + std::to_string(trial));
        const std::string w = std::string(WAYWARD_CLI) + " new " + tutorial() + " --out " + ex.string();
        const auto r = run_command("(" + w + " --seed 3 >" + (dir / "a.txt").string() + " 2>&1 & a=$!; " + w + " --seed 4 >" +
                                   (dir / "b.txt").string() + " 2>&1 & b=$!; wait $a; sa=$?; wait $b; echo $sa $?)");
        const std::string statuses = r.output.substr(0, r.output.find('\n'));
        // Exactly one wins; the other is refused (the folder is locked, or already holds an exercise).
        CHECK((statuses == "0 2" || statuses == "2 0"));
        const std::string loser = read(dir / (statuses == "0 2" ? "b.txt" : "a.txt"));
        CHECK((contains(loser, "another wayward run is writing in this folder") || contains(loser, "an exercise already exists")));
        // The brief's digest seals the key that is there: nothing from the other seed.
        const Brief b = load_brief((ex / "brief.toml").string());
        CHECK(sha256_hex(read(fs::path(default_key_dir(ex.string())) / "answer_key.toml")) == b.answer_key_sha256);
    }
    // A full-size temporary left by a run killed with SIGKILL is ours by name and goes on the next run.
    const fs::path ex = dir / "ex0";
    const fs::path stale = ex / (std::string(".brief.toml") + temporary_marker + "Ab12Cd");
    write(stale, std::string(100000, 'x'));
    const auto r = run_cli("new " + tutorial() + " --seed 5 --out " + ex.string() + " --force");
    CHECK(r.status == 0);
    CHECK_FALSE(fs::exists(stale));
    fs::remove_all(dir);
}

TEST_CASE("reliability: residuals, solve, score and search sweep a killed run's temporaries and wait for another writer") {
    const fs::path dir = scratch("sweep");
    const fs::path ex = make_exercise(dir);
    // Leftovers of killed runs, one per command's output; each command sweeps its folder when it writes.
    const std::pair<std::string, fs::path> cases[] = {
        {"residuals " + ex.string() + " --quiet", ex / (std::string(".residuals.csv") + temporary_marker + "Zz09Yy")},
        {"solve " + ex.string() + " --quiet --samples 20 --starts 2", ex / (std::string(".solution.toml") + temporary_marker + "Qq77Rr")},
        {"score " + ex.string(), ex / (std::string(".luck.csv") + temporary_marker + "Pp55Oo")},
        {"search " + ex.string() + " --nights 1", ex / "search" / (std::string(".log.csv") + temporary_marker + "Mm33Nn")}};
    for (const auto& [command, stale] : cases) {
        CAPTURE(command);
        fs::create_directories(stale.parent_path());
        write(stale, std::string(50000, 'x'));
        const fs::path other = stale.parent_path() / ".not-ours.tmp";  // not ours by name: left alone
        write(other, "keep");
        const auto r = run_cli(command);
        CHECK(r.status == 0);
        CHECK_FALSE(fs::exists(stale));
        CHECK(read(other) == "keep");
    }
    // A writer holding the folder: a bounded wait, then a clear refusal naming the folder; released, it goes on.
    {
        const WriterLock held(ex.string(), "DIR");
        CHECK_THROWS_WITH_AS(WriterLock(ex.string(), "DIR", LockWait::wait, 0.3),
                             doctest::Contains("another wayward run is writing in this folder"), InputError);
    }
    const WriterLock after(ex.string(), "DIR", LockWait::wait, 0.3);
    fs::remove_all(dir);
}

TEST_CASE("reliability: a link planted at the search folder is refused; nothing is written through it") {
    const fs::path dir = scratch("searchlink");
    const fs::path ex = make_exercise(dir);
    REQUIRE(run_cli("solve " + ex.string() + " --quiet --samples 20 --starts 2").status == 0);
    const fs::path elsewhere = dir / "elsewhere";
    fs::create_directories(elsewhere);
    fs::create_directory_symlink(elsewhere, ex / "search");
    const auto r = run_cli("search " + ex.string() + " --nights 1");
    CHECK(r.status == 2);
    CHECK(contains(r.output, "symbolic link"));
    CHECK(fs::is_empty(elsewhere));
    fs::remove_all(dir);
}

TEST_CASE("reliability: two exercises given one --key-out never share or replace a key") {
    const fs::path dir = scratch("keyout");
    const fs::path keys = dir / "keys";
    const std::string w = std::string(WAYWARD_CLI) + " new " + tutorial() + " --key-out " + keys.string();
    // At the same time: one wins, the other is refused; the winner's brief seals the key that is there.
    const auto r = run_command("(" + w + " --seed 3 --out " + (dir / "a").string() + " >" + (dir / "a.txt").string() + " 2>&1 & a=$!; " +
                               w + " --seed 4 --out " + (dir / "b").string() + " >" + (dir / "b.txt").string() +
                               " 2>&1 & b=$!; wait $a; sa=$?; wait $b; echo $sa $?)");
    const std::string statuses = r.output.substr(0, r.output.find('\n'));
    CHECK((statuses == "0 2" || statuses == "2 0"));
    const fs::path winner = dir / (statuses == "0 2" ? "a" : "b");
    const fs::path loser = dir / (statuses == "0 2" ? "b" : "a");
    const std::string loser_text = read(dir / (statuses == "0 2" ? "b.txt" : "a.txt"));
    CHECK(contains(loser_text, "--key-out"));
    CHECK_FALSE(fs::exists(loser / "brief.toml"));
    const Brief b = load_brief((winner / "brief.toml").string());
    CHECK(sha256_hex(read(keys / "answer_key.toml")) == b.answer_key_sha256);
    // One after the other: the second is refused unless told to replace the key.
    const auto again = run_cli("new " + tutorial() + " --seed 5 --out " + (dir / "c").string() + " --key-out " + keys.string());
    CHECK(again.status == 2);
    CHECK(contains(again.output, "already holds an answer key"));
    CHECK(sha256_hex(read(keys / "answer_key.toml")) == b.answer_key_sha256);
    CHECK_FALSE(fs::exists(dir / "c"));
    fs::remove_all(dir);
}

// An address-space cap (ulimit -v) is how the system says "out of memory" to a process; the sanitizers reserve far
// more address space than any cap small enough to test, so the check runs in the plain builds only.
#if defined(__has_feature)
#if __has_feature(address_sanitizer)
#define WAYWARD_TEST_ASAN 1
#endif
#endif
#if !defined(__SANITIZE_ADDRESS__) && !defined(WAYWARD_TEST_ASAN)
TEST_CASE("reliability: out of memory is exit status 3 with a plain message, never an abort, and leaves no temporary") {
    const fs::path dir = scratch("oom");
    const fs::path ex = make_exercise(dir);
    // Address-space caps from too small to start (the loader refuses: 127) to enough for the solve (0); in between
    // the solve runs out of memory somewhere (a thread, an integration, a matrix) and must say so with status 3.
    int out_of_memory = 0;
    for (int kb = 20000; kb <= 60000; kb += 2500) {
        CAPTURE(kb);
        fs::remove(ex / "solution.toml");
        const auto r = run_command("ulimit -v " + std::to_string(kb) + "; " + std::string(WAYWARD_CLI) + " solve " + ex.string() +
                                   " --quiet 2>&1; echo status=$?");
        const bool ok = contains(r.output, "status=0"), oom = contains(r.output, "status=3");
        // Too small to start: the loader refuses (127), or, in a narrow band of caps just above that, a shared
        // library's own initialiser (libpixman's, loaded with cairo) crashes before main. The band moves as the
        // binary grows; a program that dies the same way printing its help under the same cap never started.
        bool no_start = contains(r.output, "status=127");
        if (!ok && !oom && !no_start)
            no_start = !contains(run_command("ulimit -v " + std::to_string(kb) + "; " + std::string(WAYWARD_CLI) + " --help > /dev/null 2>&1; echo status=$?").output,
                                 "status=0");
        CHECK((ok || oom || no_start));
        if (oom) {
            ++out_of_memory;
            CHECK(contains(r.output, "out of memory"));
            CHECK_FALSE(fs::exists(ex / "solution.toml"));
        }
        CHECK_FALSE(contains(r.output, "terminate called"));
        CHECK_FALSE(contains(r.output, "std::bad_alloc"));
        for (const auto& e : fs::directory_iterator(ex)) CHECK(e.path().filename().string().find(temporary_marker) == std::string::npos);
    }
    CHECK(out_of_memory > 0);
    fs::remove_all(dir);
}
#endif

TEST_CASE("reliability: an answer key without its tables, or empty, is refused with a message, not a crash") {
    const fs::path dir = scratch("key");
    const fs::path ex = make_exercise(dir);
    const std::string key = read(fs::path(default_key_dir(ex.string())) / "answer_key.toml");
    const std::string without_head = replace_line(key, "[answer_key]", "[answer_keys]");
    const std::string without_star = replace_line(key, "[star]", "[stars]");
    // A negative mass in the key (the digest resealed, so only the reader can catch it).
    std::string negative = key;
    const auto mass = negative.find("\nmass = ", negative.find("[[body]]"));
    REQUIRE(mass != std::string::npos);
    negative.insert(mass + 8, "-");
    const std::pair<std::string, std::string> cases[] = {{"", "the [answer_key] table is missing"},
                                                         {without_head, "the [answer_key] table is missing"},
                                                         {without_star, "the [star] table is missing"},
                                                         {negative, "must be positive"}};
    for (const auto& [text, message] : cases) {
        CAPTURE(message);
        reseal_key(ex, text);
        const auto r = run_cli("score " + ex.string() + " --lon 10 --lat 0 --epoch 1940");
        CHECK(r.status == 2);
        CHECK(contains(r.output, "answer_key.toml"));
        CHECK(contains(r.output, message));
    }
    fs::remove_all(dir);
}

TEST_CASE("reliability: inputs that would hang or run away are refused up front") {
    const fs::path dir = scratch("runaway");
    const fs::path ex = make_exercise(dir);
    // A solution whose track years go back: scoring would step along it for ever.
    write(ex / "bad.toml", "[solution]\nexercise_sha256 = '" + load_brief((ex / "brief.toml").string()).answer_key_sha256 +
                               "'\n[prediction]\nepoch_year = 1940.0\nlon_deg = 10.0\nlat_deg = 0.0\n"
                               "track_year = [1940.0, 1940.0, 1939.0]\ntrack_lon_deg = [1.0, 2.0, 3.0]\ntrack_lat_deg = [0.0, 0.0, 0.0]\n");
    auto r = run_cli("score " + ex.string() + " --solution " + (ex / "bad.toml").string());
    CHECK(r.status == 2);
    CHECK(contains(r.output, "bad.toml"));
    CHECK(contains(r.output, "prediction.track_year"));

    // One observation a billion days before epoch 0: the model would integrate (and allocate) for it.
    const std::string obs = read(ex / "observations.csv");
    std::string early = obs;
    const auto row2 = early.find('\n') + 1;
    early.replace(row2, early.find(',', row2) - row2, "-1000000000");
    write(ex / "observations.csv", early);
    r = run_cli("residuals " + ex.string() + " --quiet");
    CHECK(r.status == 2);
    CHECK(contains(r.output, "observations.csv:2: field 'time_days'"));
    CHECK(contains(r.output, "outside the brief's span"));
    write(ex / "observations.csv", obs);

    // Scenario integers that wrap when narrowed, a hopeless energy limit, and a planet that circles in hours.
    const std::string text = read(tutorial());
    const std::pair<std::string, std::string> scenarios[] = {
        {replace_line(text, "span_years", "span_years = 160.0\n[scenario.plausibility]\nmax_draws = 4294967297"), "scenario.plausibility.max_draws"},
        {replace_line(text, "span_years", "span_years = 160.0\n[scenario.plausibility]\nmax_energy_error = 1e-30"), "max_energy_error"},
        {replace_line(text, "a = 1.0", "a = 0.01"), "revolutions"},
        {replace_line(replace_line(text, "a = 1.0", "a = 0.2"), "span_years", "span_years = 160.0\n[scenario.plausibility]\nmax_draws = 2000"),
         "could run for a long time"},
        {replace_line(text, "per_season", "per_season = 4294967297"), "per_season"}};
    for (const auto& [scenario, field] : scenarios) {
        CAPTURE(field);
        write(dir / "s.toml", scenario);
        r = run_cli("new " + (dir / "s.toml").string() + " --seed 1 --out " + (dir / "never").string());
        CHECK(r.status == 2);
        CHECK(contains(r.output, "s.toml:"));
        CHECK(contains(r.output, field));
        CHECK_FALSE(fs::exists(dir / "never"));
    }
    fs::remove_all(dir);
}

TEST_CASE("reliability: new refuses what its own readers would refuse") {
    const fs::path dir = scratch("boundary");
    const std::string text = read(tutorial());
    const std::pair<std::string, std::string> scenarios[] = {
        {replace_line(text, "name = \"Varn\"", "name = \"Varn, the second\""), "comma"},
        {replace_line(text, "name = \"Varn\"", "name = \"Varn\\nsecond\""), "control character"},
        {replace_line(text, "label = \"modern\"", "label = \"modern\"\nsigma_lon_arcsec = 1e-300"), "sigma_lon_arcsec"},
        {replace_line(text, "a = 5.5", "a = 1e308"), "must be in (0, 1e6] au"}};
    for (const auto& [scenario, message] : scenarios) {
        CAPTURE(message);
        write(dir / "s.toml", scenario);
        const auto r = run_cli("new " + (dir / "s.toml").string() + " --seed 1 --out " + (dir / "never").string());
        CHECK(r.status == 2);
        CHECK(contains(r.output, message));
        CHECK_FALSE(fs::exists(dir / "never"));
    }
    fs::remove_all(dir);
}

TEST_CASE("reliability: silent acceptance is gone: duplicated rows, NaN options, bad windows, bad brief integers") {
    const fs::path dir = scratch("silent");
    const fs::path ex = make_exercise(dir);
    const std::string obs = read(ex / "observations.csv");
    const auto row2 = obs.find('\n') + 1;
    const std::string first_row = obs.substr(row2, obs.find('\n', row2) - row2 + 1);
    write(ex / "observations.csv", obs + first_row);
    auto r = run_cli("residuals " + ex.string() + " --quiet");
    CHECK(r.status == 2);
    CHECK(contains(r.output, "observations.csv:"));
    CHECK(contains(r.output, "duplicated row"));
    // A UTF-8 byte-order mark before the header is read past.
    write(ex / "observations.csv", "\xEF\xBB\xBF" + obs);
    CHECK_NOTHROW(load_exercise(ex.string()));
    write(ex / "observations.csv", obs);

    for (const std::string opts : {"--lon nan --lat 0 --epoch 1940", "--lon 10 --lat 0 --epoch 1940 --window -1",
                                   "--lon 10 --lat 0 --epoch 1940 --window nan", "--lon 10 --lat 0 --epoch 1940 --window 1e300"}) {
        CAPTURE(opts);
        r = run_cli("score " + ex.string() + " " + opts);
        CHECK(r.status == 2);
        CHECK(contains(r.output, "wayward: option '--"));
        CHECK_FALSE(contains(r.output, "wayward: :"));
    }

    const std::string brief = read(ex / "brief.toml");
    const std::pair<std::string, std::string> briefs[] = {
        {replace_line(brief, "    per_season", "    per_season = -5"), "observing.era[1].per_season"},
        {replace_line(brief, "span_years", "span_years = 0.0"), "exercise.span_years"},
        {replace_line(brief, "a = ", "a = 1e308"), "must be in (0, 1e5] au"}};
    for (const auto& [text, message] : briefs) {
        CAPTURE(message);
        write(ex / "brief.toml", text);
        r = run_cli("residuals " + ex.string() + " --quiet");
        CHECK(r.status == 2);
        CHECK(contains(r.output, "brief.toml:"));
        CHECK(contains(r.output, message));
    }
    fs::remove_all(dir);
}

TEST_CASE("reliability: messages say why a file cannot be read, and what was wrong on the command line") {
    const fs::path dir = scratch("messages");
    auto r = run_cli("score " + dir.string() + " --prediction " + dir.string());
    CHECK(r.status == 2);
    r = run_cli("new " + dir.string() + " --out " + (dir / "x").string());
    CHECK(r.status == 2);
    CHECK(contains(r.output, "is a folder, not a file"));
    r = run_cli("new " + (dir / "missing.toml").string() + " --out " + (dir / "x").string());
    CHECK(r.status == 2);
    CHECK(contains(r.output, "it does not exist"));
    r = run_cli("frobnicate x");
    CHECK(r.status == 2);
    CHECK(contains(r.output, "unknown command 'frobnicate'"));
    // A late option error leaves no empty output folder behind.
    write(dir / "plain", "x");
    r = run_cli("new " + tutorial() + " --seed 1 --out " + (dir / "ex").string() + " --key-out " + (dir / "plain" / "key").string());
    CHECK(r.status == 2);
    CHECK(contains(r.output, "--key-out"));
    CHECK_FALSE(fs::exists(dir / "ex"));
    fs::remove_all(dir);
}

TEST_CASE("reliability: the trainee's folder alone cannot reproduce the truth; the key is the owner's alone") {
    const fs::path dir = scratch("seal");
    // No --seed: a secret one, printed nowhere but into the key.
    const auto r = run_cli("new " + tutorial() + " --out " + (dir / "ex").string());
    REQUIRE(r.status == 0);
    const fs::path ex = dir / "ex", key = dir / "ex-answer-key";
    CHECK(contains(r.output, "a secret random seed"));
    CHECK_FALSE(contains(r.output, "seed 1"));
    // The trainee's folder: no seed anywhere, no key inside it.
    for (const auto& e : fs::recursive_directory_iterator(ex)) {
        CAPTURE(e.path());
        CHECK(e.is_regular_file());
        CHECK_FALSE(contains(read(e.path()), "seed"));
        CHECK_FALSE(contains(read(e.path()), "salt"));
    }
    CHECK_FALSE(fs::exists(ex / "answer-key"));
    // The key beside it: owner-only, holding the seed and the salt that make the brief's digest a commitment.
    CHECK((fs::status(key).permissions() & fs::perms::all) == fs::perms::owner_all);
    for (const char* f : {"answer_key.toml", "true_positions.csv"})
        CHECK((fs::status(key / f).permissions() & fs::perms::all) == (fs::perms::owner_read | fs::perms::owner_write));
    const std::string key_text = read(key / "answer_key.toml");
    CHECK(contains(key_text, "seed = "));
    const auto salt_at = key_text.find("salt = '");
    REQUIRE(salt_at != std::string::npos);
    const std::string salt = key_text.substr(salt_at + 8, key_text.find('\'', salt_at + 8) - salt_at - 8);
    CHECK(salt.size() == 32);  // 128 random bits, as hex
    CHECK(salt.find_first_not_of("0123456789abcdef") == std::string::npos);
    // Regenerating with a guessed seed cannot match the digest: even the same seed gives another (salted) key.
    const auto again = run_cli("new " + tutorial() + " --seed 3 --out " + (dir / "a").string());
    const auto twice = run_cli("new " + tutorial() + " --seed 3 --out " + (dir / "b").string());
    REQUIRE(again.status == 0);
    REQUIRE(twice.status == 0);
    CHECK(load_brief((dir / "a" / "brief.toml").string()).answer_key_sha256 != load_brief((dir / "b" / "brief.toml").string()).answer_key_sha256);
    fs::remove_all(dir);
}

TEST_CASE("reliability: a TOML input that trips toml++'s own assertion in a header-only build is a clean InputError here") {
    // Found by fuzzing toml++ 3.3.0 header-only with assertions on (parse_key asserts); Debian's shared
    // libtomlplusplus, which we link, reports a parse error instead.
    CHECK_THROWS_WITH_AS(detail::parse_toml("[,", "x.toml"), doctest::Contains("x.toml:1: malformed TOML"), InputError);
}

TEST_CASE("reliability: new says so when a scenario has no hidden body instead of claiming one") {
    const fs::path dir = scratch("control");
    std::string text = read(tutorial());
    const auto from = text.find("[[body]]\nname = \"Ember\"");
    const auto to = text.find("[observing]");
    REQUIRE(from != std::string::npos);
    REQUIRE(to != std::string::npos);
    text.erase(from, to - from);
    write(dir / "control.toml", text);
    const auto r = run_cli("new " + (dir / "control.toml").string() + " --seed 1 --out " + (dir / "ex").string());
    CHECK(r.status == 0);
    CHECK(contains(r.output, "No hidden body"));
    CHECK_FALSE(contains(r.output, "A hidden body is in the system"));
    fs::remove_all(dir);
}

TEST_CASE("reliability: score still finds the key of a folder made before the key moved beside it") {
    const fs::path dir = scratch("legacy");
    const fs::path ex = make_exercise(dir);
    fs::rename(dir / "ex-answer-key", ex / "answer-key");
    CHECK(find_answer_key(ex.string()) == (ex / "answer-key" / "answer_key.toml").string());
    const auto r = run_cli("score " + ex.string() + " --lon 10 --lat 0 --epoch 1940");
    CHECK(r.status == 0);
    CHECK(contains(r.output, "Answer key verified"));
    fs::remove_all(dir);
}
