// The fitting model's derivatives from the tangent map of its Wisdom-Holman map, against careful central
// differences of the same model, for every fitted parameter on every bundled scenario.
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include "sim/base/units.hpp"
#include "sim/model/model.hpp"
#include "sim/model/wisdom_holman.hpp"
#include "sim/predict/predict.hpp"
#include "solve_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;

namespace {

// Central differences of the weighted residuals with steps `h`: truncation ~h^2/6 of the third derivative.
Eigen::MatrixXd central_differences(const ModelSetup& setup, const StateOf& state_of, const Eigen::VectorXd& x, const Eigen::VectorXd& h) {
    Eigen::MatrixXd J(static_cast<Eigen::Index>(2 * setup.obs.size()), x.size());
    for (Eigen::Index j = 0; j < x.size(); ++j) {
        Eigen::VectorXd xp = x, xm = x, rp, rm;
        xp[j] += h[j];
        xm[j] -= h[j];
        REQUIRE(weighted_residuals(setup, run_model(setup, state_of(xp), setup.t_end), rp));
        REQUIRE(weighted_residuals(setup, run_model(setup, state_of(xm), setup.t_end), rm));
        J.col(j) = (rp - rm) / (2.0 * h[j]);
    }
    return J;
}

// A trial hidden body (eccentric and tilted) half as far again as the outermost observed planet.
Eigen::VectorXd trial_parameters(const ModelSetup& setup, const HiddenParameters& layout) {
    double outer = 0.0;
    for (const StateVector& p : initial_state(setup).planets) outer = std::max(outer, p.position.norm());
    Eigen::VectorXd x = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(layout.size()));
    for (Eigen::Index j = 0; j < static_cast<Eigen::Index>(layout.planets); ++j) x[j] = 0.3 * std::sin(1.7 * static_cast<double>(j));
    x[layout.i_logm] = std::log(3e-5);
    x[layout.i_a] = std::log(1.5 * outer);
    x[layout.i_k] = 0.05;
    x[layout.i_h] = -0.03;
    x[layout.i_lon] = 1.0;
    x[layout.i_ix] = 0.02;
    x[layout.i_iy] = -0.01;
    return x;
}

}  // namespace

TEST_CASE("tangent-map derivatives agree with central differences for every parameter on every bundled scenario") {
    for (const char* name : {"quick", "tutorial", "default", "classic", "hard"}) {
        CAPTURE(name);
        const Scenario sc = load_scenario(testing::source_path(std::string("scenarios/") + name + ".toml"));
        const auto m = testing::make_exercise(sc, 1, testing::no_noise());
        const ModelSetup setup = make_setup(m.ex.exercise);
        FittedModel fit;
        fit.reference = initial_state(setup);
        fit.layout = HiddenParameters::make(setup.planets.size(), true, true, true);
        fit.layout.gm_star = setup.known.gm[0];
        const Eigen::VectorXd x = trial_parameters(setup, fit.layout);
        const StateOf state_of = [&](const Eigen::VectorXd& v) { return fit.state(setup, v); };
        const std::vector<Eigen::Index> columns = parameter_columns(static_cast<std::size_t>(x.size()));
        REQUIRE(has_tangent_map(setup, columns.size()));
        const ModelRun run = run_model_tangent(setup, state_of, x, columns, fit.layout.seed_steps(), setup.t_end);
        REQUIRE(run.ok());
        Eigen::MatrixXd J;
        REQUIRE(weighted_residual_jacobian(setup, run, J));
        // The reference: central differences at a tenth and at three tenths of the solver's finite-difference
        // steps. Their truncation error (~h^2/6 of the third derivative) is ~1e-9 of a column; what is left is the
        // rounding of the residuals over the tiny steps, which the two step sizes measure: each column's
        // tolerance is twice their disagreement, and at least 2e-5 (the quintic interpolation of the tangents
        // between nodes is ~1e-7).
        const Eigen::MatrixXd D = central_differences(setup, state_of, x, 0.1 * fit.layout.steps());
        const Eigen::MatrixXd D3 = central_differences(setup, state_of, x, 0.3 * fit.layout.steps());
        double worst = 0.0, loosest = 0.0;
        for (Eigen::Index j = 0; j < x.size(); ++j) {
            CAPTURE(j);
            REQUIRE(D.col(j).norm() > 0.0);
            const double rel = (J.col(j) - D.col(j)).norm() / D.col(j).norm();
            const double tol = std::max(2e-5, 2.0 * (D.col(j) - D3.col(j)).norm() / D.col(j).norm());
            worst = std::max(worst, rel);
            loosest = std::max(loosest, tol);
            CHECK(rel < tol);
        }
        // The reference itself must be good enough to test against.
        CHECK(loosest < 1e-3);
        MESSAGE(std::string(name) << ": worst column difference " << worst << " of the column's norm (loosest tolerance " << loosest
                                  << "), " << x.size() << " parameters");
    }
}
