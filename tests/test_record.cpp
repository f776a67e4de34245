// Records brought from outside: time scales and the ICRS against ERFA and published worked examples, the text
// forms of times and angles, bad records refused with file, line and field, and the round trip (an invented
// exercise written in the record form, imported back and solved, gives the same solution).
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include <erfa.h>

#include "sim/base/errors.hpp"
#include "sim/base/format.hpp"
#include "sim/base/units.hpp"
#include "sim/commands/commands.hpp"
#include "sim/commands/record_command.hpp"
#include "sim/io/fileio.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/record/record.hpp"
#include "sim/record/sky_frames.hpp"
#include "sim/solve/solve.hpp"
#include "test_helpers.hpp"

using namespace wayward;
namespace fs = std::filesystem;

namespace {
constexpr double second = 1.0 / 86400.0;

double seconds_between(const JulianDate& a, const JulianDate& b) { return days_between(a, b) / second; }

// A record folder copied from `from` with one file's text replaced.
fs::path record_with(const fs::path& from, const std::string& name, const std::string& file, const std::string& text) {
    const fs::path d = fs::temp_directory_path() / ("wayward-record-bad-" + name + "-" + std::to_string(::getpid()));
    fs::remove_all(d);
    fs::create_directories(d);
    for (const char* f : {"record.toml", "positions.csv", "observer.csv"}) fs::copy_file(from / f, d / f);
    testing::write(d / file, text);
    return d;
}

// The error read_record gives for a folder (empty if it reads).
InputError record_error(const fs::path& dir) {
    try {
        read_record(dir.string());
    } catch (const InputError& e) {
        return e;
    }
    return InputError("", 0, "", "");
}

std::string replace_once(std::string text, const std::string& from, const std::string& to) {
    const auto at = text.find(from);
    REQUIRE(at != std::string::npos);
    return text.replace(at, from.size(), to);
}
}  // namespace

TEST_CASE("UTC, TT and TDB dates agree with the time-scale worked example and with ERFA") {
    // Source: IAU SOFA Board, "SOFA Time Scale and Calendar Tools", worked example of section 4: UTC 2006-01-15
    // 21:24:37.5 is TAI 21:25:10.5 (TAI - UTC = 33 s) and TT 21:25:42.684 (TT = TAI + 32.184 s), and TDB
    // 21:25:42.684373 at the example's site (the site adds under 2 microseconds; ours is the geocentre).
    const JulianDate utc = tdb_from_time_text("2006-01-15T21:24:37.5", TimeScale::utc);
    const JulianDate tt = tdb_from_time_text("2006-01-15T21:25:42.684", TimeScale::tt);
    const JulianDate tdb = tdb_from_time_text("2006-01-15T21:25:42.684373", TimeScale::tdb);
    CHECK(std::abs(seconds_between(utc, tt)) < 1e-6);
    CHECK(std::abs(seconds_between(utc, tdb)) < 3e-6);
    // A space for the T, and a Julian date, are the same instant.
    CHECK(std::abs(seconds_between(tdb_from_time_text("2006-01-15 21:24:37.5", TimeScale::utc), utc)) < 1e-6);
    // Source: ERFA eraCal2jd: 2006-01-15 0h is JD 2453750.5.
    double djm0, djm;
    REQUIRE(eraCal2jd(2006, 1, 15, &djm0, &djm) == 0);
    const double jd_utc = djm0 + djm + (21 * 3600 + 24 * 60 + 37.5) / 86400.0;
    CHECK(std::abs(seconds_between(tdb_from_time_text(detail::fmt("%.9f", jd_utc), TimeScale::utc), utc)) < 1e-4);  // JD text to 1e-9 d
    // Across a leap second (ERFA's table: one at the end of 2016): 23:59:60.5 is half a second before midnight.
    const JulianDate leap = tdb_from_time_text("2016-12-31T23:59:60.5", TimeScale::utc);
    CHECK(seconds_between(tdb_from_time_text("2017-01-01T00:00:00", TimeScale::utc), leap) == doctest::Approx(0.5).epsilon(1e-9));
    CHECK_THROWS_WITH_AS(tdb_from_time_text("2015-12-31T23:59:60", TimeScale::utc), doctest::Contains("no leap second"), std::invalid_argument);
    // Before 1960 UTC has no table; TT and TDB still work.
    CHECK_THROWS_WITH_AS(tdb_from_time_text("1955-03-21", TimeScale::utc), doctest::Contains("before 1960"), std::invalid_argument);
    CHECK_NOTHROW(tdb_from_time_text("1955-03-21", TimeScale::tt));
    CHECK_THROWS_AS(tdb_from_time_text("2006-02-30", TimeScale::tt), std::invalid_argument);
    CHECK_THROWS_AS(tdb_from_time_text("2006-01-15T24:00", TimeScale::tt), std::invalid_argument);
    CHECK_THROWS_AS(tdb_from_time_text("yesterday", TimeScale::tt), std::invalid_argument);
    // Julian epochs: source ERFA eraEpj (J2000.0 is JD 2451545.0 TDB; a Julian year is 365.25 days).
    CHECK(julian_epoch({2451545.0, 0.0}) == doctest::Approx(2000.0).epsilon(1e-15));
    CHECK(julian_epoch(tdb) == doctest::Approx(eraEpj(tdb.whole, tdb.fraction)).epsilon(1e-15));
    CHECK(std::abs(days_between(jd_from_julian_epoch(julian_epoch(tdb)), tdb)) < 1e-8);
    CHECK(iso_calendar_tdb(tdb_from_time_text("2031-06-01T06:30:00", TimeScale::tdb)) == "2031-06-01T06:30:00.000");
}

