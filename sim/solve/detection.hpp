// Is there a hidden body at all, and does the model fit? Two checks on a finished solve.
// Detection: the likelihood-ratio statistic between the known-bodies model and the hidden-body model, both with
// the weights and the set of observations the solve ended with (the known-bodies fit is refitted to those by one
// Gauss-Newton step through its own Jacobian, which is exact to first order about its converged fit). Under the
// null hypothesis the statistic would follow chi-square with k degrees of freedom at one fixed trial orbit
// (Wilks 1938); the solve tries many distances and phases, so the threshold is raised by a trials factor (the
// grid's cells) in the Bonferroni manner: p_local = alpha / trials. The false-alarm rate this gives was measured
// on systems whose hidden body is too weak to matter (tests/test_detection.cpp).
// Goodness of fit: where every sigma was recorded, chi2 of the solve against the chi-square distribution with its
// degrees of freedom, by the Wilson-Hilferty cube-root normal approximation (1931): a fit far above its expected
// chi2 is a wrong minimum or unmodelled systematics, and the covariance is widened by chi2/dof.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "sim/fit/known_fit.hpp"

namespace wayward {

struct DetectionTest {
    double delta_chi2 = 0.0;       // chi2 of the known-bodies model minus that of the hidden-body model (data only)
    int parameters = 0;            // the hidden body's fitted parameters
    int trials = 1;                // the trials factor
    double alpha = 0.01;           // the false-alarm probability the threshold is set for
    double threshold = 0.0;        // delta_chi2 needed for a detection
    bool detected() const { return delta_chi2 >= threshold; }
};

// The weights and rejections the known fit used, taken before the solve changes them.
struct KnownWeights {
    std::vector<double> sigma_lon, sigma_lat;
    std::vector<bool> rejected;
};
KnownWeights known_weights(const ModelSetup& setup);

// `setup` carries the solve's final weights and rejections; `hidden_residuals` the hidden-body model's weighted
// residuals (data rows first, 2 per observation, as weighted_residuals writes them).
DetectionTest detection_test(const KnownFit& known, const KnownWeights& before, const ModelSetup& setup,
                         const Eigen::VectorXd& hidden_residuals, int parameters, int trials, double alpha = 0.01);

// Upper-tail probability of chi-square with `dof` degrees of freedom at `x` (Wilson-Hilferty, good to about 1e-3
// relative for dof >= 3, which the thresholds here need; from memory).
double chi2_upper_tail(double x, double dof);
// The x with chi2_upper_tail(x, dof) = p (bisection on the function above).
double chi2_quantile_upper(double p, double dof);

struct GoodnessOfFit {
    bool applies = false;          // only when every sigma was recorded
    double chi2 = 0.0;
    std::size_t dof = 0;
    double p_value = 1.0;
    bool poor() const { return applies && p_value < 1e-3; }
};
GoodnessOfFit goodness_of_fit(double chi2, std::size_t dof, bool weights_estimated);

// How many observations the solve set aside that the known fit had kept, and the reverse.
struct ClippingChange {
    std::size_t newly_set_aside = 0, restored = 0;
};
ClippingChange clipping_change(const KnownWeights& before, const ModelSetup& setup);

}  // namespace wayward
