// Era offsets and drifts as nuisance parameters: the projection removes exactly what an era's offset and drift
// can explain, and on a scenario whose early era carries an offset and a drift the stated regions hold the truth
// as often as they say (slow).
#include <doctest/doctest.h>

#include <cmath>
#include <string>
#include <vector>

#include "sim/base/parallel.hpp"
#include "sim/base/units.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/model/era_systematics.hpp"
#include "sim/model/model.hpp"
#include "sim/score/score.hpp"
#include "sim/solve/solve.hpp"
#include "solve_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;

namespace {

// The quick scenario with its record split in two eras: photographic plates 1905-1945 whose reduction leaves an
// offset and a drift (invented values), then the survey 1945-1985, more precise (0.8 arcsec instead of 1).
Scenario quick_with_plate_era() {
    std::string s = detail::read_text_file(testing::source_path("scenarios/quick.toml"));
    const std::string era = "[[observing.era]]\nlabel = \"survey\"\nstart_year = 1905.0\n";
    REQUIRE(s.find(era) != std::string::npos);
    s = testing::replace_all(s, era,
                             "[[observing.era]]\nlabel = \"plates\"\nstart_year = 1905.0\nend_year = 1945.0\nper_season = 4\n"
                             "sigma_lon_arcsec = 1.0\nsigma_lat_arcsec = 1.0\noffset_lon_arcsec = 1.5\ndrift_lon_arcsec_per_yr = 0.05\n"
                             "offset_lat_arcsec = -0.8\ndrift_lat_arcsec_per_yr = -0.02\nrecords_sigma = true\n\n"
                             "[[observing.era]]\nlabel = \"survey\"\nstart_year = 1945.0\n");
    s = testing::replace_all(s, "start_year = 1945.0\nend_year = 1985.0\nper_season = 4\nsigma_lon_arcsec = 1.0\nsigma_lat_arcsec = 1.0",
                             "start_year = 1945.0\nend_year = 1985.0\nper_season = 4\nsigma_lon_arcsec = 0.8\nsigma_lat_arcsec = 0.8");
    REQUIRE(s.find("sigma_lon_arcsec = 0.8") != std::string::npos);
    return parse_scenario(s, "quick-with-plate-era");
}

}  // namespace

TEST_CASE("era systematics: the projection removes an era's offset and drift exactly and leaves the reference era's longitude alone") {
    const auto m = testing::make_exercise(quick_with_plate_era(), 7, testing::no_noise());
    ModelOptions mo;
    mo.era_systematics = "drifts";
    const ModelSetup setup = make_setup(m.ex.exercise, mo);
    REQUIRE(setup.eras.size() == 2);
    CHECK(setup.eras[setup.reference_era] == "survey");  // the era with the most weight: the more precise survey
    // Offset and drift in each coordinate for the plates, and in latitude for the survey (the reference keeps the
    // frame's zero of longitude).
    CHECK(era_systematic_parameters(setup.era_view()) == 6);
    // A residual vector that is exactly an offset plus a drift in the plates era; in the survey, something else in
    // longitude, and in latitude a curve plus an offset and drift (which the projection removes, leaving the curve
    // less its own offset-and-drift fit).
    Eigen::VectorXd r(static_cast<Eigen::Index>(2 * setup.obs.size()));
    for (std::size_t k = 0; k < setup.obs.size(); ++k) {
        const FitObservation& f = setup.obs[k];
        const double years = f.time_days / julian_year_days;
        const bool plates = setup.eras[f.era] == "plates";
        r[static_cast<Eigen::Index>(2 * k)] = plates ? (0.7 + 0.01 * years) * std::cos(f.lat) / f.sigma_lon_arcsec : std::sin(years);
        r[static_cast<Eigen::Index>(2 * k + 1)] = plates ? (-0.3 + 0.02 * years) / f.sigma_lat_arcsec : (0.4 - 0.01 * years) / f.sigma_lat_arcsec;
    }
    Eigen::MatrixXd m1 = r;
    project_out_era_systematics(setup.era_view(), m1);
    for (std::size_t k = 0; k < setup.obs.size(); ++k) {
        const bool plates = setup.eras[setup.obs[k].era] == "plates";
        const auto lon_row = static_cast<Eigen::Index>(2 * k), lat_row = lon_row + 1;
        if (plates) CHECK(std::abs(m1(lon_row, 0)) < 1e-12);
        else CHECK(m1(lon_row, 0) == r[lon_row]);
        CHECK(std::abs(m1(lat_row, 0)) < 1e-12);  // an offset and drift in latitude, in either era
    }
    // The fitted systematic in arcsec: the offset and drift put in.
    const auto sys = fitted_era_systematics(setup.era_view(), r);
    for (std::size_t k = 0; k < setup.obs.size(); ++k) {
        const FitObservation& f = setup.obs[k];
        if (setup.eras[f.era] != "plates") continue;
        const double years = f.time_days / julian_year_days;
        CHECK(sys[k][0] == doctest::Approx((0.7 + 0.01 * years) * std::cos(f.lat)).epsilon(1e-9));
        CHECK(sys[k][1] == doctest::Approx(-0.3 + 0.02 * years).epsilon(1e-9));
    }
    // An unknown choice is refused.
    mo.era_systematics = "wobbles";
    CHECK_THROWS_AS(make_setup(m.ex.exercise, mo), std::invalid_argument);
}

