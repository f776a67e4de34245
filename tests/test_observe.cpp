// Synthetic observations and exercise folders: determinism, noise statistics, visibility, plausibility,
// the sealed answer key, and bad input in the observing plan.
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>

#include "sim/commands/commands.hpp"
#include "sim/base/errors.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/io/hash.hpp"
#include "sim/truth/observe.hpp"
#include "sim/base/units.hpp"
#include "test_helpers.hpp"

using namespace wayward;
namespace fs = std::filesystem;

namespace {

const char* kNoisy = R"(
[scenario]
name = "noise test"
epoch0_year = 1800.0
span_years = 120

[star]
name = "S"
mass = 1.0

[[body]]
name = "Obs"
role = "known"
observer = true
mass = 3e-6
a = 1.0
e = 0.01
mean_anomaly_deg = 0

[[body]]
name = "Far"
role = "known"
mass = 5e-5
a = 12.0
e = 0.02
i_deg = 3.0
node_deg = 20
mean_anomaly_deg = 40

[observing]
targets = ["Far"]
elongation_limit_deg = 30.0
search_epoch_year = 1900.0
field_radius_deg = 1.0

[[observing.era]]
label = "old"
start_year = 1800.0
end_year = 1860.0
per_season = 40
sigma_lon_arcsec = 2.0
sigma_lat_arcsec = 3.0
offset_lon_arcsec = 1.5
offset_lat_arcsec = -0.8
drift_lon_arcsec_per_yr = 0.05
drift_lat_arcsec_per_yr = 0.0
precision_arcsec = 0.5
outlier_fraction = 0.05
outlier_sigma_arcsec = 60.0
records_sigma = false

[[observing.era]]
label = "new"
start_year = 1860.0
end_year = 1900.0
per_season = 40
sigma_lon_arcsec = 0.3
sigma_lat_arcsec = 0.3
records_sigma = true
)";

std::string replace(std::string s, const std::string& from, const std::string& to) {
    const auto pos = s.find(from);
    REQUIRE(pos != std::string::npos);
    return s.replace(pos, from.size(), to);
}

std::string read(const fs::path& p) {
    std::ifstream in(p, std::ios::binary);
    std::ostringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

fs::path fresh_dir(const std::string& name) {
    const fs::path p = fs::temp_directory_path() / ("wayward-test-" + name + "-" + std::to_string(::getpid()));
    fs::remove_all(p);
    return p;
}

struct Generated {
    Scenario sc;
    Truth truth;
    IntegrationResult run;
    ObservationSet obs;
};

Generated make(const std::string& text, std::uint64_t seed) {
    Generated g;
    g.sc = parse_scenario(text, "noise.toml");
    g.truth = generate(g.sc, seed, &g.run);
    g.obs = observe(g.sc, g.truth, g.run.ephemeris, seed);
    return g;
}

std::string expect_error(const std::string& text, std::string* field = nullptr, long* line = nullptr) {
    try {
        parse_scenario(text, "plan.toml");
    } catch (const InputError& e) {
        if (field) *field = e.field();
        if (line) *line = e.line();
        return e.what();
    }
    return "no error";
}

}  // namespace

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

