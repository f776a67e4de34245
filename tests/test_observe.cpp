// Synthetic observations: noise statistics per era, visibility, and bad input in the observing plan.
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
#include "sim/truth/observe.hpp"
#include "sim/base/units.hpp"
#include "observe_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;
namespace fs = std::filesystem;
using wayward::testing::kNoisy;
using wayward::testing::replace;

namespace {

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