TEST_CASE("right ascension and declination: sexagesimal text, the ICRS-to-ecliptic rotation and back") {
    // Source: Meeus, Astronomical Algorithms (2nd ed.), Example 13.a: alpha = 7h45m18.946s = 116.328942 deg,
    // delta = +28d01'34.26" = 28.026183 deg; with obliquity 23.4392911 deg, lambda = 113.215630 deg,
    // beta = 6.684170 deg. Our frame uses the IAU 2006 obliquity (0.04" less) and ICRS frame bias (about 0.02"),
    // so agreement to 0.1" is expected.
    const double ra = parse_right_ascension("07:45:18.946"), dec = parse_declination("+28:01:34.26");
    CHECK(ra == doctest::Approx(116.328942).epsilon(1e-8));
    CHECK(dec == doctest::Approx(28.026183).epsilon(1e-7));
    CHECK(parse_right_ascension("07 45 18.946") == ra);
    CHECK(parse_declination("-28:01:34.26") == -dec);
    CHECK(parse_right_ascension("116.328942") == 116.328942);
    const SkyPosition ecl = to_sky(icrs_to_ecliptic_j2000() * unit_vector(ra * deg, dec * deg));
    CHECK(std::abs(ecl.lon / deg - 113.215630) * 3600 < 0.1);
    CHECK(std::abs(ecl.lat / deg - 6.684170) * 3600 < 0.1);
    CHECK(sexagesimal_ra(ra) == "07:45:18.946");
    CHECK(sexagesimal_dec(dec) == "+28:01:34.26");

    // Source: ERFA eraEqec06 (ICRS RA, Dec to the ecliptic of date, IAU 2006), at J2000.0: the same frame.
    std::mt19937_64 rng(11);
    std::uniform_real_distribution<double> u(-1.0, 1.0);
    double worst = 0.0, worst_back = 0.0;
    for (int k = 0; k < 200; ++k) {
        const double a = (u(rng) + 1.0) * pi, d = std::asin(u(rng));
        double l, b;
        eraEqec06(jd_j2000, 0.0, a, d, &l, &b);
        const FramedSky ours = rotate_sky({a / deg, d / deg, std::nullopt, std::nullopt}, icrs_to_ecliptic_j2000());
        worst = std::max(worst, separation(ours.lon_deg * deg, ours.lat_deg * deg, l, b));
        const FramedSky back = rotate_sky(ours, icrs_to_ecliptic_j2000().transpose());
        worst_back = std::max(worst_back, separation(back.lon_deg * deg, back.lat_deg * deg, a, d));
    }
    CHECK(worst / arcsec < 1e-6);
    CHECK(worst_back / arcsec < 1e-6);

    CHECK_THROWS_WITH_AS(parse_right_ascension("360.0"), doctest::Contains("outside [0, 360)"), std::invalid_argument);
    CHECK_THROWS_WITH_AS(parse_right_ascension("24:00:00"), doctest::Contains("hours"), std::invalid_argument);
    CHECK_THROWS_WITH_AS(parse_declination("90.5"), doctest::Contains("outside [-90, 90]"), std::invalid_argument);
    CHECK_THROWS_WITH_AS(parse_declination("+91:00:00"), doctest::Contains("outside [-90, 90]"), std::invalid_argument);
    CHECK_THROWS_AS(parse_declination("+10:75:00"), std::invalid_argument);
}

