// Scoring what a stated region says: the truth's rank in it and the probability the field covered, for the
// solver's ellipse and for a trainee's own circle or ellipse; bad region values are refused.
#include <doctest/doctest.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <sstream>
#include <string>

#include "sim/base/units.hpp"
#include "sim/commands/commands.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/score/score.hpp"
#include "test_helpers.hpp"

using namespace wayward;
namespace fs = std::filesystem;

namespace {

// The same probability by brute force: the Gaussian density summed over a fine square grid clipped to the circle.
double grid_mass(double cll, double clb, double cbb, double r) {
    const double det = cll * cbb - clb * clb;
    const int n = 1600;
    const double h = 2.0 * r / n;
    double sum = 0.0;
    for (int i = 0; i < n; ++i)
        for (int j = 0; j < n; ++j) {
            const double x = -r + (i + 0.5) * h, y = -r + (j + 0.5) * h;
            if (x * x + y * y > r * r) continue;
            const double q = (cbb * x * x - 2.0 * clb * x * y + cll * y * y) / det;
            sum += std::exp(-0.5 * q);
        }
    return sum * h * h / (2.0 * pi * std::sqrt(det));
}

double number_after(const std::string& text, const std::string& label) {
    const auto pos = text.find(label);
    REQUIRE(pos != std::string::npos);
    return std::strtod(text.c_str() + pos + label.size(), nullptr);
}

}  // namespace

TEST_CASE("score region: the Gaussian mass in a circle") {
    // Circular Gaussian: 1 - exp(-r^2 / 2 sigma^2), the Rayleigh distribution's CDF (standard result).
    for (double r : {0.5, 1.0, 2.146, 3.0}) CHECK(gaussian_mass_in_circle(1.0, 0.0, 1.0, r) == doctest::Approx(1.0 - std::exp(-0.5 * r * r)).epsilon(1e-12));
    // Elongated and tilted ellipses against the brute-force grid (its own error ~1e-4 from the circle's edge).
    CHECK(gaussian_mass_in_circle(9.0, 2.0, 1.0, 2.0) == doctest::Approx(grid_mass(9.0, 2.0, 1.0, 2.0)).epsilon(2e-3));
    CHECK(gaussian_mass_in_circle(400.0, 0.0, 1.0, 10.0) == doctest::Approx(grid_mass(400.0, 0.0, 1.0, 10.0)).epsilon(2e-3));
    // A field fifty times the minor axis, as a small ellipse in a wide field gives.
    CHECK(gaussian_mass_in_circle(2500.0, 30.0, 1.0, 50.0) == doctest::Approx(grid_mass(2500.0, 30.0, 1.0, 50.0)).epsilon(2e-3));
    CHECK(gaussian_mass_in_circle(1e6, 0.0, 1.0, 50.0) == doctest::Approx(grid_mass(1e6, 0.0, 1.0, 50.0)).epsilon(2e-3));
    CHECK(gaussian_mass_in_circle(1.0, 0.0, 1.0, 0.0) == 0.0);
    CHECK(std::isnan(gaussian_mass_in_circle(1.0, 1.0, 1.0, 1.0)));  // singular covariance
}

