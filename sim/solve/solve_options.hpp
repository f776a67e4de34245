// The solver's options (priors, grid, starts, samples) with their one spelling of the distance prior and their
// validation. The CLI, campaign specs, the budget and the viewer build SolveOptions through these functions;
// errors name the option by its library field name (distance, ecc_sigma, tilt_sigma_deg, samples, starts,
// grid_distances, grid_longitudes), which callers translate to their own spelling (a flag, a spec key).
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "sim/base/units.hpp"
#include "sim/model/model.hpp"

namespace wayward {

enum class DistancePrior { free, fixed, gaussian, spacing };

struct SolveOptions {
    DistancePrior distance = DistancePrior::free;
    double distance_au = 0.0;              // fixed or Gaussian mean
    double distance_sigma_au = 0.0;        // Gaussian sigma
    double spacing_sigma_fraction = 0.1;   // spacing-rule prior: sigma as a fraction of the rule's distance
    bool circular = false;
    bool coplanar = false;                 // true: the orbit lies in the observer's plane
    double eccentricity_prior_sigma = 0.1; // weak Gaussian prior on e cos(varpi), e sin(varpi) when not circular
    double inclination_prior_rad = 3.0 * deg;  // weak Gaussian prior on the tilt components
    int grid_distances = 10;
    int grid_longitudes = 16;
    int starts = 4;                        // distinct grid minima refined by Levenberg-Marquardt
    // Where the circular starts' best fit is poor and the orbit may be eccentric or tilted: each chosen grid
    // minimum is screened again with eccentric and tilted shapes, and the best that beats the circular orbit
    // starts one more fit (solve.cpp).
    bool shape_starts = true;
    int samples = 300;                     // covariance samples for the ellipse check and the 90% radius
    std::optional<double> epoch_year;      // default: the brief's first search epoch
    double track_years = 60.0;             // predicted track +- this around the epoch
    double track_step_years = 1.0 / 24.0;  // fine enough for the annual parallax wobble (no aliasing in the luck curve)
    std::uint64_t seed = 1;                // for the covariance samples
    ModelOptions model;
    unsigned threads = 0;                  // 0: all cores (results do not depend on it)
    std::string describe() const;          // one line in words
};

// The distance prior from its text: free, fixed:A, gauss:A,SIGMA or spacing[:FRACTION] (au; FRACTION of the
// rule's distance). Throws InputError (no file, field "distance") on anything else.
void set_distance_prior(SolveOptions& options, const std::string& text);
// The same text back, numbers in their shortest round-trip form: set_distance_prior(o, distance_prior_text(o))
// leaves o as it was.
std::string distance_prior_text(const SolveOptions& options);
// Checks every option's range; throws InputError (no file) naming the library field.
void validate(const SolveOptions& options);

}  // namespace wayward