TEST_CASE("an error ellipse keeps its size through a rotation of frames") {
    std::mt19937_64 rng(5);
    std::uniform_real_distribution<double> u(-1.0, 1.0);
    for (int k = 0; k < 100; ++k) {
        const double a = (u(rng) + 1.0) * 180.0, d = std::asin(u(rng) * 0.95) / deg;
        // Equal sigmas are a circle: unchanged.
        const FramedSky round = rotate_sky({a, d, 0.4, 0.4}, icrs_to_ecliptic_j2000());
        CHECK(*round.sigma_east_arcsec == doctest::Approx(0.4).epsilon(1e-12));
        CHECK(*round.sigma_north_arcsec == doctest::Approx(0.4).epsilon(1e-12));
        // Unequal ones keep the trace of the covariance (the dropped correlation is all that changes).
        const FramedSky flat = rotate_sky({a, d, 0.3, 0.9}, icrs_to_ecliptic_j2000());
        CHECK(std::pow(*flat.sigma_east_arcsec, 2) + std::pow(*flat.sigma_north_arcsec, 2) == doctest::Approx(0.09 + 0.81).epsilon(1e-12));
        const Eigen::Matrix2d j = local_offsets_rotation(a, d, icrs_to_ecliptic_j2000());
        CHECK((j.transpose() * j - Eigen::Matrix2d::Identity()).norm() < 1e-12);
    }
}

namespace {
// fields.csv of an imported folder: its ICRS centres are its ecliptic ones rotated (to the file's 1e-6 deg),
// the shares add up, and no field is nearer the star than the limit.
void check_field_list(const fs::path& file, double elongation_limit_deg) {
    std::istringstream text(detail::read_text_file(file.string()));
    std::string line;
    std::getline(text, line);
    REQUIRE(line == "order,field,ra_deg,dec_deg,ra_hms,dec_dms,ecl_lon_deg,ecl_lat_deg,probability,added,cumulative,elongation_deg");
    double sum = 0.0, last = 0.0;
    int rows = 0;
    while (std::getline(text, line)) {
        std::vector<std::string> c;
        std::stringstream cells(line);
        for (std::string cell; std::getline(cells, cell, ',');) c.push_back(cell);
        REQUIRE(c.size() == 12);
        ++rows;
        CHECK(std::stoi(c[0]) == rows);
        const FramedSky ecl = rotate_sky({std::stod(c[2]), std::stod(c[3]), std::nullopt, std::nullopt}, icrs_to_ecliptic_j2000());
        CHECK(separation(ecl.lon_deg * deg, ecl.lat_deg * deg, std::stod(c[6]) * deg, std::stod(c[7]) * deg) / deg < 2e-6);
        CHECK(parse_right_ascension(c[4]) == doctest::Approx(std::stod(c[2])).epsilon(1e-7));
        CHECK(parse_declination(c[5]) == doctest::Approx(std::stod(c[3])).epsilon(1e-6));
        sum += std::stod(c[9]);
        last = std::stod(c[10]);
        CHECK(last == doctest::Approx(sum).epsilon(1e-5));
        CHECK(std::stod(c[9]) <= std::stod(c[8]) + 1e-6);
        CHECK(std::stod(c[11]) >= elongation_limit_deg);
    }
    CHECK(rows >= 1);
    CHECK(last > 0.5);
}
}  // namespace

