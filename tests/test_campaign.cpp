// Campaigns in process: the spec's bad input (named by file, line and field, refused before any work), case
// numbering and shards, stable system seeds, the table's rows and the Wilson interval. The runs themselves (threads, shards, kill and resume, merge) are
// exercised through the CLI in tests/campaign_runs.sh.
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>

#include "sim/io/fileio.hpp"
#include "sim/campaign/campaign.hpp"
#include "sim/base/errors.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/truth/observe.hpp"
#include "sim/base/statistics.hpp"
#include "sim/base/units.hpp"
#include "test_helpers.hpp"

using namespace wayward;
namespace fs = std::filesystem;

namespace {

fs::path temp_dir(const std::string& name) {
    const fs::path p = fs::temp_directory_path() / ("wayward-campaign-" + name + "-" + std::to_string(::getpid()));
    fs::remove_all(p);
    fs::remove_all(p.string() + "-answer-key");  // a key left by an earlier run under the same pid
    fs::create_directories(p);
    return p;
}

void write(const fs::path& p, const std::string& s) { std::ofstream(p, std::ios::binary) << s; }

// A small valid spec; `extra` is appended (more tables), `epochs` and `seeds` replace the defaults.
std::string spec_text(const std::string& scenario_file, const std::string& seeds = "2", const std::string& epochs = "offsets_years = [0, 10]",
                      const std::string& extra = "") {
    return "[campaign]\nname = \"t\"\nseed = 3\nseeds = " + seeds + "\n\n[[scenario]]\nfile = \"" + scenario_file + "\"\n\n[epochs]\n" + epochs +
           "\n\n[[settings]]\nname = \"free\"\nsamples = 50\n" + extra;
}

struct Refusal {
    std::string file, field, message;
    long line = 0;
};

Refusal refusal_of(const fs::path& spec) {
    Refusal r;
    try {
        load_campaign_spec(spec.string());
        r.message = "(accepted)";
    } catch (const InputError& e) {
        r.file = e.file();
        r.line = e.line();
        r.field = e.field();
        r.message = e.what();
    }
    return r;
}

}  // namespace

TEST_CASE("campaign spec: bad input names file, line and field") {
    const fs::path dir = temp_dir("spec");
    const std::string quick = testing::source_path("scenarios/quick.toml");
    const fs::path spec = dir / "spec.toml";

    write(spec, spec_text(quick));
    const CampaignSpec ok = load_campaign_spec(spec.string());
    CHECK(ok.cases() == 4);  // 1 scenario x 2 seeds x 1 settings x 2 epochs
    CHECK(ok.scenarios[0].epochs_year == std::vector<double>{1995.0, 2005.0});

    write(spec, spec_text("no-such-scenario.toml"));
    Refusal r = refusal_of(spec);
    CHECK(r.file == spec.string());
    CHECK(r.field == "scenario.file");
    CHECK(r.line == 7);  // the line of file = ... in the spec
    CHECK(r.message.find("no scenario file") != std::string::npos);

    write(spec, spec_text(quick, "0"));
    r = refusal_of(spec);
    CHECK(r.field == "campaign.seeds");
    CHECK(r.line == 4);
    CHECK(r.message.find("at least 1") != std::string::npos);

    // quick.toml spans 1900-2010 and searches in 1995: an offset of +20 is 2015, outside.
    write(spec, spec_text(quick, "2", "offsets_years = [0, 20]"));
    r = refusal_of(spec);
    CHECK(r.field == "epochs.offsets_years");
    CHECK(r.line == 10);
    CHECK(r.message.find("outside") != std::string::npos);
    write(spec, spec_text(quick, "2", "years = [1850]"));
    CHECK(refusal_of(spec).field == "epochs.years");
    write(spec, spec_text(quick, "2", "years = [1990]\noffsets_years = [0]"));
    CHECK(refusal_of(spec).message.find("not both") != std::string::npos);

    write(spec, spec_text(quick, "2", "offsets_years = [0]", "bogus = 1\n"));
    r = refusal_of(spec);
    CHECK(r.field == "settings.bogus");
    CHECK(r.message.find("unknown field") != std::string::npos);

    write(spec, spec_text(quick, "2", "offsets_years = [0]", "distance = \"spacing:2\"\n"));
    r = refusal_of(spec);
    CHECK(r.field == "settings.distance");
    CHECK(r.message.find("(0, 1)") != std::string::npos);

    write(spec, spec_text(quick, "2", "offsets_years = [0]", "\n[[settings]]\nname = \"free\"\n"));
    CHECK(refusal_of(spec).message.find("two settings") != std::string::npos);

    write(spec, spec_text(quick, "2", "offsets_years = [0]", "starts = 0\n"));
    CHECK(refusal_of(spec).field == "settings.starts");

    write(spec, "[campaign]\nname = \"t\"\nseeds = 1\n");
    CHECK(refusal_of(spec).field == "campaign.seed");

    // A count of cases no machine could finish (1e6 seeds x 1 settings x 1000 epochs = 1e9) is refused up front.
    std::string many = "offsets_years = [";
    for (int k = 0; k < 1000; ++k) many += (k ? ", " : "") + std::to_string(-k * 0.05);
    many += "]";
    write(spec, spec_text(quick, "1000000", many));
    r = refusal_of(spec);
    CHECK(r.field == "campaign.seeds");
    CHECK(r.message.find("at most 10000000") != std::string::npos);

    // A broken scenario is named by its own file.
    const fs::path broken = dir / "broken.toml";
    write(broken, "[scenario]\nname = \"x\"\nspan_years = -3\n");
    write(spec, spec_text("broken.toml"));
    r = refusal_of(spec);
    CHECK(r.file == (dir / "broken.toml").string());
    fs::remove_all(dir);
}

