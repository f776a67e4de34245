// Every plausible solution: each distinct minimum's relative probability and its physical plausibility.
// Probability: the Laplace approximation to each minimum's share of the posterior (Laplace 1774; MacKay 2003,
// "Information Theory, Inference, and Learning Algorithms", ch. 27): p_i proportional to
// exp(-chi2_i / 2s) sqrt(det C_i), where chi2_i holds the data and the priors, C_i = s (J_i^T J_i)^-1 is the
// minimum's own covariance and s the chi2/dof scale the solve applies when some era's sigma was estimated (1
// otherwise). It is a local Gaussian picture of each basin, not a sample of the posterior.
// Plausibility, by physical checks only: a mass at or beyond the deuterium-burning limit (13 Jupiter masses,
// 0.0124 solar) is a brown dwarf, beyond the hydrogen-burning limit (0.075 solar) a star, not a planet; an orbit
// that comes within 2 sqrt(3) mutual Hill radii of a known planet's (periapsis against the planet's apoapsis, or
// the reverse) is not Hill-stable (Gladman 1993, Icarus 106, 247, for two planets on near-circular orbits), so
// the known planets' orbits could not have survived it.
#pragma once

#include <cmath>
#include <optional>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "sim/exercise/exercise.hpp"
#include "sim/model/model.hpp"
#include "sim/predict/predict.hpp"

namespace wayward {

// One distinct local minimum of the solve (best first in Solution::minima).
struct Minimum {
    HiddenOrbit orbit;
    double chi2 = 0.0;
    bool converged = false;
    int iterations = 0;
    double start_distance_au = 0.0, start_longitude = 0.0;
    double start_eccentricity = 0.0, start_tilt = 0.0;  // of the start orbit (0: a circular grid start)
    Eigen::VectorXd parameters;     // the whole parameter vector (planets' corrections included); in memory only
    double probability = NAN;       // relative probability among the minima (Laplace approximation, below)
    std::vector<std::string> flags; // physical implausibilities (implausibility_flags), empty when none
    Eigen::MatrixXd covariance;     // its own (Laplace) covariance; in memory only
    std::optional<Prediction> prediction;  // where it puts the body at the solve's epoch (not for the best: see Solution)
};

inline constexpr double deuterium_burning_limit_solar = 0.0124;  // 13 Jupiter masses
inline constexpr double hydrogen_burning_limit_solar = 0.075;
inline constexpr double hill_stability_separation = 3.4641016151377544;  // 2 sqrt(3) mutual Hill radii

// What makes a hidden orbit physically implausible against the brief's star and known planets, in words (empty:
// nothing found).
std::vector<std::string> implausibility_flags(const HiddenOrbit& orbit, const Brief& brief);

// Log of each minimum's unnormalised Laplace weight: -chi2 / 2s + log sqrt(det (s (J^T J)^-1)). NaN where J is
// missing or singular.
double laplace_log_weight(double chi2, const Eigen::MatrixXd& jacobian, double scale);

// Normalised probabilities from log weights (NaN weights get probability NaN and are left out of the sum).
std::vector<double> probabilities_from_log_weights(const std::vector<double>& log_weights);

}  // namespace wayward
