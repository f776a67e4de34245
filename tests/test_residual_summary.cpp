// The known fit's RMS table (sim/fit/residual_summary): per planet and era over the kept residuals, the set-aside
// counted apart, the era's σ in use, and rows only where there are observations. Hand-computed values.
#include <doctest/doctest.h>

#include <cmath>

#include "sim/fit/residual_summary.hpp"

using namespace wayward;

TEST_CASE("residual summary: RMS of the kept O-C by planet and era") {
    KnownFit fit;
    ModelSetup& s = fit.setup;
    s.known.bodies.resize(3);
    s.known.bodies[1].name = "Inner";
    s.known.bodies[2].name = "Outer";
    s.planets = {1, 2};
    s.eras = {"plates", "ccd"};
    s.era_records_sigma = {false, true};
    auto add = [&](std::size_t planet, std::size_t era, double lon, double lat, double sigma, bool rejected) {
        FitObservation f;
        f.planet = planet;
        f.era = era;
        f.sigma_lon_arcsec = sigma;
        f.rejected = rejected;
        s.obs.push_back(f);
        fit.residuals.push_back({lon, lat});
    };
    add(0, 0, 3.0, 1.0, 2.0, false);
    add(0, 0, -4.0, 1.0, 2.0, false);
    add(0, 0, 100.0, 50.0, 2.0, true);   // set aside: not in the RMS
    add(0, 1, 0.5, -0.5, 0.4, false);
    add(1, 1, 1.0, 2.0, 0.4, true);      // Outer in ccd: only set-aside observations
    const auto rows = residual_summary(fit);
    REQUIRE(rows.size() == 3);           // no row for Outer in plates (no observation)
    CHECK(rows[0].planet_name == "Inner");
    CHECK(rows[0].era_name == "plates");
    CHECK(rows[0].kept == 2);
    CHECK(rows[0].set_aside == 1);
    CHECK(rows[0].rms_lon == doctest::Approx(std::sqrt((9.0 + 16.0) / 2.0)));
    CHECK(rows[0].rms_lat == doctest::Approx(1.0));
    CHECK(rows[0].sigma == 2.0);
    CHECK(rows[0].sigma_estimated);
    CHECK(rows[1].era_name == "ccd");
    CHECK(rows[1].rms_lon == doctest::Approx(0.5));
    CHECK_FALSE(rows[1].sigma_estimated);
    CHECK(rows[2].planet_name == "Outer");
    CHECK(rows[2].kept == 0);
    CHECK(rows[2].set_aside == 1);
    CHECK(rows[2].rms_lon == 0.0);
}
