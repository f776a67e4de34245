// Systematic errors of an observing era as nuisance parameters: a constant offset (and, if asked, a linear drift
// in time) of each era's longitudes and latitudes, fitted alongside everything else. They enter the residuals
// linearly, so they are eliminated exactly by projection (variable projection, Golub & Pereyra 1973): every
// weighted residual vector and every Jacobian column has its per-era weighted least-squares fit on the offset
// and drift basis removed. The fit that remains, its chi2 and its covariance are those of the full problem with
// the nuisance parameters free (the covariance is the marginal one: their uncertainty reaches the region).
// One era, the reference (the one with the most statistical weight, sum of 1/sigma^2 as recorded or as the
// setup starts with), has no longitude offset (or drift): a longitude offset common to every era would be a turn
// of the whole frame about the pole of the observer's orbit, which the planets' longitudes absorb. Its latitude
// offset is fitted like every other era's: no turn of the frame makes a constant latitude offset (a tilt changes
// latitudes as the sine of the longitude), so a telescope's latitude error would otherwise bend the fit.
#pragma once

#include <array>
#include <cstddef>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "sim/model/fit_observation.hpp"

namespace wayward {

// What the projection needs of a fitting setup: its observations, its eras, the reference era and the choice.
struct EraSystematicsView {
    const std::vector<FitObservation>* obs = nullptr;
    std::size_t eras = 0;
    std::size_t reference_era = 0;
    std::string choice = "none";  // none, offsets or drifts
};

enum class EraSystematics { none, offsets, drifts };
EraSystematics era_systematics_from_name(const std::string& name);  // throws std::invalid_argument
std::string to_string(EraSystematics s);

// The number of nuisance parameters the setup's choice adds (for the degrees of freedom).
std::size_t era_systematic_parameters(const EraSystematicsView& setup);

// Removes from every column of m (2 rows per observation: lambda cos beta, beta, weighted; rejected rows zero)
// its weighted least-squares fit on each era's offset (and drift) basis (the reference era's latitude only).
void project_out_era_systematics(const EraSystematicsView& setup, Eigen::Ref<Eigen::MatrixXd> m);

// The fitted systematic error of every observation (arcsec, lambda cos beta and beta) from weighted residuals r.
std::vector<std::array<double, 2>> fitted_era_systematics(const EraSystematicsView& setup, const Eigen::VectorXd& r);

}  // namespace wayward
