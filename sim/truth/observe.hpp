// Synthetic observations: what a team would have recorded of the known planets, seen from the observer planet.
// Times: each era's visibility seasons (elongation from the star above the plan's limit) get `per_season`
// observations at random times inside the season. Errors per era: Gaussian sigma in lambda*cos(beta) and beta,
// a systematic offset with a linear drift, a fraction of outliers drawn with a wider sigma, and rounding to the
// era's recorded precision. Sparse early sightings have their own sigma. Units: days, degrees, arcsec.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "sim/exercise/exercise.hpp"
#include "sim/truth/generate.hpp"
#include "sim/physics/geometry.hpp"

namespace wayward {

// What really happened to each observation (kept in the answer key).
struct ObservationTruth {
    double true_lon_deg = 0.0;    // noise-free apparent position
    double true_lat_deg = 0.0;
    double elongation_deg = 0.0;
    bool outlier = false;
    double systematic_lon_arcsec = 0.0;  // offset + drift applied (in lambda*cos(beta))
    double systematic_lat_arcsec = 0.0;
};

struct ObservationSet {
    std::vector<Observation> records;   // sorted by time, then target
    std::vector<ObservationTruth> truth;
};

// Which error sources are switched on (all on by default; the error budget switches them one at a time).
struct NoiseSwitches {
    bool random = true;
    bool systematic = true;
    bool rounding = true;
    bool outliers = true;
    double sigma_scale = 1.0;  // multiplies every era's sigma
};

ObservationSet observe(const Scenario& sc, const Truth& truth, const Ephemeris& eph, std::uint64_t seed,
                       const NoiseSwitches& noise = {});

// Visibility seasons of a target in [t0, t1]: intervals where the elongation exceeds the limit.
struct Season { double begin = 0.0, end = 0.0; };
std::vector<Season> visibility_seasons(const Ephemeris& eph, std::size_t observer, std::size_t target, double t0,
                                       double t1, double elongation_limit);

// Rounds an angle in degrees to a step given in arcsec (no rounding for a step of 0).
double round_to_precision(double value_deg, double step_arcsec);

}  // namespace wayward