TEST_CASE("the round trip: an invented exercise in the record form, imported back, solves to the same answer") {
    const fs::path base = fs::temp_directory_path() / ("wayward-roundtrip-" + std::to_string(::getpid()));
    const fs::path ex = base / "exercise", rec = base / "record", imp = base / "imported";
    fs::remove_all(base);
    fs::create_directories(base);
    std::ostringstream sink;
    NewArgs na;
    na.scenario = testing::source_path("scenarios/tutorial.toml");
    na.seed = 2;
    na.out_dir = ex.string();
    na.record_dir = rec.string();
    REQUIRE(run_new(na, sink) == 0);
    REQUIRE(run_import({rec.string(), imp.string(), false}, sink) == 0);
    const Exercise a = load_exercise(ex.string()), b = load_exercise(imp.string());
    REQUIRE(a.observations.size() == b.observations.size());
    REQUIRE(b.brief.imported());
    CHECK(b.brief.frame == ecliptic_j2000_frame);
    // The record form writes RA and Dec to 1e-10 deg and times to 1e-9 d: the positions come back in the fitting
    // frame to well under a micro-arcsecond, the times to 1e-4 s.
    double worst_sep = 0.0, worst_dt = 0.0;
    for (std::size_t k = 0; k < a.observations.size(); ++k) {
        const Observation &x = a.observations[k], &y = b.observations[k];
        REQUIRE(x.target == y.target);
        worst_sep = std::max(worst_sep, separation(x.lon_deg * deg, x.lat_deg * deg, y.lon_deg * deg, y.lat_deg * deg));
        worst_dt = std::max(worst_dt, std::abs(x.time_days - y.time_days));
        CHECK(*y.sigma_lon_arcsec == doctest::Approx(*x.sigma_lon_arcsec).epsilon(1e-8));
    }
    CHECK(worst_sep / arcsec < 1e-6);
    CHECK(worst_dt / second < 1e-4);
    CHECK(b.brief.search_epochs_year[0] == doctest::Approx(a.brief.search_epochs_year[0]).epsilon(1e-12));

    // Solved both ways. The data differ by under 1e-6 of the smallest sigma, so the solutions may differ only by
    // the fit's own convergence: a milli-arcsecond in the pointing, a part in 1e6 in mass and distance.
    for (const fs::path& d : {ex, imp}) REQUIRE(testing::run_cli("solve " + d.string() + " --quiet").status == 0);
    const Solution sa = load_solution((ex / "solution.toml").string()), sb = load_solution((imp / "solution.toml").string());
    CHECK(separation(sa.prediction.lon, sa.prediction.lat, sb.prediction.lon, sb.prediction.lat) / arcsec < 1e-3);
    CHECK(sb.best.mass == doctest::Approx(sa.best.mass).epsilon(1e-6));
    CHECK(sb.best.semi_major_axis == doctest::Approx(sa.best.semi_major_axis).epsilon(1e-6));
    CHECK(sb.prediction.semi_major_arcsec == doctest::Approx(sa.prediction.semi_major_arcsec).epsilon(1e-5));
    CHECK(sb.exercise_sha256 == b.brief.record_sha256);

    // The imported solve prints the pointing in ICRS with the caution; score refuses (no truth) and search lists
    // the fields to point at instead of rehearsing.
    const auto solved = testing::run_cli("solve " + imp.string() + " --quiet --out " + (base / "again.toml").string());
    CHECK(solved.output.find("ICRS (astrometric) at ") != std::string::npos);
    CHECK(solved.output.find("cross-check this with the team's own orbit-determination") != std::string::npos);
    const auto scored = testing::run_cli("score " + imp.string());
    CHECK(scored.status == 2);
    CHECK(scored.output.find("no truth to score against") != std::string::npos);
    const auto searched = testing::run_cli("search " + imp.string());
    REQUIRE(searched.status == 0);
    CHECK(searched.output.find("no sealed truth here, so no rehearsal") != std::string::npos);
    CHECK(searched.output.find("cross-check these fields with the team's own") != std::string::npos);
    check_field_list(imp / "search" / "fields.csv", b.brief.elongation_limit_deg);
    CHECK(testing::run_cli("search " + imp.string() + " --strategy sweep").status == 2);
    // Importing over an existing exercise needs --force.
    CHECK_THROWS_WITH_AS(run_import({rec.string(), imp.string(), false}, sink), doctest::Contains("--force"), InputError);
    fs::remove_all(base);
}

