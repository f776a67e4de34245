// The one predictor: a fitted model (the observed planets' corrected states and the hidden body's parameters,
// with their covariance) turned into sky positions, tracks, error ellipses and samples at any epochs.
//
// Method: the best fit is integrated once and read at every epoch (position, distance, track); the covariance
// is propagated linearly through finite-difference derivatives of the sky position (one model run per
// parameter, read at every epoch); and samples drawn from the covariance (each integrated once and read at every
// epoch) give the sampled ellipse and the radius that holds 90 % of them. The solve, campaigns, the budget and
// the viewer all call this module. Units: radians inside; arcsec for offsets, ellipses and radii.
#pragma once

#include <atomic>
#include <cmath>
#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "sim/fit/known_fit.hpp"
#include "sim/model/model.hpp"

namespace wayward {

class RegionDensity;  // region_density.hpp

// The solve's parameter vector: the observed planets' scaled states (6 each, see pack_planets), then the hidden
// body's parameters, of which some may be absent (a fixed distance, a circular or coplanar orbit).
struct HiddenParameters {
    std::size_t planets = 0;          // 6 x observed planets
    std::vector<std::string> names;   // of the hidden-body parameters, in order
    int i_logm = -1, i_a = -1, i_k = -1, i_h = -1, i_lon = -1, i_ix = -1, i_iy = -1;
    // The mean longitude is fitted at a reference time in the middle of the data (where the data fix it almost
    // independently of the distance); t_ref is that time in days from epoch 0.
    double t_ref = 0.0;
    double gm_star = 0.0;             // of the central pair, for the mean motion
    double fixed_a = 0.0;             // the semi-major axis when it is not fitted

