// What people read and what other programs read: floats in TOML outputs in their shortest round-trip form, long
// number arrays joined several to a line, the ellipse's position angle, the residual table aligned by displayed
// width with its footnote only when it applies, and residual plots that mark off-scale points at the edge.
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <map>
#include <set>
#include <sstream>
#include <string>

#include <unistd.h>

#include "sim/budget/budget.hpp"
#include "sim/commands/commands.hpp"
#include "sim/report/budget_report.hpp"
#include "sim/fit/known_fit.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/predict/predict.hpp"
#include "sim/report/plot_internal.hpp"
#include "sim/report/report.hpp"
#include "sim/report/text_table.hpp"
#include "solve_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;

TEST_CASE("TOML outputs: floats in their shortest round-trip form, strings and keys untouched") {
    const std::string in = "# e = 0.95999999999999996 stays in a comment\n"
                           "name = \"1.50000000000000000 in a string\"\n"
                           "mass_error = 0.95999999999999996\n"
                           "a = 1.0\n"
                           "tiny = 9.9999999999999995e-08\n"
                           "n = 12\n"
                           "list = [ 0.10000000000000001, -2.5, 3.0 ]\n"
                           "[planets.e]\n"
                           "e = 0.29999999999999999\n";
    const std::string out = detail::shortest_toml_floats(in);
    CHECK(out.find("mass_error = 0.96\n") != std::string::npos);
    CHECK(out.find("a = 1.0\n") != std::string::npos);
    CHECK(out.find("tiny = 1e-07\n") != std::string::npos);
    CHECK(out.find("list = [ 0.1, -2.5, 3.0 ]") != std::string::npos);
    CHECK(out.find("e = 0.3\n") != std::string::npos);
    CHECK(out.find("# e = 0.95999999999999996 stays") != std::string::npos);
    CHECK(out.find("\"1.50000000000000000 in a string\"") != std::string::npos);
    // Every value reads back to the same double.
    const toml::table a = detail::parse_toml(in, "in"), b = detail::parse_toml(out, "out");
    CHECK(*a["mass_error"].value<double>() == *b["mass_error"].value<double>());
    CHECK(*a["tiny"].value<double>() == *b["tiny"].value<double>());
    CHECK(*a["planets"]["e"]["e"].value<double>() == *b["planets"]["e"]["e"].value<double>());
}

TEST_CASE("TOML outputs: a long number array is written several values to a line and reads back the same") {
    toml::table t;
    toml::array years;
    for (int k = 0; k < 2000; ++k) years.push_back(1900.0 + k / 24.0);
    t.insert("track_year", years);
    t.insert("after", "x");
    const std::string text = detail::toml_text_shortest(t);
    std::size_t lines = 0;
    for (char c : text) lines += c == '\n';
    CHECK(lines < 2000 / 5);  // toml++ alone writes one value per line
    std::istringstream in(text);
    for (std::string l; std::getline(in, l);) CHECK(l.size() <= 104);
    const toml::table back = detail::parse_toml(text, "back");
    const toml::array* arr = back["track_year"].as_array();
    REQUIRE(arr != nullptr);
    REQUIRE(arr->size() == 2000);
    for (std::size_t k = 0; k < 2000; ++k) CHECK((*arr)[k].value<double>().value() == 1900.0 + static_cast<double>(k) / 24.0);
    CHECK(back["after"].value<std::string>().value() == "x");
}

TEST_CASE("ellipse orientation as a position angle: from north (+beta) through east (+lambda)") {
    // The position angle convention: measured from north through east (common practice in astronomy).
    double major = 0, minor = 0, orientation = 0;
    ellipse_axes(1.0, 0.0, 4.0, major, minor, orientation);  // long along beta: north-south
    CHECK(position_angle_deg(orientation) == doctest::Approx(0.0));
    ellipse_axes(4.0, 0.0, 1.0, major, minor, orientation);  // long along lambda: east-west
    CHECK(position_angle_deg(orientation) == doctest::Approx(90.0));
    ellipse_axes(2.0, 1.5, 2.0, major, minor, orientation);  // long towards +lambda +beta: north-east
    CHECK(position_angle_deg(orientation) == doctest::Approx(45.0));
    ellipse_axes(2.0, -1.5, 2.0, major, minor, orientation);  // towards +lambda -beta: south-east, i.e. north-west
    CHECK(position_angle_deg(orientation) == doctest::Approx(135.0));
}