TEST_CASE("campaign CLI: bad input exits 2 with a clear message before any work, and writes nothing") {
    const fs::path dir = temp_dir("cli");
    const std::string quick = testing::source_path("scenarios/quick.toml");
    const fs::path spec = dir / "spec.toml";
    const fs::path out = dir / "out";

    write(spec, spec_text(quick, "0"));
    auto r = testing::run_cli("campaign " + spec.string() + " --out " + out.string());
    CHECK(r.status == 2);
    CHECK(r.output.find(spec.string() + ":4: field 'campaign.seeds'") != std::string::npos);
    CHECK_FALSE(fs::exists(out));

    write(spec, spec_text(quick, "2", "offsets_years = [0, 40]"));
    r = testing::run_cli("campaign " + spec.string() + " --out " + out.string());
    CHECK(r.status == 2);
    CHECK(r.output.find("outside") != std::string::npos);
    CHECK_FALSE(fs::exists(out));

    write(spec, spec_text(quick));
    r = testing::run_cli("campaign " + spec.string() + " --out " + out.string() + " --shard 4/3");
    CHECK(r.status == 2);
    CHECK(r.output.find("--shard") != std::string::npos);
    CHECK_FALSE(fs::exists(out));

    // An output folder that cannot be made (its parent is a file; permission bits would not stop root).
    write(dir / "plain-file", "x");
    r = testing::run_cli("campaign " + spec.string() + " --out " + (dir / "plain-file" / "out").string());
    CHECK(r.status == 2);
    CHECK(r.output.find("field '--out'") != std::string::npos);
    CHECK(r.output.find("cannot create the folder") != std::string::npos);

    // Links planted at the lock's or the table's name are refused, and what they point to is left alone.
    const fs::path victim = dir / "victim.txt";
    write(victim, "keep me\n");
    write(spec, spec_text(quick));
    for (const char* name : {".wayward.lock", "cases.csv"}) {
        const fs::path planted = dir / (std::string("planted-") + (name[0] == '.' ? "lock" : "cases"));
        fs::create_directories(planted);
        fs::create_symlink(victim, planted / name);
        r = testing::run_cli("campaign " + spec.string() + " --out " + planted.string() + " --quiet");
        INFO(name, ": ", r.output);
        CHECK(r.status != 0);
        CHECK(testing::read(victim) == "keep me\n");
        CHECK(fs::is_symlink(planted / name));
    }

    r = testing::run_cli("merge " + (dir / "nowhere").string() + " --out " + out.string());
    CHECK(r.status == 2);
    CHECK(r.output.find("manifest") != std::string::npos);
    CHECK_FALSE(fs::exists(out));
    fs::remove_all(dir);
}