TEST_CASE("noise statistics per era: sigma, offset and drift, rounding, outliers") {
    const Generated g = make(kNoisy, 11);
    std::map<std::string, std::vector<std::size_t>> by_era;
    for (std::size_t k = 0; k < g.obs.records.size(); ++k) by_era[g.obs.records[k].era].push_back(k);
    REQUIRE(by_era["old"].size() > 800);
    REQUIRE(by_era["new"].size() > 500);

    struct EraExpect { const char* label; double s_lon, s_lat, off_lon, off_lat, drift_lon, precision, out_frac, start; };
    for (const EraExpect& ex : {EraExpect{"old", 2.0, 3.0, 1.5, -0.8, 0.05, 0.5, 0.05, 1800.0},
                                EraExpect{"new", 0.3, 0.3, 0.0, 0.0, 0.0, 0.0, 0.0, 1860.0}}) {
        CAPTURE(ex.label);
        const auto& idx = by_era[ex.label];
        double chi_lon = 0, chi_lat = 0;
        std::size_t n = 0, outliers = 0;
        // Least-squares line through the longitude residual vs years into the era: intercept = offset, slope = drift.
        double sx = 0, sy = 0, sxx = 0, sxy = 0, lat_sum = 0;
        for (std::size_t k : idx) {
            const Observation& o = g.obs.records[k];
            const ObservationTruth& t = g.obs.truth[k];
            if (t.outlier) { ++outliers; continue; }
            const double cosb = std::cos(t.true_lat_deg * deg);
            const double d_lon = wrap_pi((o.lon_deg - t.true_lon_deg) * deg) / arcsec * cosb;
            const double d_lat = (o.lat_deg - t.true_lat_deg) * 3600.0;
            const double years = (o.time_days / julian_year_days + 1800.0) - ex.start;
            const double sys_lon = ex.off_lon + ex.drift_lon * years;
            // Rounding adds a uniform error of variance p^2/12 (in lambda this is scaled by cos(beta)).
            const double v_lon = ex.s_lon * ex.s_lon + std::pow(ex.precision * cosb, 2) / 12.0;
            const double v_lat = ex.s_lat * ex.s_lat + ex.precision * ex.precision / 12.0;
            chi_lon += std::pow(d_lon - sys_lon, 2) / v_lon;
            chi_lat += std::pow(d_lat - ex.off_lat, 2) / v_lat;
            sx += years; sy += d_lon; sxx += years * years; sxy += years * d_lon; lat_sum += d_lat;
            ++n;
            // Rounding: recorded values are whole multiples of the era's precision.
            if (ex.precision > 0) {
                CHECK(std::abs(o.lon_deg * 3600.0 / ex.precision - std::round(o.lon_deg * 3600.0 / ex.precision)) < 1e-4);
                CHECK(std::abs(o.lat_deg * 3600.0 / ex.precision - std::round(o.lat_deg * 3600.0 / ex.precision)) < 1e-4);
            }
            // Whether sigma is written in the record.
            CHECK(o.sigma_lon_arcsec.has_value() == (std::string(ex.label) == "new"));
        }
        // chi^2 per degree of freedom: 1 within 4 standard deviations sqrt(2/n).
        const double tol = 4.0 * std::sqrt(2.0 / static_cast<double>(n));
        CHECK(std::abs(chi_lon / n - 1.0) < tol);
        CHECK(std::abs(chi_lat / n - 1.0) < tol);
        CHECK(std::abs(chi_lon / n / 1.44 - 1.0) > tol);  // the same data against a sigma 20% too large fails
        const double dn = static_cast<double>(n);
        const double slope = (dn * sxy - sx * sy) / (dn * sxx - sx * sx);
        const double intercept = (sy - slope * sx) / dn;
        const double spread = std::sqrt(dn * sxx - sx * sx) / dn;  // std of years
        CHECK(std::abs(intercept - ex.off_lon) < 4.0 * ex.s_lon * std::sqrt(4.0 / dn) + 0.01);
        CHECK(std::abs(slope - ex.drift_lon) < 4.0 * ex.s_lon / (spread * std::sqrt(dn)));
        CHECK(std::abs(lat_sum / dn - ex.off_lat) < 4.0 * ex.s_lat / std::sqrt(dn));
        // Outliers: within binomial bounds (4 sigma).
        const double total = static_cast<double>(idx.size());
        const double mean = total * ex.out_frac, sd = std::sqrt(total * ex.out_frac * (1 - ex.out_frac));
        CHECK(std::abs(static_cast<double>(outliers) - mean) <= 4.0 * sd + 0.5);
    }
}