namespace {
const testing::MadeExercise& quick_exercise() {
    static const testing::MadeExercise m =
        testing::make_exercise(parse_scenario(detail::read_text_file(testing::source_path("scenarios/quick.toml")), "quick"), 3);
    return m;
}
}  // namespace

TEST_CASE("residual table: columns aligned by displayed width, the σ footnote only when a row has a starred σ") {
    const KnownFit fit = fit_known(quick_exercise().ex.exercise);
    std::ostringstream out;
    print_residual_summary(fit, out);
    std::istringstream in(out.str());
    std::string line;
    std::getline(in, line);  // the title
    std::set<std::size_t> widths;
    bool starred = false, footnote = false;
    while (std::getline(in, line)) {
        if (line.rfind("chi2", 0) == 0) break;
        if (line.find("(* sigma estimated") != std::string::npos) {
            footnote = true;
            continue;
        }
        widths.insert(display_width(line));
        starred = starred || line.find('*') != std::string::npos;
    }
    CHECK(widths.size() == 1);  // the header (with λ·cos β and β) as wide as every row
    CHECK(footnote == starred);
}

TEST_CASE("residual plot: every point drawn, those beyond the axis marked at its edge") {
    ModelSetup setup = make_setup(quick_exercise().ex.exercise);
    std::vector<std::array<double, 2>> res(setup.obs.size(), {0.1, -0.1});
    for (std::size_t k = 0; k < res.size(); ++k) res[k] = {0.2 * std::sin(static_cast<double>(k)), 0.2 * std::cos(static_cast<double>(k))};
    // Five early sightings far off in λ·cos β on the first planet, set aside by the clipping as outliers are.
    std::size_t planted = 0;
    for (std::size_t k = 0; k < res.size() && planted < 5; ++k)
        if (setup.obs[k].planet == 0) {
            res[k][0] = planted % 2 ? -40.0 : 40.0;
            setup.obs[k].rejected = true;
            ++planted;
        }
    REQUIRE(planted == 5);
    const plot::Figure fig = residuals_figure(setup, res, "test");
    std::size_t points = 0, marked = 0;
    for (std::size_t p = 0; p < fig.panels.size(); ++p) {
        const plot::Panel& panel = fig.panels[p];
        REQUIRE(panel.y_range);
        for (const plot::Series& s : panel.series) {
            points += s.x.size();
            for (double y : s.y) CHECK(std::abs(y) <= panel.y_range->second * (1 + 1e-12));
            if (s.label == "beyond the axis: drawn at its edge") {
                marked += s.x.size();
                for (double y : s.y) CHECK(std::abs(y) == doctest::Approx(0.97 * panel.y_range->second));
            }
        }
    }
    CHECK(points == 2 * setup.obs.size());  // every observation in both coordinates, set aside or not
    CHECK(marked == 5);
}

