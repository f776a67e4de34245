// The fit, the inverse problem and the score: numerical floors, recovery of a known hidden body, the
// tutorial's success rate, statistical calibration of the stated uncertainties, and the luck of the epoch.
#include <doctest/doctest.h>

#include <algorithm>
#include <filesystem>
#include <unistd.h>
#include <cmath>
#include <mutex>

#include "sim/fit/known_fit.hpp"
#include "sim/base/parallel.hpp"
#include "sim/score/score.hpp"
#include "sim/solve/solve.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/base/units.hpp"
#include "solve_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;
using wayward::testing::make_exercise;
using wayward::testing::no_noise;

namespace {

std::string quick_text() { return detail::read_text_file(testing::source_path("scenarios/quick.toml")); }

// The quick scenario without its hidden body.
Scenario quick_without_hidden() {
    std::string s = quick_text();
    const auto i = s.find("[[body]]\nname = \"Corbel\"");
    const auto j = s.find("[observing]");
    REQUIRE(i != std::string::npos);
    REQUIRE(j != std::string::npos);
    return parse_scenario(s.erase(i, j - i), "quick-without-hidden");
}

// The quick scenario with records a hundred times more precise (0.01 arcsec).
Scenario quick_precise() {
    std::string s = testing::replace_all(quick_text(), "sigma_lon_arcsec = 1.0", "sigma_lon_arcsec = 0.01");
    s = testing::replace_all(s, "sigma_lat_arcsec = 1.0", "sigma_lat_arcsec = 0.01");
    return parse_scenario(s, "quick-precise");
}

double true_mean_longitude(const DrawnBody& h) {
    return wrap_two_pi(h.elements.ascending_node + h.elements.arg_periapsis + h.elements.mean_anomaly);
}

const DrawnBody& hidden_of(const Truth& t) {
    for (const DrawnBody& b : t.bodies)
        if (b.role == Role::hidden) return b;
    FAIL("no hidden body");
    return t.bodies.front();
}

}  // namespace

TEST_CASE("fitting model agrees with the truth integrator: known-bodies residuals at the numerical floor") {
    // No hidden body, no noise: what is left is the fitting model's own error (pair quadrupole averaged, outer
    // bodies integrated about the star-observer pair) plus integration and interpolation error.
    const auto m = make_exercise(quick_without_hidden(), 1, no_noise());
    const KnownFit fit = fit_known(m.ex.exercise);
    double worst = 0.0;
    for (const auto& r : fit.residuals) worst = std::max({worst, std::abs(r[0]), std::abs(r[1])});
    // Measured about 0.07 mas; well below 1 mas and below 1% of the smallest sigma of any bundled scenario (0.2").
    CHECK_MESSAGE(worst * 1000.0 < 0.5, "worst residual " << worst * 1000.0 << " mas");
    CHECK(fit.rejected == 0);
}

TEST_CASE("with no noise, solve recovers a known hidden body and predicts it to under an arcsecond") {
    const Scenario sc = quick_precise();
    SolveOptions o;
    o.eccentricity_prior_sigma = 0.9;            // priors too weak to pull a noise-free solution
    o.inclination_prior_rad = 80.0 * deg;
    o.samples = 30;
    for (std::uint64_t seed : {1u, 2u}) {
        CAPTURE(seed);
        const auto m = make_exercise(sc, seed, no_noise());
        o.seed = seed;
        const Solution s = solve(m.ex.exercise, o);
        const DrawnBody& h = hidden_of(m.truth);
        // Measured: |da/a| ~ 1e-7, |dm/m| ~ 1e-6, |d lambda0| ~ 2e-5 deg, separation ~ 0.1".
        CHECK(std::abs(s.best.semi_major_axis / h.elements.semi_major_axis - 1.0) < 1e-5);
        CHECK(std::abs(s.best.mass / h.mass - 1.0) < 1e-4);
        CHECK(std::abs(wrap_pi(s.best.mean_longitude - true_mean_longitude(h))) / deg < 1e-3);
        const Score sco = score_prediction(m.ex.exercise.brief, m.ex.key, s.prediction);
        CHECK(sco.separation_arcmin * 60.0 < 1.0);
        CHECK(sco.hit);
    }
}

