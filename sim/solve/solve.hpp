// The inverse problem: infer the hidden body's orbit and mass from the observations, jointly with corrections
// to the observed planets' initial states, and predict its place on the sky at an epoch with an error ellipse.
//
// Method: (1) the known-bodies fit gives weights, outlier flags and the planets' states; (2) a grid over
// (semi-major axis, mean longitude at epoch 0) is screened with the hidden body's signature taken as linear in
// its mass (one model run per grid node, then a linear least-squares solve for the mass and the planets'
// corrections); (3) the best distinct grid minima start Levenberg-Marquardt fits of all parameters (the
// planets' Jacobian columns are held at their known-fit values while the hidden body's are re-differenced;
// the best minimum is then polished with the full Jacobian; where that fit is poor, eccentric and tilted starts
// about the grid minima are tried too); (4) covariance (J^T W J)^-1, scaled by the
// reduced chi2 where weights were estimated; (5) the sky position at the epoch with its 1-sigma ellipse by
// linear propagation, checked by sampling the covariance, and the radius that holds 90% of the samples.
// Priors enter as extra weighted residuals. Units: solar masses, au, radians inside; arcsec / arcmin out.
#pragma once

#include <atomic>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include <memory>

#include "sim/fit/known_fit.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/predict/predict.hpp"
#include "sim/solve/detection.hpp"
#include "sim/solve/minima.hpp"
#include "sim/solve/solve_options.hpp"

namespace wayward {

struct Solution {
    std::string exercise_sha256;    // the brief's identity (answer-key or record digest): ties the solution to its exercise
    std::string scenario_name;
    std::string priors;
    std::vector<Minimum> minima;    // distinct local minima, best first
    HiddenOrbit best;
    std::vector<std::string> parameter_names;  // of the hidden-body parameters in the covariance below
    Eigen::MatrixXd hidden_covariance;         // of those parameters (log mass, a, ...)
    double mass_sigma = 0.0, distance_sigma_au = 0.0;
    double mass_distance_correlation = 0.0;
    double chi2 = 0.0;
    std::size_t dof = 0;
    bool covariance_scaled = false;
    double spacing_rule_au = 0.0;   // the rule's next distance (0 if fewer than 2 known planets)
    int model_runs = 0;
    // Where the circular starts' best fit was poor: its chi2, the eccentric or tilted orbits screened about the
    // grid minima, the fits started from them, and whether one of those became the best (0, 0, 0, false when the
    // fallback did not run).
    int starts = 0;                 // fits started in all
    double shape_fallback_chi2 = 0.0;
    int shape_screens = 0;
    int shape_starts = 0;
    bool shape_start_won = false;
    DetectionTest detection;            // is a hidden body demanded at all (known-bodies model against this one)
    GoodnessOfFit goodness;         // chi2 against its distribution where every sigma was recorded
    ClippingChange clipping;        // observations set aside (or restored) by the solve against the known fit
    bool covariance_widened = false;  // by chi2/dof because the fit is poor for recorded sigma
    Prediction prediction;
    // In memory only (not in solution.toml): what the predictor needs to predict this solution at other epochs.
    std::shared_ptr<const ModelSetup> setup;   // the model with the weights the solve ended with
    FittedModel fit;                           // best parameters (planets included) and their full covariance
};

struct SolveProgress {
    std::function<void(const std::string& stage, double fraction)> report;
    const std::atomic<bool>* cancel = nullptr;
};

// Geometric progression log a_n = log a_0 + n log r fitted to the known planets' semi-major axes (a common
// spacing rule, empirical): the next term after the outermost known planet.
double spacing_rule_next(const Brief& brief);

Solution solve(const Exercise& ex, const SolveOptions& options, const SolveProgress& progress = {});

// The predictor's options for a solve's options (track, samples, seed, threads).
PredictOptions prediction_options(const SolveOptions& options);

// solution.toml
std::string solution_toml(const Solution& s);
Solution load_solution(const std::string& path);
// A [prediction] table's virtual bodies: sample_lon_deg, sample_lat_deg, sample_weight (degrees; absent in
// solution files from before they were kept). In a solution file the weights add up to 1 and their number is the
// table's `samples`; a `stated` set (a team's own prediction) may leave the weights out (equal) or give any
// non-negative scale, and becomes the prediction's region. Errors name the field.
void read_virtual_bodies(detail::TableReader& r, Prediction& p, bool stated);

}  // namespace wayward