TEST_CASE("bad records are refused with the file, line and field") {
    const fs::path base = fs::temp_directory_path() / ("wayward-record-src-" + std::to_string(::getpid()));
    fs::remove_all(base);
    std::ostringstream sink;
    NewArgs na;
    na.scenario = testing::source_path("scenarios/quick.toml");
    na.seed = 3;
    na.out_dir = (base / "exercise").string();
    na.record_dir = (base / "record").string();
    REQUIRE(run_new(na, sink) == 0);
    const fs::path rec = base / "record";
    const std::string record = testing::read(rec / "record.toml"), positions = testing::read(rec / "positions.csv"),
                      observer = testing::read(rec / "observer.csv");
    const std::string first_row = positions.substr(positions.find('\n') + 1, positions.find('\n', positions.find('\n') + 1) - positions.find('\n') - 1);
    const std::string first_time = first_row.substr(0, first_row.find(','));

    SUBCASE("unknown time scale") {
        const InputError e = record_error(record_with(rec, "scale", "record.toml", replace_once(record, "time_scale = 'TDB'", "time_scale = 'GPS'")));
        CHECK(e.field() == "record.time_scale");
        CHECK(e.line() > 0);
        CHECK(e.message().find("GPS") != std::string::npos);
    }
    SUBCASE("right ascension outside [0, 360)") {
        std::string cells = first_row;
        const auto c2 = cells.find(',', cells.find(',') + 1), c3 = cells.find(',', c2 + 1);
        cells.replace(c2 + 1, c3 - c2 - 1, "361.5");
        const InputError e = record_error(record_with(rec, "ra", "positions.csv", replace_once(positions, first_row, cells)));
        CHECK(e.file().find("positions.csv") != std::string::npos);
        CHECK(e.line() == 2);
        CHECK(e.field() == "ra");
    }
    SUBCASE("declination outside +-90") {
        std::string cells = first_row;
        const auto c3 = cells.find(',', cells.find(',', cells.find(',') + 1) + 1), c4 = cells.find(',', c3 + 1);
        cells.replace(c3 + 1, c4 - c3 - 1, "-95");
        const InputError e = record_error(record_with(rec, "dec", "positions.csv", replace_once(positions, first_row, cells)));
        CHECK(e.line() == 2);
        CHECK(e.field() == "dec");
    }
    SUBCASE("a missing observer row") {
        const std::string row = observer.substr(observer.find('\n') + 1, observer.find('\n', observer.find('\n') + 1) - observer.find('\n'));
        const InputError e = record_error(record_with(rec, "observer", "observer.csv", replace_once(observer, row, "")));
        CHECK(e.file().find("positions.csv") != std::string::npos);
        CHECK(e.field() == "time");
        CHECK(e.message().find("has no row in") != std::string::npos);
    }
    SUBCASE("observer times out of order") {
        const auto l1 = observer.find('\n') + 1, l2 = observer.find('\n', l1) + 1, l3 = observer.find('\n', l2) + 1;
        const std::string swapped = observer.substr(0, l1) + observer.substr(l2, l3 - l2) + observer.substr(l1, l2 - l1) + observer.substr(l3);
        const InputError e = record_error(record_with(rec, "order", "observer.csv", swapped));
        CHECK(e.file().find("observer.csv") != std::string::npos);
        CHECK(e.line() == 3);
        CHECK(e.message().find("must increase") != std::string::npos);
    }
    SUBCASE("a UTC time before 1960") {
        const std::string utc = replace_once(record, "time_scale = 'TDB'", "time_scale = 'UTC'");
        const InputError e = record_error(record_with(rec, "utc", "record.toml", utc));
        CHECK(e.field() == "record.epoch");
        CHECK(e.message().find("before 1960") != std::string::npos);
    }
    SUBCASE("a position before the epoch") {
        std::string cells = first_row;
        cells.replace(0, first_time.size(), "2400000.5");
        const InputError e = record_error(record_with(rec, "early", "positions.csv", replace_once(positions, first_row, cells)));
        CHECK(e.line() == 2);
        CHECK(e.field() == "time");
    }
    SUBCASE("a target that is not a planet of the record") {
        std::string cells = first_row;
        const auto c1 = cells.find(','), c2 = cells.find(',', c1 + 1);
        cells.replace(c1 + 1, c2 - c1 - 1, "Nobody");
        const InputError e = record_error(record_with(rec, "target", "positions.csv", replace_once(positions, first_row, cells)));
        CHECK(e.field() == "target");
    }
    for (const auto& d : fs::directory_iterator(fs::temp_directory_path()))
        if (d.path().filename().string().rfind("wayward-record-bad-", 0) == 0 &&
            d.path().filename().string().find("-" + std::to_string(::getpid())) != std::string::npos)
            fs::remove_all(d.path());
    fs::remove_all(base);
}