TEST_CASE("campaign: case numbering, shards and stable system seeds") {
    const fs::path dir = temp_dir("numbers");
    const std::string quick = testing::source_path("scenarios/quick.toml");
    const std::string tutorial = testing::source_path("scenarios/tutorial.toml");
    const fs::path spec = dir / "spec.toml";
    write(spec, spec_text(quick, "3", "offsets_years = [-10, 0, 5]", "\n[[settings]]\nname = \"circ\"\ncircular = true\nsamples = 50\n"));
    const CampaignSpec s = load_campaign_spec(spec.string());
    REQUIRE(s.cases() == 3 * 2 * 3);
    for (std::size_t c = 0; c < s.cases(); ++c) CHECK(case_index(s, case_key(s, c)) == c);
    const Shard shards[3] = {parse_shard("1/3"), parse_shard("2/3"), parse_shard("3/3")};
    for (std::size_t u = 0; u < s.units(); ++u) {
        int holders = 0;
        for (const Shard& sh : shards) holders += sh.holds_unit(u) ? 1 : 0;
        CHECK(holders == 1);
    }
    CHECK_THROWS_AS(parse_shard("0/3"), InputError);
    CHECK_THROWS_AS(parse_shard("3"), InputError);
    CHECK_THROWS_AS(parse_shard("a/b"), InputError);

    // A system's seed depends on (campaign seed, scenario name, seed number) only: adding seeds or another
    // scenario leaves the earlier systems as they were; the campaign seed changes them.
    std::set<std::uint64_t> seeds;
    for (std::size_t k = 0; k < s.seeds; ++k) seeds.insert(campaign_system_seed(s, 0, k));
    CHECK(seeds.size() == s.seeds);
    write(spec, spec_text(quick, "5", "offsets_years = [0]", "\n[[scenario]]\nfile = \"" + tutorial + "\"\n"));
    const CampaignSpec grown = load_campaign_spec(spec.string());
    for (std::size_t k = 0; k < s.seeds; ++k) CHECK(campaign_system_seed(grown, 0, k) == campaign_system_seed(s, 0, k));
    CHECK(campaign_system_seed(grown, 1, 0) != campaign_system_seed(grown, 0, 0));
    CHECK(grown.id != s.id);
    fs::remove_all(dir);
}