    // fitted_distance: log a is a parameter; eccentric / inclined: e cos, e sin / the tilt components are.
    static HiddenParameters make(std::size_t observed_planets, bool fitted_distance, bool eccentric, bool inclined);
    std::size_t size() const { return planets + names.size(); }
    HiddenOrbit hidden(const Eigen::VectorXd& x) const;
    // Finite-difference steps for every parameter (scaled planet states 1, log mass 0.01, the others 1e-3).
    Eigen::VectorXd steps() const;
    // Steps of the central differences that seed the tangent map (run_model_tangent): the planets' map to the
    // state is linear (any step is exact), the hidden body's a hundredth of steps(): 1e-4 in log mass, 1e-5 rad.
    Eigen::VectorXd seed_steps() const;
};

// What the predictor needs of a solve: the setup (weights as the solve left them), the reference state the
// planets' parameters are counted from, the layout, the best parameter vector and its covariance (all
// parameters, planets included).
struct FittedModel {
    ModelState reference;
    HiddenParameters layout;
    Eigen::VectorXd best;
    Eigen::MatrixXd covariance;
    ModelState state(const ModelSetup& setup, const Eigen::VectorXd& x) const;
    // Optional, for importance weights of the covariance samples where the map is not linear: chi2 of a parameter
    // vector (data and priors) from a run that covers the data; the best fit's chi2 and the chi2/dof scale the
    // covariance was given (1 where every sigma was recorded and the fit is good).
    std::function<bool(const Eigen::VectorXd& x, const ModelRun& run, double& chi2)> chi2_of;
    // Optional: replaces the planets' part of x by their corrections solved for x's hidden-body parameters
    // (one Gauss-Newton step, one model run); false if the model could not be run.
    std::function<bool(Eigen::VectorXd& x)> profile;
    Eigen::MatrixXd profile_gain;  // K = Jp^+ J_theta at the best: the planets' linear response, dp = -K dtheta
    double chi2_best = 0.0, chi2_scale = 1.0;
};

struct TrackPoint {
    double year = 0.0;
    double lon = 0.0, lat = 0.0;  // radians
};

struct Prediction {
    double epoch_year = 0.0;
    double lon = 0.0, lat = 0.0, distance_au = 0.0;
    // Covariance of (lambda cos(beta), beta) in arcsec^2 by linear propagation.
    double cov_ll = 0.0, cov_lb = 0.0, cov_bb = 0.0;
    double semi_major_arcsec = 0.0, semi_minor_arcsec = 0.0;
    double orientation_deg = 0.0;   // major axis, from +lambda towards +beta
    // The same from the covariance samples.
    double sampled_semi_major_arcsec = 0.0, sampled_semi_minor_arcsec = 0.0;
    double radius90_arcsec = 0.0;   // holds 90% of the sampled positions (about the predicted point)
    int samples_used = 0;
    int samples_in_full = 0;        // of those, run through the model (the rest propagated linearly)
    double pilot_departure = NAN;   // the pilot samples' largest departure from linear, in semi-minor axes
    // The samples' own sky positions (radians) and their weights (summing to one: equal where the map is linear,
    // importance weights where it is not): the virtual bodies whose density is the probability map of the region.
    // solution.toml keeps them, so search, score and the viewer use the same map as the solve.
    std::vector<double> sample_lon, sample_lat, sample_weight;
    double effective_samples = NAN;  // (sum w)^2 / sum w^2 of the importance weights; NaN when all are equal
    // Where the solve mixes other minima into the map (solve/mixture.hpp): each sample's minimum, 0 for the best's
    // own (first) and i for the i-th other minimum's, which follow; empty when the samples are the best's alone.
    // The sky map smooths each group at its own scale (SkySample::group).
    std::vector<int> sample_group;
    std::vector<TrackPoint> track;
    // A stated prediction's region given as a HEALPix map (a team's own, never the solver's): scored in place of
    // samples; the file it came from, for what score prints. Shared, as copies of a prediction read the same map.
    std::shared_ptr<const RegionDensity> stated_map;
    std::string stated_map_file;
};

// Whether the samples, not the ellipse, describe the region: every sample was run through the model because the
// pilot showed the map is not linear (where it is, the samples are the ellipse's Gaussian propagated linearly),
// or other minima's virtual bodies are mixed in (the region may then be several islands).
inline bool samples_describe_region(const Prediction& p) {
    return p.samples_used > 0 && (p.samples_in_full >= p.samples_used || !p.sample_group.empty()) &&
           p.sample_lon.size() == static_cast<std::size_t>(p.samples_used) &&
           p.sample_lat.size() == p.sample_lon.size() && p.sample_weight.size() == p.sample_lon.size();
}

// Why the samples describe the region, in words: "the map is not linear" or "other minima mixed in".
inline const char* why_samples_describe_region(const Prediction& p) {
    return p.sample_group.empty() ? "the map is not linear" : "other minima mixed in";
}

// Sample k's group (Prediction::sample_group; 0 when the samples are the best minimum's alone).
inline int group_of_sample(const Prediction& p, std::size_t k) { return k < p.sample_group.size() ? p.sample_group[k] : 0; }

struct PredictOptions {
    double track_years = 60.0;      // track +- this around each epoch (cut at the span's ends)
    double track_step_years = 1.0 / 24.0;  // fine enough for the annual parallax wobble (no aliasing in the luck curve)
    int samples = 300;              // covariance samples (0: none)
    // The first pilot_samples are run through the model; if each lies within linear_tolerance of the
    // semi-minor axis of its linear propagation, at every epoch, the rest are propagated linearly (0: all in full).
    int pilot_samples = 40;
    double linear_tolerance = 0.02;
    std::uint64_t seed = 1;         // of the samples
    unsigned threads = 1;           // for the samples (results do not depend on it)
};

// Optional hooks: progress (stage, fraction of the prediction's work), cancellation, a count of model runs.
struct PredictHooks {
    std::function<void(const std::string& stage, double fraction)> report;
    const std::atomic<bool>* cancel = nullptr;
    std::atomic<int>* runs = nullptr;
};

// Predictions at every epoch (years), in the order given. Throws InputError for an epoch outside the
// exercise's span, std::runtime_error when the best fit cannot be integrated.
std::vector<Prediction> predict(const ModelSetup& setup, const FittedModel& fit, const std::vector<double>& epochs_year,
                                const PredictOptions& options, const PredictHooks& hooks = {});

// Position, distance and track of one model state at one epoch: no covariance, no samples.
Prediction predict_position(const ModelSetup& setup, const ModelState& state, double epoch_year, double track_years,
                            double track_step_years);

// Semi-axes (sqrt of the eigenvalues) and orientation (major axis, degrees from +lambda towards +beta, in
// [0, 180)) of the 2x2 covariance [[cll, clb], [clb, cbb]].
void ellipse_axes(double cll, double clb, double cbb, double& major, double& minor, double& orientation_deg);

// The major axis's position angle in [0, 180) degrees: from north (+beta) through east (+lambda), the
// astronomer's convention for the orientation of an ellipse on the sky, from ellipse_axes' orientation.
inline double position_angle_deg(double orientation_deg) {
    double pa = 90.0 - orientation_deg;
    while (pa < 0.0) pa += 180.0;
    while (pa >= 180.0) pa -= 180.0;
    return pa;
}

}  // namespace wayward