TEST_CASE("times on the command line: days, years or calendar dates") {
    CHECK(days_from_time_text("365.25", 1900.0, "--at") == 365.25);
    CHECK(days_from_time_text("10d", 1900.0, "--at") == 10.0);
    CHECK(days_from_time_text("1901.5yr", 1900.0, "--at") == doctest::Approx(1.5 * 365.25));
    // Meeus, Astronomical Algorithms (2nd ed.), example 7.a: 1957 October 4.81 is JD 2436116.31, so 1957-10-04 at
    // 0 h is JD 2436115.5; as a Julian epoch, 2000 + (JD - 2451545) / 365.25 (IAU 1976 convention).
    const double epoch = 2000.0 + (2436115.5 - 2451545.0) / 365.25;
    CHECK(days_from_time_text("1957-10-04", 1950.0, "--at") == doctest::Approx((epoch - 1950.0) * 365.25).epsilon(1e-12));
    // 2000-01-01 at 0 h is half a day before J2000.0 (JD 2451545.0 is 2000 January 1.5; common practice).
    CHECK(days_from_time_text("2000-01-01", 2000.0, "--at") == doctest::Approx(-0.5));
    CHECK_THROWS_AS(days_from_time_text("1957-13-04", 1950.0, "--at"), InputError);
    CHECK_THROWS_AS(days_from_time_text("soon", 1950.0, "--at"), InputError);
}

namespace {
std::map<std::string, std::string> folder_files(const std::filesystem::path& dir) {
    std::map<std::string, std::string> files;
    for (const auto& e : std::filesystem::directory_iterator(dir))
        if (e.is_regular_file()) files[e.path().filename().string()] = testing::read(e.path().string());
    return files;
}
}  // namespace

TEST_CASE("no command overwrites what an earlier command wrote: solve --out, score per solution and per trainee") {
    namespace fs = std::filesystem;
    const fs::path dir = fs::temp_directory_path() / ("wayward-legible-chain-" + std::to_string(::getpid()));
    fs::remove_all(dir);
    fs::remove_all(dir.string() + "-answer-key");  // a key left by an earlier run under the same pid
    const std::string d = dir.string();
    REQUIRE(testing::run_cli("new " + testing::source_path("scenarios/tutorial.toml") + " --seed 2 --out " + d).status == 0);
    std::map<std::string, std::string> seen;
    // Each step may add files; every file an earlier step wrote must keep its content.
    auto step = [&](const std::string& args, const std::string& expect_new) {
        INFO(args);
        const auto r = testing::run_cli(args);
        REQUIRE(r.status == 0);
        const auto now = folder_files(dir);
        for (const auto& [name, text] : seen) {
            REQUIRE(now.count(name));
            CHECK_MESSAGE(now.at(name) == text, name << " was overwritten by: " << args);
        }
        CHECK(now.count(expect_new));
        CHECK(!seen.count(expect_new));
        seen = now;
        return r.output;
    };
    seen = folder_files(dir);
    step("residuals " + d + " --quiet --svg", "residuals.svg");
    step("solve " + d + " --quiet --starts 1 --samples 20", "solution.toml");
    step("score " + d + " --svg", "luck.svg");
    const std::string epoch = std::to_string(load_exercise(d).brief.search_epochs_year.front());
    step("score " + d + " --lon 10 --lat 0 --epoch " + epoch, "luck_own.csv");
    const std::string wrote = step("solve " + d + " --quiet --starts 1 --samples 20 --coplanar --out " + d + "/coplanar.toml", "coplanar.toml");
    CHECK(wrote.find("Wrote " + d + "/coplanar.toml\n") != std::string::npos);
    step("score " + d + " --solution " + d + "/coplanar.toml", "luck_coplanar.csv");
    for (const char* svg : {"residuals.svg", "luck.svg"}) {
        const std::string text = testing::read(dir / svg);
        CHECK(text.rfind("<?xml", 0) == 0);
        CHECK(text.find("<svg") != std::string::npos);
    }
    CHECK(!fs::exists(dir / "luck_own.svg"));  // --svg only where asked
    // A luck window reaching past the exercise's span says it was cut; one inside the span says nothing.
    const auto wide = testing::run_cli("score " + d + " --window 5000");
    CHECK(wide.output.find("years is cut to") != std::string::npos);
    const auto narrow = testing::run_cli("score " + d + " --window 0.5");
    CHECK(narrow.output.find("is cut to") == std::string::npos);
    fs::remove_all(dir);
    fs::remove_all(d + "-answer-key");
}

