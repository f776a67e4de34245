// Weights and clipping of the known-bodies fit (update_weights): the σ estimated for an era that records none
// is the robust RMS of its residuals, an isolated 10σ outlier is set aside, a strong smooth signal (the pull
// of an unmodelled body) is followed by the local lines and not clipped, and a recorded σ is left alone.
// Synthetic residuals with a fixed seed; the expected values are the Gaussian facts named beside each check.
#include <doctest/doctest.h>

#include <array>
#include <cmath>
#include <random>
#include <vector>

#include "sim/base/units.hpp"
#include "sim/fit/known_fit.hpp"

using namespace wayward;

namespace {

// One planet observed every 30 days for 80 years: era 0 ("plates", no σ recorded) the first half, era 1
// ("ccd", no σ recorded) the second half, residuals in arcsec with the given noise per era plus `signal`.
struct Synthetic {
    ModelSetup setup;
    std::vector<std::array<double, 2>> residuals;
};

template <typename Signal>
Synthetic synthetic(double sigma0, double sigma1, bool era1_records, Signal signal, std::uint64_t seed = 7) {
    Synthetic s;
    s.setup.planets = {1};
    s.setup.eras = {"plates", "ccd"};
    s.setup.era_records_sigma = {false, era1_records};
    std::mt19937_64 rng(seed);
    std::normal_distribution<double> unit(0.0, 1.0);
    const double span = 80.0 * julian_year_days;
    for (double t = 0.0; t < span; t += 30.0) {
        FitObservation f;
        f.time_days = t;
        f.planet = 0;
        f.era = t < span / 2 ? 0 : 1;
        const double sig = f.era == 0 ? sigma0 : sigma1;
        f.sigma_recorded = f.era == 1 && era1_records;
        f.sigma_lon_arcsec = f.sigma_lat_arcsec = f.sigma_recorded ? sigma1 : 1.0;
        s.setup.obs.push_back(f);
        s.residuals.push_back({sig * unit(rng) + signal(t), sig * unit(rng)});
    }
    return s;
}

double era_sigma(const ModelSetup& setup, std::size_t era, int c) {
    for (const FitObservation& f : setup.obs)
        if (f.era == era) return c == 0 ? f.sigma_lon_arcsec : f.sigma_lat_arcsec;
    return NAN;
}

std::size_t rejected(const ModelSetup& setup) {
    std::size_t n = 0;
    for (const FitObservation& f : setup.obs) n += f.rejected ? 1 : 0;
    return n;
}

auto no_signal = [](double) { return 0.0; };

}  // namespace

TEST_CASE("weights: the estimated sigma per era is the robust RMS of that era's residuals") {
    Synthetic s = synthetic(0.8, 0.2, false, no_signal);
    CHECK(update_weights(s.setup, s.residuals));
    // About 490 residuals per era and coordinate: the RMS of white noise scatters by σ / sqrt(2n), about 3%
    // (common practice); 10% is more than three of those.
    for (int c = 0; c < 2; ++c) {
        CAPTURE(c);
        CHECK(era_sigma(s.setup, 0, c) == doctest::Approx(0.8).epsilon(0.10));
        CHECK(era_sigma(s.setup, 1, c) == doctest::Approx(0.2).epsilon(0.10));
    }
    // Every observation of an era carries the same σ.
    for (const FitObservation& f : s.setup.obs) CHECK(f.sigma_lon_arcsec == era_sigma(s.setup, f.era, 0));
    // 4σ clipping of Gaussian noise sets aside about 6e-5 of the coordinates (common practice): none or one here.
    CHECK(rejected(s.setup) <= 1);
    // A second call with the same residuals changes nothing.
    CHECK_FALSE(update_weights(s.setup, s.residuals));
}

TEST_CASE("weights: an injected 10 sigma outlier is set aside, its neighbours are kept") {
    Synthetic s = synthetic(0.5, 0.5, false, no_signal);
    const std::size_t k = s.setup.obs.size() / 4;  // in the middle of era 0
    s.residuals[k][0] += 10.0 * 0.5;
    update_weights(s.setup, s.residuals);
    CHECK(s.setup.obs[k].rejected);
    CHECK_FALSE(s.setup.obs[k - 1].rejected);
    CHECK_FALSE(s.setup.obs[k + 1].rejected);
    CHECK(rejected(s.setup) <= 2);
    // The outlier does not inflate its era's σ (the RMS is taken inside the clip).
    CHECK(era_sigma(s.setup, 0, 0) == doctest::Approx(0.5).epsilon(0.10));
}

TEST_CASE("weights: a strong smooth signal is not clipped") {
    // 30σ of a 60-year sinusoid in λ·cos β, the size of an unmodelled outer body's pull on a known planet.
    const double sigma = 0.5;
    Synthetic s = synthetic(sigma, sigma, false, [&](double t) { return 30.0 * sigma * std::sin(2.0 * pi * t / (60.0 * julian_year_days)); });
    update_weights(s.setup, s.residuals);
    CHECK(rejected(s.setup) <= 1);
    // The local lines follow the signal, so σ is the noise's, not the signal's RMS (about 21σ).
    CHECK(era_sigma(s.setup, 0, 0) == doctest::Approx(sigma).epsilon(0.15));
    CHECK(era_sigma(s.setup, 0, 1) == doctest::Approx(sigma).epsilon(0.10));
}

TEST_CASE("weights: an era that records its sigma keeps it") {
    Synthetic s = synthetic(0.8, 0.3, true, no_signal);
    update_weights(s.setup, s.residuals);
    for (const FitObservation& f : s.setup.obs)
        if (f.era == 1) {
            CHECK(f.sigma_lon_arcsec == 0.3);
            CHECK(f.sigma_lat_arcsec == 0.3);
        }
    CHECK(era_sigma(s.setup, 0, 0) == doctest::Approx(0.8).epsilon(0.10));
}
