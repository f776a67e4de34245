// The error budget of a scenario: how much each error source alone contributes to the error of the predicted
// position at the search epoch, over N systems drawn with different seeds.
//
// Method: every run draws one system (generate) and keeps its truth integration. Each line re-observes and
// re-solves that system with one source switched on and every other off: random noise of one era at a time
// (its records keep their recorded sigma; the other eras are noise-free, because observe() draws every random
// number whether or not its source is on, so the records of two noise settings differ only in their errors),
// systematic offsets, rounding, outliers, the distance prior (the spacing rule instead of a free distance), errors
// in the known planets' masses and in their approximate orbits as the brief gives them, and light time left out
// of the model. The "all sources off" line shows the numerical floor, "all sources on" switches on every line at
// once. Per line: median and 90th percentile of the separations (arcmin); the quadrature sum of the lines beside
// the all-on result; the search radius that 50/90/99% of the all-on runs fall within (their quantiles).
// What-if knobs scale an era's sigma (noise and recorded sigma alike), move the last era's end, or multiply the
// cadence. The solves' weak priors on eccentricity and tilt pull a noise-free solution towards a circular,
// untilted orbit, so every line is solved with broad priors (sigma 0.5 and 30 deg, far wider than any bundled
// scenario draws) and the all-off line sits at the numerical floor; the pull of priors matched to the scenario's
// draws (a Rayleigh scale, else the largest value drawn) is a line of its own. Units: arcmin, years.
#pragma once

#include <cstdint>
#include <optional>
#include <ostream>
#include <string>
#include <utility>
#include <vector>

#include "sim/scenario/scenario.hpp"

namespace wayward {

struct BudgetOptions {
    int runs = 10;
    std::uint64_t seed = 1;                 // run r draws its system with derive_seed(seed, "budget", r)
    unsigned threads = 0;                   // solves at once (0: all cores); each solve uses one thread
    std::optional<double> ecc_sigma;        // base prior sigma on e cos(varpi), e sin(varpi); default broad, 0.5
    std::optional<double> tilt_sigma_deg;   // base prior sigma on the tilt components; default broad, 30 deg
    int starts = 4;
    int grid_distances = 10, grid_longitudes = 16;
    // What-ifs.
    std::vector<std::pair<std::string, double>> era_sigma_scale;  // era label -> factor on its sigma
    std::optional<double> end_year;         // the last era ends here instead (within the scenario's span)
    double cadence = 1.0;                   // multiplies every era's observations per season (at least 1 remains)
    std::optional<double> mass_error;       // relative sigma of the known masses (default: the scenario's)
    std::vector<std::string> only;          // compute only these line keys (empty: every line)
    std::vector<std::string> combine;       // the sources the all-on line switches on together (empty: every one)
    int search_nights = 0;                  // > 0: rehearse the telescope search of each all-on solution for this
                                            // many nights from the search epoch (the scenario's telescope)
};

struct BudgetLine {
    std::string key;                        // all-off, random:ERA, random:early, systematic, rounding, outliers,
                                            // distance-prior, masses, orbits, shape-priors, light-time, all-on
    std::string label;                      // in words
    bool present = true;                    // false: the scenario has no such error (not computed, contributes 0)
    std::vector<double> separations_arcmin; // one per run (NaN where the solve failed)
    int failed = 0;
    double median = NAN, p90 = NAN;
};

struct BudgetResult {
    std::string scenario_name;
    double epoch_year = 0.0;
    double field_radius_arcmin = 0.0;
    int runs = 0;
    std::vector<std::uint64_t> seeds;
    std::string priors;                     // the solve's priors in words
    std::string what_if;                    // the what-ifs applied, in words (empty: none)
    std::vector<BudgetLine> lines;          // all-off first, each source alone, all-on last
    std::vector<std::string> combined;      // the sources of the all-on line (empty: every one)
    double quadrature_median = NAN, quadrature_p90 = NAN;  // sqrt of the sum of squares over those sources
    double radius50 = NAN, radius90 = NAN, radius99 = NAN; // arcmin, quantiles of the all-on separations
    // The search rehearsal of the all-on runs (search_nights > 0): per run the night of discovery (0: not found
    // within the nights, or the solve failed), the count found, and the nights after which 50 % and 90 % of the
    // runs had found the body (NaN: not within the nights).
    int search_nights = 0;
    std::vector<int> search_found_night;
    int search_found = 0;
    double search_nights50 = NAN, search_nights90 = NAN;
    const BudgetLine* line(const std::string& key) const;
};

// The scenario with the what-ifs applied (InputError naming the option for a bad one).
Scenario apply_what_ifs(const Scenario& sc, const BudgetOptions& options);
// Runs the budget. `progress` gets a bar (may be null).
BudgetResult run_budget(const Scenario& sc, const BudgetOptions& options, std::ostream* progress = nullptr);


}  // namespace wayward
