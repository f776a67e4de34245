// The fitting model and the least-squares core.
//
// Model: the team's known planets (masses from the brief), optionally a hidden body, Newtonian N-body.
// For speed the fitting model treats the observer planet and its star as one inner pair: the outer bodies are
// integrated about the pair's barycentre (with the pair's total mass), and the observer's heliocentric track is
// taken from one full N-body integration of the known model done once. This is exact up to the pair's
// quadrupole and the tide of the outer bodies on the pair, both far below the observation errors (a test
// compares the model with the truth integrator). Parameters of the known-bodies fit: the initial
// heliocentric state (6 numbers) of every observed planet, in scaled units of 1e-6 of |r| and |v|.
//
// Least squares: Levenberg-Marquardt (Levenberg 1944, Marquardt 1963) with Nielsen's damping update, on
// weighted residuals, Jacobian by forward differences with scaled steps; Eigen for the linear algebra.
// Weights: the recorded sigma, or per era (where none is recorded) the robust RMS of that era's residuals,
// re-estimated between fits; observations beyond 4 sigma are set aside (iterative clipping).
// Units: days, radians inside; arcsec for residuals and sigma.
#pragma once

#include <cstddef>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "sim/exercise.hpp"
#include "sim/geometry.hpp"

namespace wayward {

struct FitObservation {
    double time_days = 0.0;
    std::size_t planet = 0;        // index into ModelSetup::planets (observed planets)
    double lon = 0.0, lat = 0.0;   // radians
    double sigma_lon_arcsec = 1.0, sigma_lat_arcsec = 1.0;  // weights in use
    bool sigma_recorded = false;
    std::size_t era = 0;           // index into ModelSetup::eras
    bool rejected = false;         // set aside by outlier clipping
};

// The hidden body as fitted: in the observer's frame, with non-singular eccentricity components.
struct HiddenOrbit {
    double mass = 1e-5;             // solar masses
    double semi_major_axis = 30.0;  // au
    double k = 0.0, h = 0.0;        // e cos(varpi), e sin(varpi)
    double mean_longitude = 0.0;    // at epoch 0, radians
    double inclination = 0.0, node = 0.0;
    Elements elements() const;      // classical elements in the observer frame
};

struct ModelOptions {
    LightTime light_time = LightTime::corrected;
    double rel_tol = 1e-12;
};

struct ModelState {
    std::vector<StateVector> planets;  // heliocentric states of the observed planets at epoch 0 (reference frame)
    std::optional<HiddenOrbit> hidden;
};

struct ModelSetup {
    Brief brief;
    System known;                        // star + known planets (barycentric, epoch 0) from the brief
    std::size_t observer = 0;            // index in `known`
    ObserverFrame frame;
    std::vector<std::size_t> planets;    // indices in `known` of the observed planets
    std::vector<std::string> eras;       // era labels, in order of first appearance
    std::vector<bool> era_records_sigma;
    std::vector<FitObservation> obs;
    std::vector<Vec3> observer_helio;    // observer heliocentric position at each observation time
    Ephemeris inner;                     // full N-body known model (for the observer's track at other times)
    CentralQuadrupole pair_quadrupole;   // time-averaged quadrupole of the star-observer pair
    double t_begin = 0.0, t_end = 0.0;   // span the model must cover
    ModelOptions options;
    bool weights_estimated() const;      // some era has no recorded sigma
    Vec3 observer_helio_at(double t) const;
};

// Builds the setup from an exercise; throws InputError when the log cannot support a fit.
ModelSetup make_setup(const Exercise& ex, const ModelOptions& options = {});
ModelState initial_state(const ModelSetup& setup);

// Forward model: integrate and return (optionally) the model's apparent positions at the observations.
struct ModelRun {
    bool ok = false;
    std::string problem;
    Ephemeris outer;                     // central pair + observed planets (+ hidden), barycentric
    std::vector<std::size_t> planet_index;  // index in `outer` of each observed planet
    std::optional<std::size_t> hidden_index;
};
// Integrates over [t_begin, t_end]; t_begin defaults to the setup's (the first observation, or epoch 0).
ModelRun run_model(const ModelSetup& setup, const ModelState& state, double t_end, std::optional<double> t_begin = std::nullopt);

// Apparent position (lon, lat, radians) of body `index` of the model run at time t, seen from the observer.
SkyPosition model_apparent(const ModelSetup& setup, const ModelRun& run, std::size_t index, double t);

// Weighted residuals (O - C)/sigma for every kept observation: 2 per observation (lambda cos beta, beta).
// Rejected observations give zeros. Returns false if the model run failed.
bool weighted_residuals(const ModelSetup& setup, const ModelRun& run, Eigen::VectorXd& out);
// Unweighted O - C in arcsec, per observation (lambda cos beta, beta).
std::vector<std::array<double, 2>> residuals_arcsec(const ModelSetup& setup, const ModelRun& run);

// ---- Levenberg-Marquardt on a generic problem ----
struct LeastSquaresProblem {
    std::size_t parameters = 0;
    std::size_t residuals = 0;
    // Fills the weighted residual vector for parameters x; returns false if the model cannot be evaluated.
    std::function<bool(const Eigen::VectorXd& x, Eigen::VectorXd& r)> evaluate;
    Eigen::VectorXd step;   // finite-difference step per parameter
};

struct LeastSquaresResult {
    Eigen::VectorXd x;
    double chi2 = 0.0;
    int iterations = 0;
    int evaluations = 0;
    bool converged = false;
    Eigen::MatrixXd jacobian;   // at x
};

// Jacobian by forward differences.
bool finite_difference_jacobian(const LeastSquaresProblem& p, const Eigen::VectorXd& x, const Eigen::VectorXd& r0,
                                Eigen::MatrixXd& jac, int& evaluations);
LeastSquaresResult levenberg_marquardt(const LeastSquaresProblem& p, const Eigen::VectorXd& x0, int max_iterations = 30,
                                       const std::function<bool()>& cancelled = {});

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