TEST_CASE("campaign rows: a row survives formatting and parsing, and a damaged row is named by its line") {
    CaseRow r;
    r.index = 17;
    r.scenario = "quick";
    r.seed = 5808391462932554ULL;
    r.settings = "free";
    r.epoch_year = 2005;
    r.epoch_offset_years = 10;
    r.separation_arcmin = 28.62065;
    r.field_radius_arcmin = 120;
    r.hit = true;
    r.mahalanobis = 1.553922;
    r.radius90_arcmin = 40.5;
    r.map_rank = 0.4321;
    r.luck_fraction = 0.75;
    r.closest_year = 1968;
    r.closest_arcmin = 8.1;
    r.data_centre_year = 1944.7665;
    r.fitted_a_au = 20.27;
    r.true_a_au = 20.21;
    r.fitted_mass = 1.44218e-4;
    r.true_mass = 1.429494e-4;
    r.unit_seconds = 1.5;
    const std::string line = format_case_row(r);
    CHECK(line.back() == '\n');
    CHECK(std::count(line.begin(), line.end(), ',') == 29);
    const CaseRow back = parse_case_row(line.substr(0, line.size() - 1), "cases.csv", 5);
    CHECK(format_case_row(back) == line);
    CHECK(back.map_rank == 0.4321);
    // A rank outside [0, 1] is refused by name.
    CaseRow odd = r;
    odd.map_rank = 1.5;
    const std::string oline = format_case_row(odd);
    try {
        (void)parse_case_row(oline.substr(0, oline.size() - 1), "cases.csv", 6);
        FAIL("a map rank of 1.5 was accepted");
    } catch (const InputError& e) {
        CHECK(e.field() == "map_rank");
    }
    CHECK(back.inside_sigma(2.0));
    CHECK_FALSE(back.inside_sigma(1.0));
    CHECK(back.radius90_holds());

    // A record that did not demand a body: status "undetected", no hit, the separation kept for the record.
    CaseRow quiet = r;
    quiet.detected = false;
    quiet.hit = false;
    const std::string qline = format_case_row(quiet);
    CHECK(split_csv_line(qline.substr(0, qline.size() - 1))[6] == "undetected");
    const CaseRow qback = parse_case_row(qline.substr(0, qline.size() - 1), "cases.csv", 7);
    CHECK(qback.ok);
    CHECK_FALSE(qback.detected);
    CHECK_FALSE(qback.hit);
    CHECK(format_case_row(qback) == qline);

    CaseRow failed = r;
    failed.ok = false;
    failed.note = "the solve failed: no fit, at all";  // the comma must not break the row
    failed.separation_arcmin = NAN;
    failed.mahalanobis.reset();
    failed.hit = false;
    const std::string fline = format_case_row(failed);
    CHECK(split_csv_line(fline.substr(0, fline.size() - 1)).size() == 30);  // the note's comma is quoted, not a separator
    const CaseRow fback = parse_case_row(fline.substr(0, fline.size() - 1), "cases.csv", 6);
    CHECK(fback.note == failed.note);
    CHECK_FALSE(fback.ok);
    CHECK_FALSE(fback.hit);

    try {
        parse_case_row(line.substr(0, 40), "cases.csv", 9);
        FAIL("a torn row was accepted");
    } catch (const InputError& e) {
        CHECK(e.file() == "cases.csv");
        CHECK(e.line() == 9);
    }
}

TEST_CASE("Wilson interval of a success rate") {
    // Reference: scipy.stats.binomtest(k, n).proportion_ci(method="wilson") from Debian's python3-scipy 1.10.
    const RateInterval all = wilson_rate(5, 5, 0.95);
    CHECK(all.rate == 1.0);
    CHECK(all.hi == 1.0);
    CHECK(all.lo == doctest::Approx(0.5655175352168251).epsilon(1e-12));  // 5 of 5 is not [1, 1]
    const RateInterval none = wilson_rate(0, 10, 0.95);
    CHECK(none.lo == 0.0);
    CHECK(none.hi == doctest::Approx(0.27753279986288926).epsilon(1e-12));
    const RateInterval some = wilson_rate(7, 20, 0.95);
    CHECK(some.lo == doctest::Approx(0.1811918241010821).epsilon(1e-12));
    CHECK(some.hi == doctest::Approx(0.5671457233147637).epsilon(1e-12));
    std::vector<bool> half(100, false);
    for (std::size_t i = 0; i < half.size(); i += 2) half[i] = true;
    const RateInterval h = wilson_rate(half, 0.95);
    CHECK(h.rate == 0.5);
    CHECK(h.lo == doctest::Approx(0.4038315303659956).epsilon(1e-12));
    CHECK(h.hi == doctest::Approx(0.5961684696340044).epsilon(1e-12));
    CHECK(std::isnan(wilson_rate(0, 0, 0.95).rate));
}