TEST_CASE("budget table: each source's share of the quadrature sum, the all-on gap explained, small samples said") {
    BudgetResult b;
    b.runs = 4;
    b.seeds = {1, 2, 3, 4};
    auto line = [](const std::string& key, const std::string& label, double median) {
        BudgetLine l;
        l.key = key;
        l.label = label;
        l.median = median;
        l.p90 = 2 * median;
        l.separations_arcmin = {median, median, median, median};
        return l;
    };
    b.lines = {line("all-off", "all sources off", 0.01), line("random:a", "random noise of era \"α\" alone", 3.0),
               line("light-time", "light time left out", 4.0), line("all-on", "all sources on", 12.0)};
    b.quadrature_median = 5.0;  // sqrt(3² + 4²)
    b.quadrature_p90 = 10.0;
    CHECK(budget_share(b, b.lines[1]) == doctest::Approx(0.36));
    CHECK(budget_share(b, b.lines[2]) == doctest::Approx(0.64));
    CHECK(std::isnan(budget_share(b, b.lines[0])));
    CHECK(std::isnan(budget_share(b, b.lines[3])));
    const std::string t = budget_table(b);
    std::istringstream in(t);
    std::set<std::size_t> share_columns;
    for (std::string l; std::getline(in, l);) {
        if (l.rfind("random noise", 0) == 0) CHECK(l.substr(l.size() - 8) == "      36");
        if (l.rfind("light time left out", 0) == 0) CHECK(l.substr(l.size() - 8) == "      64");
        if (l.find("random noise") != std::string::npos || l.rfind("source", 0) == 0) share_columns.insert(display_width(l));
    }
    CHECK(share_columns.size() == 1);  // header and a row with a Greek label end in the same column
    CHECK(t.find("All on is 2.40 times the quadrature sum.") != std::string::npos);
    CHECK(t.find("Only 4 runs: a small sample") != std::string::npos);
}

TEST_CASE("a log axis over less than a decade labels at least three values") {
    // 40 to 160 arcmin: 2 and 5 per decade alone would label only 50 and 100.
    const plot::detail::Axis a = plot::detail::log_axis(true, 40.0, 160.0, std::nullopt, 6);
    CHECK(a.ticks.size() >= 3);
    CHECK(std::find(a.labels.begin(), a.labels.end(), "50") != a.labels.end());
    CHECK(std::find(a.labels.begin(), a.labels.end(), "100") != a.labels.end());
    for (double t : a.ticks) CHECK((t >= a.lo && t <= a.hi));
    // Over a decade and more, the decades and 2 and 5 as before: no crowding.
    const plot::detail::Axis b = plot::detail::log_axis(true, 3.0, 90.0, std::nullopt, 6);
    for (const char* l : {"3", "30", "4", "40"}) CHECK(std::find(b.labels.begin(), b.labels.end(), l) == b.labels.end());
    CHECK(std::find(b.labels.begin(), b.labels.end(), "10") != b.labels.end());
}

TEST_CASE("an axis of whole things (nights) labels whole numbers only") {
    // Three nights: the plain nice ticks step by a half; whole numbers only keep 1, 2 and 3.
    const plot::detail::Axis plain = plot::detail::linear_axis(true, 1.0, 3.0, std::nullopt, 6);
    REQUIRE(plain.ticks.size() >= 2);
    CHECK(plain.ticks[1] - plain.ticks[0] < 1.0);
    const plot::detail::Axis a = plot::detail::whole_number_ticks(plain);
    CHECK(a.ticks == std::vector<double>{1.0, 2.0, 3.0});
    CHECK(a.labels == std::vector<std::string>{"1", "2", "3"});
    // Thirty nights: the nice step is already whole; nothing changes.
    const plot::detail::Axis wide = plot::detail::linear_axis(true, 1.0, 30.0, std::nullopt, 6);
    CHECK(plot::detail::whole_number_ticks(wide).ticks == wide.ticks);
}