TEST_CASE("visibility: nothing below the elongation limit; gaps recur with the synodic period") {
    const Generated g = make(kNoisy, 3);
    const std::size_t obs = g.truth.system.observer_index(), far = g.truth.system.index_of("Far");
    for (std::size_t k = 0; k < g.obs.records.size(); ++k) {
        const double e = elongation(g.run.ephemeris, obs, far, g.obs.records[k].time_days) / deg;
        CHECK(e > 30.0);
        CHECK(std::abs(e - g.obs.truth[k].elongation_deg) < 1e-9);
    }
    const auto seasons = visibility_seasons(g.run.ephemeris, obs, far, 0.0, 100 * julian_year_days, 30.0 * deg);
    REQUIRE(seasons.size() > 50);
    // Source: standard synodic-period formula S = 1 / |1/P1 - 1/P2| with Kepler periods of the two orbits.
    const double p1 = orbital_period(1.0, gauss_k2 * (1 + 3e-6)), p2 = orbital_period(12.0, gauss_k2 * (1 + 5e-5));
    const double synodic = 1.0 / std::abs(1.0 / p1 - 1.0 / p2);
    for (std::size_t k = 2; k + 1 < seasons.size(); ++k) {
        const double mid_gap = 0.5 * (seasons[k].begin + seasons[k - 1].end) - 0.5 * (seasons[k - 1].begin + seasons[k - 2].end);
        // Eccentric orbits and the giant's pull make each cycle differ by a few days.
        CHECK(std::abs(mid_gap - synodic) < 0.03 * synodic);
    }
}

TEST_CASE("plausibility: crossing orbits and tight spacing are refused, drawn systems pass the check") {
    const std::string crossing = replace(kNoisy, "a = 12.0\ne = 0.02", "a = 1.2\ne = 0.3");
    try {
        const Scenario sc = parse_scenario(crossing, "cross.toml");
        generate(sc, 1);
        FAIL("crossing orbits were accepted");
    } catch (const InputError& e) {
        CHECK(std::string(e.what()).find("cross") != std::string::npos);
        CHECK(std::string(e.what()).find("cross.toml") != std::string::npos);
    }
    const std::string tight = replace(kNoisy, "a = 12.0\ne = 0.02", "a = 1.12\ne = 0.0");
    try {
        generate(parse_scenario(tight, "tight.toml"), 1);
        FAIL("tight spacing was accepted");
    } catch (const InputError& e) {
        CHECK(std::string(e.what()).find("mutual Hill radii") != std::string::npos);
    }
    for (const char* s : {"scenarios/tutorial.toml", "scenarios/classic.toml", "scenarios/hard.toml", "scenarios/default.toml"}) {
        const Scenario sc = load_scenario(testing::source_path(s));
        IntegrationResult run;
        const Truth t = generate(sc, 2, &run);
        CHECK(check_spacing(t, sc.rules).ok);
        CHECK(check_dynamics(t, sc.rules, run).ok);
        CHECK(t.hidden_index().has_value());
    }
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

TEST_CASE("SHA-256 of a known message") {
    // Source: FIPS 180-2, appendix B.1 example ("abc").
    CHECK(sha256_hex("abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
}

TEST_CASE("impossible observing-plan values get errors naming file, line and field") {
    std::string field;
    long line = 0;
    CHECK(expect_error(replace(kNoisy, "sigma_lat_arcsec = 3.0", "sigma_lat_arcsec = -3.0"), &field, &line).find("plan.toml:") == 0);
    CHECK(field == "observing.era[1].sigma_lat_arcsec");
    CHECK(line == 42);
    expect_error(replace(kNoisy, "end_year = 1860.0", "end_year = 1790.0"), &field);
    CHECK(field == "observing.era[1].end_year");
    expect_error(replace(kNoisy, "outlier_fraction = 0.05", "outlier_fraction = 1.5"), &field);
    CHECK(field == "observing.era[1].outlier_fraction");
    expect_error(replace(kNoisy, "elongation_limit_deg = 30.0", "elongation_limit_deg = 200.0"), &field);
    CHECK(field == "observing.elongation_limit_deg");
    const std::string msg = expect_error(replace(kNoisy, "targets = [\"Far\"]", "targets = [\"Nowhere\"]"), &field);
    CHECK(field == "observing.targets");
    CHECK(msg.find("Nowhere") != std::string::npos);
    expect_error(replace(kNoisy, "targets = [\"Far\"]", "targets = [\"Obs\"]"), &field);
    CHECK(field == "observing.targets");
    expect_error(replace(kNoisy, "search_epoch_year = 1900.0", "search_epoch_year = 2500.0"), &field);
    CHECK(field == "observing.search_epoch_year");
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