TEST_SUITE("slow") {
TEST_CASE("calibration with era systematics: the truth falls inside the stated 50 and 90 percent regions as often as stated") {
    // A 2-D Gaussian holds probability 1 - exp(-d^2/2) within Mahalanobis distance d: the 50 % region is d^2 <=
    // 2 ln 2 and the 90 % region d^2 <= 2 ln 10, and d^2 follows chi-square with 2 degrees of freedom, mean 2 and
    // variance 4 (standard results). n = 400 seeds (4000-4399, used by no other test): the binomial standard
    // error is 2.5 points at 50 % and 1.5 at 90 %, so +-5 points is 2 and 3.3 of them; the mean of d^2 has
    // standard error 0.1 and must lie in 2 +- 0.3. The priors match the scenario's draws (e 0.03, tilt 2 deg).
    const Scenario sc = quick_with_plate_era();
    const std::size_t n = 400;
    std::vector<double> d2(n, -1.0), d2_none(n, -1.0);
    parallel_for(n, 2, [&](std::size_t i) {
        const std::uint64_t seed = 4000 + i;
        const auto m = testing::make_exercise(sc, seed);
        SolveOptions o;
        o.eccentricity_prior_sigma = 0.03;
        o.inclination_prior_rad = 2.0 * deg;
        o.threads = 1;
        o.samples = 0;
        o.seed = seed;
        o.model.era_systematics = "drifts";
        const Solution s = solve(m.ex.exercise, o);
        const Score sco = score_prediction(m.ex.exercise.brief, m.ex.key, s.prediction);
        if (sco.mahalanobis) d2[i] = *sco.mahalanobis * *sco.mahalanobis;
        if (i < 100) {  // the same record trusting every era, for the message: what the nuisance parameters change
            o.model.era_systematics = "none";
            const Solution s0 = solve(m.ex.exercise, o);
            const Score sco0 = score_prediction(m.ex.exercise.brief, m.ex.key, s0.prediction);
            if (sco0.mahalanobis) d2_none[i] = *sco0.mahalanobis * *sco0.mahalanobis;
        }
    });
    const testing::RegionTally tally = testing::tally_regions(d2);
    REQUIRE(tally.valid == n);
    const std::size_t in50 = tally.in50, in90 = tally.in90;
    const double mean = tally.mean_d2;
    double mean_none = 0.0, in90_none = 0.0;
    for (std::size_t i = 0; i < 100; ++i) {
        mean_none += d2_none[i] / 100.0;
        in90_none += d2_none[i] >= 0 && d2_none[i] <= 2.0 * std::log(10.0) ? 0.01 : 0.0;
    }
    const double f50 = static_cast<double>(in50) / n, f90 = static_cast<double>(in90) / n;
    MESSAGE("era drifts fitted, " << n << " seeds: inside the 50 % region " << f50 << ", the 90 % region " << f90 << ", mean d^2 " << mean
                                  << "; trusting the eras (first 100 seeds): 90 % region " << in90_none << ", mean d^2 " << mean_none);
    CHECK(std::abs(f50 - 0.50) <= 0.05);
    CHECK(std::abs(f90 - 0.90) <= 0.05);
    CHECK(std::abs(mean - 2.0) <= 0.3);
}
}  // TEST_SUITE("slow")