TEST_CASE("campaign rows with the search: found, night and hours survive; inconsistent cells are named") {
    CaseRow r;
    r.index = 3;
    r.scenario = "quick";
    r.seed = 11;
    r.settings = "free";
    r.epoch_year = 2005;
    r.separation_arcmin = 3.0;
    r.field_radius_arcmin = 120;
    r.searched = true;
    r.search_found = true;
    r.search_night = 4;
    r.search_hours = 12.25;
    const std::string line = format_case_row(r);
    const CaseRow back = parse_case_row(line.substr(0, line.size() - 1), "cases.csv", 2);
    CHECK(back.searched);
    CHECK(back.search_found);
    CHECK(back.search_night == 4);
    CHECK(back.search_hours == 12.25);
    CHECK(format_case_row(back) == line);
    CaseRow missed = r;
    missed.search_found = false;
    missed.search_night = 0;
    const std::string mline = format_case_row(missed);
    CHECK(mline.find(",0,,12.25,") != std::string::npos);
    CHECK_FALSE(parse_case_row(mline.substr(0, mline.size() - 1), "cases.csv", 2).search_found);
    CaseRow off = r;
    off.searched = false;
    const std::string oline = format_case_row(off);
    CHECK(oline.find(",,,,") != std::string::npos);  // three empty search cells and an empty note
    CHECK_FALSE(parse_case_row(oline.substr(0, oline.size() - 1), "cases.csv", 2).searched);
    // A night without "found", or a found row without a night, is a damaged row named by its field.
    std::string bad = mline.substr(0, mline.size() - 1);
    bad.replace(bad.find(",0,,12.25,"), 10, ",0,3,12.25,");
    try {
        parse_case_row(bad, "cases.csv", 7);
        FAIL("a night without a discovery was accepted");
    } catch (const InputError& e) {
        CHECK(e.line() == 7);
        CHECK(e.field() == "search_night");
    }
}

TEST_CASE("campaign spec: the [search] table") {
    const fs::path dir = temp_dir("search-spec");
    const std::string quick = testing::source_path("scenarios/quick.toml");
    const fs::path spec = dir / "spec.toml";
    write(spec, spec_text(quick));
    CHECK_FALSE(load_campaign_spec(spec.string()).search.on);  // off unless asked for
    write(spec, spec_text(quick, "2", "offsets_years = [0, 10]", "\n[search]\nnights = 12\nstrategy = \"spiral\"\n"));
    const CampaignSpec on = load_campaign_spec(spec.string());
    CHECK(on.search.on);
    CHECK(on.search.nights == 12);
    CHECK(on.search.strategy == "spiral");
    for (const auto& [extra, field] : std::vector<std::pair<std::string, std::string>>{
             {"\n[search]\nnights = 0\n", "search.nights"},
             {"\n[search]\nnights = 400\n", "search.nights"},
             {"\n[search]\nstrategy = \"plan\"\n", "search.strategy"},
             {"\n[search]\nstrategy = \"zigzag\"\n", "search.strategy"},
             {"\n[search]\nnightz = 3\n", "search.nightz"}}) {
        write(spec, spec_text(quick, "2", "offsets_years = [0, 10]", extra));
        const Refusal r = refusal_of(spec);
        CAPTURE(extra);
        CHECK(r.file == spec.string());
        CHECK(r.field == field);
        CHECK(r.line > 0);
    }
    fs::remove_all(dir);
}

TEST_CASE("Wilson interval of a proportion") {
    // Newcombe (1998), Statistics in Medicine 17, 857, Table I, method 3 (Wilson score), from memory of the table:
    // 81/263 -> 0.2553, 0.3662; 15/148 -> 0.0624, 0.1605; 0/20 -> 0, 0.1611; 1/29 -> 0.0061, 0.1718.
    const WilsonInterval a = wilson_interval(81, 263), b = wilson_interval(15, 148), c = wilson_interval(0, 20),
                         d = wilson_interval(1, 29);
    CHECK(std::abs(a.lo - 0.2553) < 5e-5);
    CHECK(std::abs(a.hi - 0.3662) < 5e-5);
    CHECK(std::abs(b.lo - 0.0624) < 5e-5);
    CHECK(std::abs(b.hi - 0.1605) < 5e-5);
    CHECK(c.lo == 0.0);
    CHECK(std::abs(c.hi - 0.1611) < 5e-5);
    CHECK(std::abs(d.lo - 0.0061) < 5e-5);
    CHECK(std::abs(d.hi - 0.1718) < 5e-5);
    CHECK(std::isnan(wilson_interval(0, 0).lo));
}
