// The fitting model: the team's known planets (masses from the brief), optionally a hidden body, Newtonian N-body.
// For speed the fitting model treats the observer planet and its star as one inner pair: the outer bodies are
// integrated about the pair's barycentre (with the pair's total mass and time-averaged quadrupole), and the
// observer's heliocentric position is taken from the team's own ephemeris of its planet (observer.csv). A test
// compares the model with the truth integrator. The outer bodies are integrated by the Wisdom-Holman map
// (wisdom_holman.hpp) or, by name, by the adaptive Odeint reference (integrate.hpp); see model_integrators().
// Units: days, radians inside; arcsec for residuals and sigma.
#pragma once

#include <array>
#include <cstddef>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "sim/exercise/exercise.hpp"
#include "sim/model/era_systematics.hpp"
#include "sim/model/fit_observation.hpp"
#include "sim/model/wisdom_holman.hpp"
#include "sim/physics/geometry.hpp"

namespace wayward {


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
    double rel_tol = 1e-12;            // the adaptive integrator's tolerance
    std::string integrator = "wisdom-holman";  // a name from model_integrators(); "adaptive" is the reference
    // How fits get their Jacobians: "variational" (the map's tangent map, one run for all parameters; the
    // Wisdom-Holman model only) or "differences" (forward differences, one run per parameter; any model).
    std::string derivatives = "variational";
    // Era offsets (and drifts) as nuisance parameters, eliminated by projection (era_systematics.hpp): "none",
    // "offsets" or "drifts".
    std::string era_systematics = "none";
};

// The fitting model's integrators, selectable by name (ModelOptions::integrator).
struct ModelIntegrator {
    std::string name;
    std::string description;
};
const std::vector<ModelIntegrator>& model_integrators();
bool is_model_integrator(const std::string& name);

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
    std::size_t reference_era = 0;       // the era without nuisance offsets (era_systematics.hpp)
    std::vector<FitObservation> obs;
    std::vector<Vec3> observer_helio;    // observer heliocentric position at each observation time
    Ephemeris inner;                     // full N-body known model (for the observer's track at other times)
    CentralQuadrupole pair_quadrupole;   // time-averaged quadrupole of the star-observer pair
    double t_begin = 0.0, t_end = 0.0;   // span the model must cover
    ModelOptions options;
    bool weights_estimated() const;      // some era has no recorded sigma
    EraSystematicsView era_view() const { return {&obs, eras.size(), reference_era, options.era_systematics}; }
    Vec3 observer_helio_at(double t) const;
};

// Builds the setup from an exercise; throws InputError when the log cannot support a fit.
ModelSetup make_setup(const Exercise& ex, const ModelOptions& options = {});
ModelState initial_state(const ModelSetup& setup);

// Forward model: integrate and return (optionally) the model's apparent positions at the observations.
enum class ModelOutcome { not_run, ok, parameters_out_of_range, integration_failed, map_failed };
struct ModelRun {
    ModelOutcome outcome = ModelOutcome::not_run;
    IntegrationOutcome integration = IntegrationOutcome::ok;  // why, when outcome is integration_failed
    WisdomHolmanOutcome map = WisdomHolmanOutcome::ok;        // why, when outcome is map_failed
    bool ok() const { return outcome == ModelOutcome::ok; }
    std::string problem() const;         // the outcome in words, for messages
    Ephemeris outer;                     // central pair + observed planets (+ hidden), barycentric
    std::vector<std::size_t> planet_index;  // index in `outer` of each observed planet
    std::optional<std::size_t> hidden_index;
    // From run_model_tangent: d(state)/d(parameter) at every node of `outer` (see WisdomHolmanResult::tangents).
    std::size_t tangent_parameters = 0;
    std::vector<double> tangents;
};
// Integrates over [t_begin, t_end]; t_begin defaults to the setup's (the first observation, or epoch 0).
ModelRun run_model(const ModelSetup& setup, const ModelState& state, double t_end, std::optional<double> t_begin = std::nullopt);

// ---- Derivatives from the variational equations of the map (its tangent map) ----
using StateOf = std::function<ModelState(const Eigen::VectorXd&)>;
// The columns first, first + 1, ..., first + count - 1: which parameters a tangent run differentiates.
std::vector<Eigen::Index> parameter_columns(std::size_t count, Eigen::Index first = 0);
// True when the setup's model gives derivatives by its tangent map for this many parameters.
bool has_tangent_map(const ModelSetup& setup, std::size_t parameters);
// run_model for the state state_of(x), with the derivatives of every node with respect to x[columns] (at most
// max_tangent_parameters). seed_steps[j]: the step of the central differences that carry x's change into the
// initial state (a closed-form map, no integration; it must be small against x's scale: 1e-5 of a radian).
ModelRun run_model_tangent(const ModelSetup& setup, const StateOf& state_of, const Eigen::VectorXd& x,
                           const std::vector<Eigen::Index>& columns, const Eigen::VectorXd& seed_steps, double t_end,
                           std::optional<double> t_begin = std::nullopt);
// The apparent position of body `index` at t and its derivatives (radians per parameter unit).
struct SkyTangent {
    SkyPosition at;
    Eigen::RowVectorXd d_lon, d_lat;
};
SkyTangent apparent_tangent(const ModelSetup& setup, const ModelRun& run, std::size_t index, double t, const Vec3& observer_helio);
// d(weighted residuals)/d(parameters) of a tangent run: 2 rows per observation (zeros where rejected).
bool weighted_residual_jacobian(const ModelSetup& setup, const ModelRun& run, Eigen::MatrixXd& jac);

// Apparent position (lon, lat, radians) of body `index` of the model run at time t, seen from the observer.
SkyPosition model_apparent(const ModelSetup& setup, const ModelRun& run, std::size_t index, double t);

// Weighted residuals (O - C)/sigma for every kept observation: 2 per observation (lambda cos beta, beta).
// Rejected observations give zeros. With era systematics, the residuals after their nuisance fit is removed.
// Returns false if the model run failed.
bool weighted_residuals(const ModelSetup& setup, const ModelRun& run, Eigen::VectorXd& out);
// Unweighted O - C in arcsec, per observation (lambda cos beta, beta), less the fitted era systematics if any.
std::vector<std::array<double, 2>> residuals_arcsec(const ModelSetup& setup, const ModelRun& run);

}  // namespace wayward
