// The known-bodies fit (wayward residuals): the initial heliocentric state (6 numbers) of every observed planet,
// in scaled units of 1e-6 of |r| and |v|, fitted by least squares with the known planets alone.
// Weights: the recorded sigma, or per era (where none is recorded) the robust RMS of that era's residuals,
// re-estimated between fits; observations beyond 4 sigma of their local trend are set aside (iterative clipping).
// Units: days, radians inside; arcsec for residuals and sigma.
#pragma once

#include <array>
#include <cstddef>
#include <functional>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "sim/exercise/exercise.hpp"
#include "sim/fit/least_squares.hpp"
#include "sim/model/model.hpp"

namespace wayward {

// ---- The known-bodies fit (wayward residuals) ----
struct KnownFit {
    ModelSetup setup;
    ModelState state;
    ModelRun run;
    double chi2 = 0.0;
    std::size_t dof = 0;
    std::size_t kept = 0, rejected = 0;
    Eigen::MatrixXd jacobian;            // weighted, of the known parameters (6 per observed planet)
    std::vector<std::array<double, 2>> residuals;  // arcsec per observation
    int model_runs = 0;                  // forward-model runs of the fit (tangent runs counted once each)
};

// Parameter vector <-> model state for the observed planets' initial states (scaled units).
Eigen::VectorXd pack_planets(const ModelSetup& setup, const ModelState& reference, const ModelState& s);
void unpack_planets(const ModelSetup& setup, const ModelState& reference, const Eigen::VectorXd& x, ModelState& s);

// Fits the known-bodies model (weights, clipping, refits). `progress` gets a line per stage if set.
KnownFit fit_known(const Exercise& ex, const ModelOptions& options = {},
                   const std::function<void(const std::string&)>& progress = {});

// Re-estimates per-era sigma (eras without recorded sigma) and clips outliers beyond `clip` sigma.
// Returns true if anything changed.
bool update_weights(ModelSetup& setup, const std::vector<std::array<double, 2>>& residuals, double clip = 4.0);

}  // namespace wayward
