// Summaries of the known-bodies fit's O−C: the RMS of the kept residuals by planet and era, with the era's σ
// in use and how many observations were set aside. `wayward residuals` prints them and the viewer's
// Residuals panel shows them, both from this one function. Units: arcsec.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "sim/fit/known_fit.hpp"

namespace wayward {

// One planet in one era (only pairs with at least one observation get a row).
struct ResidualSummaryRow {
    std::size_t planet = 0;               // index into ModelSetup::planets
    std::size_t era = 0;                  // index into ModelSetup::eras
    std::string planet_name, era_name;
    std::size_t kept = 0, set_aside = 0;
    double rms_lon = 0.0, rms_lat = 0.0;  // arcsec, over the kept observations (0 if none was kept)
    double sigma = 0.0;                   // the era's σ in λ·cos β in use (the last kept observation's)
    bool sigma_estimated = false;         // the era records no σ: it was estimated from its own residuals
};

// Rows in planet order, eras in order within each planet.
std::vector<ResidualSummaryRow> residual_summary(const KnownFit& fit);

}  // namespace wayward