// The quick scenario with a markedly eccentric, tilted hidden body (e 0.2-0.3, tilt 6-12 deg).
Scenario quick_eccentric() {
    std::string s = testing::replace_all(quick_text(), "e = { rayleigh = 0.03, bounds = [0.0, 0.2] }", "e = { uniform = [0.2, 0.3] }");
    s = testing::replace_all(s, "i_deg = { rayleigh = 2.0, bounds = [0.0, 12.0] }", "i_deg = { uniform = [6.0, 12.0] }");
    REQUIRE(s != quick_text());
    return parse_scenario(s, "quick-eccentric");
}

TEST_CASE("a poor fit from the circular starts gets eccentric and tilted starts, which find the right basin") {
    // Found by a campaign of 24 systems of this scenario (seeds drawn from campaign seed 31, priors as below): from
    // the circular grid starts alone this system ends in a wrong basin (a = 21.1 au against 18.1, the truth 42 sigma
    // away, a poor fit); the eccentric and tilted starts reach the right one (1.6 sigma). Of the other 23, 18 were
    // solved alike either way, and 5 ended in wrong basins both ways.
    const auto m = make_exercise(quick_eccentric(), 3680816987411020ULL);
    SolveOptions o;
    o.eccentricity_prior_sigma = 0.2;
    o.inclination_prior_rad = 6.0 * deg;
    o.samples = 40;
    const double true_a = hidden_of(m.truth).elements.semi_major_axis;

    o.shape_starts = false;
    const Solution circular = solve(m.ex.exercise, o);
    // The case this test needs: the circular starts alone fail, and say so.
    REQUIRE_MESSAGE(circular.goodness.poor(), "chi2 " << circular.chi2 << " for " << circular.dof << " dof: pick another system");
    CHECK(circular.shape_screens == 0);

    o.shape_starts = true;
    const Solution s = solve(m.ex.exercise, o);
    CHECK(s.shape_fallback_chi2 == doctest::Approx(circular.chi2).epsilon(1e-9));
    // 8 eccentric and 4 tilted shapes about each grid minimum.
    CHECK(s.shape_screens == 12 * (s.starts - s.shape_starts));
    CHECK(s.shape_starts >= 1);
    CHECK(s.shape_start_won);
    CHECK_FALSE(s.goodness.poor());
    CHECK(s.chi2 < circular.chi2);
    CHECK(std::abs(s.best.semi_major_axis / true_a - 1.0) < 0.02);
    const Score sco = score_prediction(m.ex.exercise.brief, m.ex.key, s.prediction);
    REQUIRE(sco.mahalanobis.has_value());
    CHECK(*sco.mahalanobis < 3.0);  // measured 1.6

    // solution.toml keeps the fallback and the goodness of fit for the viewer and later reads.
    for (const Solution* written : {&circular, &s}) {
        const std::string path = (std::filesystem::temp_directory_path() / ("wayward-fallback-" + std::to_string(::getpid()) + ".toml")).string();
        testing::write(path, solution_toml(*written));
        const Solution back = load_solution(path);
        std::filesystem::remove(path);
        CHECK(back.goodness.poor() == written->goodness.poor());
        CHECK(back.goodness.p_value == written->goodness.p_value);
        CHECK(back.covariance_widened == written->covariance_widened);
        CHECK(back.starts == written->starts);
        CHECK(back.shape_screens == written->shape_screens);
        CHECK(back.shape_starts == written->shape_starts);
        CHECK(back.shape_start_won == written->shape_start_won);
        CHECK(back.shape_fallback_chi2 == written->shape_fallback_chi2);
    }
}