TEST_CASE("score region: a trainee's circle and ellipse are scored by rank and field probability, bad values refused") {
    const fs::path dir = fs::temp_directory_path() / ("wayward-score-region-" + std::to_string(::getpid()));
    fs::remove_all(dir);
    fs::remove_all(dir.string() + "-answer-key");  // a key left by an earlier run under the same pid
    std::ostringstream sink;
    run_new({testing::source_path("scenarios/tutorial.toml"), 1, dir.string(), "", "", false}, sink);
    const Exercise ex = load_exercise(dir.string());
    const AnswerKey key = open_answer_key(ex.brief, exercise_paths(dir.string()).answer_key());
    const double year = ex.brief.search_epochs_year.front();
    const TruthTrack t = true_track(ex.brief, key, year, year, 1.0);
    // One degree north of the truth, with a 90 % radius of 60': sigma = 60' / sqrt(2 ln 10), d = 60' / sigma, so
    // the truth sits exactly on the 90 % circle: rank 90 %.
    char args[256];
    std::snprintf(args, sizeof args, " --lon %.12f --lat %.12f --epoch %.6f --radius 60", t.points[0].lon / deg, t.points[0].lat / deg + 1.0, year);
    const auto r = testing::run_cli("score " + dir.string() + args);
    REQUIRE(r.status == 0);
    CHECK(number_after(r.output, "Normalised error (Mahalanobis): ") == doctest::Approx(std::sqrt(2.0 * std::log(10.0))).epsilon(1e-3));
    CHECK(number_after(r.output, "the smallest region holding it holds ") == doctest::Approx(90.0).epsilon(1e-3));
    // The field (the brief's radius) against the same circular Gaussian: the Rayleigh CDF.
    const double sigma = 60.0 / std::sqrt(2.0 * std::log(10.0)), field = ex.brief.field_radius_deg * 60.0;
    CHECK(number_after(r.output, "Probability the field covered, by the stated region: ") ==
          doctest::Approx(100.0 * (1.0 - std::exp(-0.5 * field * field / (sigma * sigma)))).epsilon(1e-3));
    // An ellipse along the meridian (position angle 0) with 1-sigma 60' x 10': one degree north is d = 1.
    std::snprintf(args, sizeof args, " --lon %.12f --lat %.12f --epoch %.6f --ellipse 60,10,0", t.points[0].lon / deg, t.points[0].lat / deg + 1.0, year);
    const auto e = testing::run_cli("score " + dir.string() + args);
    REQUIRE(e.status == 0);
    CHECK(number_after(e.output, "Normalised error (Mahalanobis): ") == doctest::Approx(1.0).epsilon(1e-3));
    CHECK(number_after(e.output, "the smallest region holding it holds ") == doctest::Approx(100.0 * (1.0 - std::exp(-0.5))).epsilon(2e-3));
    // Bad regions: exit 2 with the option named.
    for (const std::string bad : {" --radius -1", " --radius nan", " --ellipse 10,20,0", " --ellipse 10,5,180", " --ellipse 10,x,0",
                                  " --ellipse 10,5", " --radius 5 --ellipse 10,5,0"}) {
        CAPTURE(bad);
        std::snprintf(args, sizeof args, " --lon 10 --lat 0 --epoch %.6f", year);
        const auto b = testing::run_cli("score " + dir.string() + args + bad);
        CHECK(b.status == 2);
        CHECK((b.output.find("--radius") != std::string::npos || b.output.find("--ellipse") != std::string::npos));
    }
    // The same region from a prediction file; a bad one names the file and the field.
    const fs::path file = dir / "mine.toml";
    std::ofstream(file) << "lon_deg = " << t.points[0].lon / deg << "\nlat_deg = " << t.points[0].lat / deg + 1.0 << "\nepoch_year = " << year
                        << "\nradius_arcmin = 60\n";
    const auto f = testing::run_cli("score " + dir.string() + " --prediction " + file.string());
    REQUIRE(f.status == 0);
    CHECK(number_after(f.output, "the smallest region holding it holds ") == doctest::Approx(90.0).epsilon(1e-3));
    std::ofstream(file) << "lon_deg = 10\nlat_deg = 0\nepoch_year = " << year << "\nsigma_major_arcmin = 5\nsigma_minor_arcmin = 9\nposition_angle_deg = 10\n";
    const auto bf = testing::run_cli("score " + dir.string() + " --prediction " + file.string());
    CHECK(bf.status == 2);
    CHECK(bf.output.find("mine.toml") != std::string::npos);
    fs::remove_all(dir);
    fs::remove_all(dir.string() + "-answer-key");
}