TEST_CASE("eccentric and tilted starts are not tried where the fit is good, nor where the orbit is held circular and flat") {
    const auto m = make_exercise(parse_scenario(quick_text(), "quick"), 2);
    SolveOptions o;
    o.samples = 20;
    const Solution s = solve(m.ex.exercise, o);
    REQUIRE_FALSE(s.goodness.poor());
    CHECK(s.shape_screens == 0);
    CHECK(s.shape_starts == 0);
    CHECK(s.starts >= 1);
    // A poor fit of a circular, coplanar model has no shapes to try.
    const auto e = make_exercise(quick_eccentric(), 3680816987411020ULL);
    o.circular = o.coplanar = true;
    const Solution flat = solve(e.ex.exercise, o);
    REQUIRE(flat.goodness.poor());
    CHECK(flat.shape_screens == 0);
}

TEST_SUITE("slow") {

TEST_CASE("tutorial scenario with noise: the prediction lands in the field for at least 9 of 10 seeds") {
    const Scenario sc = load_scenario(testing::source_path("scenarios/tutorial.toml"));
    std::vector<int> hit(10, 0);
    std::vector<double> sep(10, 0.0);
    parallel_for(10, 2, [&](std::size_t i) {
        const auto m = make_exercise(sc, 100 + i);
        SolveOptions o;
        o.threads = 1;
        o.samples = 50;
        const Solution s = solve(m.ex.exercise, o);
        const Score sco = score_prediction(m.ex.exercise.brief, m.ex.key, s.prediction);
        hit[i] = sco.hit ? 1 : 0;
        sep[i] = sco.separation_arcmin;
    });
    int hits = 0;
    for (int h : hit) hits += h;
    MESSAGE("tutorial: " << hits << " of 10 seeds inside the field");
    CAPTURE(sep[0]); CAPTURE(sep[1]); CAPTURE(sep[2]); CAPTURE(sep[3]); CAPTURE(sep[4]);
    CAPTURE(sep[5]); CAPTURE(sep[6]); CAPTURE(sep[7]); CAPTURE(sep[8]); CAPTURE(sep[9]);
    CHECK(hits >= 9);
}

TEST_CASE("calibration: the truth falls inside the 1-sigma and 2-sigma ellipses and the 90% radius as often as stated") {
    // The quick scenario draws e and tilt from Rayleigh distributions of scale 0.03 and 2 deg; solving with the
    // matching priors, the stated uncertainties should be right. For a 2-D Gaussian the probability inside the
    // k-sigma ellipse is 1 - exp(-k^2/2): 39.3% (k = 1) and 86.5% (k = 2) (standard result).
    const Scenario sc = load_scenario(testing::source_path("scenarios/quick.toml"));
    const std::size_t n = 100;
    std::vector<double> maha(n, -1.0), sep(n, 0.0), r90(n, 0.0);
    parallel_for(n, 2, [&](std::size_t i) {
        const std::uint64_t seed = 1000 + i;
        const auto m = make_exercise(sc, seed);
        SolveOptions o;
        o.eccentricity_prior_sigma = 0.03;
        o.inclination_prior_rad = 2.0 * deg;
        o.threads = 1;
        o.samples = 200;
        o.seed = seed;
        const Solution s = solve(m.ex.exercise, o);
        const Score sco = score_prediction(m.ex.exercise.brief, m.ex.key, s.prediction);
        maha[i] = sco.mahalanobis.value_or(-1.0);
        sep[i] = sco.separation_arcmin * 60.0;
        r90[i] = s.prediction.radius90_arcsec;
    });
    std::size_t valid = 0, in1 = 0, in2 = 0, in90 = 0;
    for (std::size_t i = 0; i < n; ++i) {
        if (maha[i] < 0) continue;
        ++valid;
        in1 += maha[i] <= 1.0 ? 1 : 0;
        in2 += maha[i] <= 2.0 ? 1 : 0;
        in90 += sep[i] <= r90[i] ? 1 : 0;
    }
    REQUIRE(valid == n);
    const double f1 = static_cast<double>(in1) / n, f2 = static_cast<double>(in2) / n, f90 = static_cast<double>(in90) / n;
    MESSAGE("calibration over " << n << " seeds: inside 1 sigma " << f1 << ", inside 2 sigma " << f2 << ", inside the 90% radius " << f90);
    CHECK(std::abs(f1 - 0.393) <= 0.08);
    CHECK(std::abs(f2 - 0.865) <= 0.08);
    CHECK(std::abs(f90 - 0.90) <= 0.06);
}

TEST_CASE("calibration on tutorial: the truth falls inside the stated 50 and 90 percent regions as often as stated") {
    // Tutorial draws e uniform in [0, 0.05] and the tilt uniform in [0, 2] deg; the priors with the same second
    // moments (a Rayleigh of scale s has E[x^2] = 2 s^2): e 0.0204, tilt 0.816 deg. A 2-D Gaussian region holds
    // 1 - exp(-d^2/2) within Mahalanobis distance d, and d^2 is chi-square with 2 degrees of freedom, mean 2 and
    // variance 4 (standard results). n = 200 seeds (6000-6199, used by no other test): binomial standard errors
    // 3.5 points at 50 % and 2.1 at 90 %, and 0.14 for the mean of d^2; each must lie within 3 of them.
    // (A campaign of 100 other tutorial seeds with these priors gave 0.50, 0.88 and 1.95.)
    const Scenario sc = load_scenario(testing::source_path("scenarios/tutorial.toml"));
    const std::size_t n = 200;
    std::vector<double> d2(n, -1.0);
    parallel_for(n, 2, [&](std::size_t i) {
        const std::uint64_t seed = 6000 + i;
        const auto m = make_exercise(sc, seed);
        SolveOptions o;
        o.eccentricity_prior_sigma = 0.0204;
        o.inclination_prior_rad = 0.816 * deg;
        o.threads = 1;
        o.samples = 0;
        o.seed = seed;
        const Solution s = solve(m.ex.exercise, o);
        const Score sco = score_prediction(m.ex.exercise.brief, m.ex.key, s.prediction);
        if (sco.mahalanobis) d2[i] = *sco.mahalanobis * *sco.mahalanobis;
    });
    const testing::RegionTally tally = testing::tally_regions(d2);
    REQUIRE(tally.valid == n);
    const std::size_t in50 = tally.in50, in90 = tally.in90;
    const double mean = tally.mean_d2;
    const double f50 = static_cast<double>(in50) / n, f90 = static_cast<double>(in90) / n;
    MESSAGE("tutorial, " << n << " seeds: inside the 50 % region " << f50 << ", the 90 % region " << f90 << ", mean d^2 " << mean);
    CHECK(std::abs(f50 - 0.50) <= 3.0 * std::sqrt(0.25 / n));
    CHECK(std::abs(f90 - 0.90) <= 3.0 * std::sqrt(0.09 / n));
    CHECK(std::abs(mean - 2.0) <= 3.0 * 2.0 / std::sqrt(static_cast<double>(n)));
}

TEST_CASE("the luck of the epoch on classic as its header says: the rule's distance fixed fits badly and is close only near the data while the data overrule it as a prior") {
    // Harrowgate (classic): the spacing rule fitted to the known planets puts the next planet about 25% beyond
    // the hidden body. Fixing the distance there, the fit trades distance for mass and phase: the predicted
    // track agrees with the truth where the data constrain the body best and drifts off away from it.
    const Scenario sc = load_scenario(testing::source_path("scenarios/classic.toml"));
    const auto m = make_exercise(sc, 1);
    const double rule = spacing_rule_next(m.ex.exercise.brief);
    const DrawnBody& h = hidden_of(m.truth);
    CHECK(rule / h.elements.semi_major_axis > 1.2);
    CHECK(rule / h.elements.semi_major_axis < 1.3);
    SolveOptions o;
    o.distance = DistancePrior::fixed;
    o.distance_au = rule;
    o.samples = 30;
    o.track_years = 150.0;
    o.epoch_year = 1860.0;
    const Solution s = solve(m.ex.exercise, o);
    const Score sco = score_prediction(m.ex.exercise.brief, m.ex.key, s.prediction, 150.0);
    // Measured: closest agreement about 2 deg near 1860 (the middle of the record), 50 deg by 1910.
    const auto at = [&](double year) {
        return std::min_element(sco.luck.begin(), sco.luck.end(), [&](const LuckPoint& a, const LuckPoint& b) {
                   return std::abs(a.year - year) < std::abs(b.year - year);
               })->separation_arcmin;
    };
    MESSAGE("luck: closest " << sco.closest_arcmin << " arcmin in " << sco.closest_year << "; 50 years later " << at(sco.closest_year + 50.0)
                              << " arcmin; 100 years later " << at(sco.closest_year + 100.0) << " arcmin; rule " << rule << " au, truth "
                              << h.elements.semi_major_axis << " au");
    CHECK(sco.closest_year > 1800.0);
    CHECK(sco.closest_year < 1900.0);
    CHECK(sco.closest_arcmin < 300.0);
    CHECK(at(sco.closest_year + 50.0) > 10.0 * sco.closest_arcmin);
    CHECK(at(sco.closest_year + 100.0) > 10.0 * sco.closest_arcmin);
    // The scenario's header: trusting the rule outright costs a fit whose chi2 is over twice its degrees of
    // freedom (measured 2.6), and 50 degrees at the 1910 search epoch.
    CHECK(s.chi2 > 2.0 * static_cast<double>(s.dof));
    CHECK(at(1910.0) > 40.0 * 60.0);
    // ... while the rule as a 1% prior is overruled by the data: the distance lands within 1% of the truth
    // (measured 26.68 au against 26.6), not at the rule's 33.6 au.
    SolveOptions tight;
    tight.distance = DistancePrior::spacing;
    tight.spacing_sigma_fraction = 0.01;
    tight.samples = 30;
    const Solution t = solve(m.ex.exercise, tight);
    MESSAGE("spacing rule as a 1% prior: a = " << t.best.semi_major_axis << " au; truth " << h.elements.semi_major_axis << " au");
    CHECK(std::abs(t.best.semi_major_axis / h.elements.semi_major_axis - 1.0) < 0.01);
    // And the free solve's miss at 1910 comes from the era offsets and drift it trusts away: fitted as nuisance
    // parameters, the truth is inside the field and within 2 sigma (measured 45 arcmin, 1.35 sigma, against 110
    // arcmin and 3.5 sigma trusting the eras), and the luck curve stays inside the field all through the window.
    SolveOptions trusting;
    trusting.samples = 30;
    SolveOptions drifts = trusting;
    drifts.model.era_systematics = "drifts";
    const Score trusted = score_prediction(m.ex.exercise.brief, m.ex.key, solve(m.ex.exercise, trusting).prediction, 60.0);
    const Score fitted = score_prediction(m.ex.exercise.brief, m.ex.key, solve(m.ex.exercise, drifts).prediction, 60.0);
    MESSAGE("1910, trusting the eras: " << trusted.separation_arcmin << " arcmin, " << trusted.mahalanobis.value_or(NAN)
                                        << " sigma; with their drifts fitted: " << fitted.separation_arcmin << " arcmin, "
                                        << fitted.mahalanobis.value_or(NAN) << " sigma, inside the field " << fitted.luck_fraction_inside);
    CHECK_FALSE(trusted.hit);
    CHECK(trusted.mahalanobis.value_or(0.0) > 3.0);
    CHECK(fitted.hit);
    CHECK(fitted.mahalanobis.value_or(INFINITY) < 2.0);
    CHECK(fitted.luck_fraction_inside > 0.9);
}

}  // TEST_SUITE("slow")
