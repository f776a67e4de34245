// Benchmarks of the fitting model's integrators side by side (model_integrators(): the adaptive reference and
// the Wisdom-Holman map): one forward model on every bundled scenario (seed 1, exercise made in memory), the
// cost per step against the number of bodies, and a whole solve with each.
#include "sim/bench/bench_model.hpp"

#include <cstdint>
#include <cstdio>
#include <string>
#include <utility>

#include <benchmark/benchmark.h>

#include "sim/bench/bench_common.hpp"
#include "sim/bench/bench_solve.hpp"
#include "sim/base/units.hpp"
#include "sim/model/model.hpp"
#include "sim/model/wisdom_holman.hpp"
#include "sim/fit/least_squares.hpp"
#include "sim/predict/predict.hpp"
#include "sim/solve/solve.hpp"

namespace wayward::bench {

namespace {

constexpr std::uint64_t seed = 1;

// As bench_solve.cpp's trial: ten Earth masses, half as far again as the outermost observed planet.
HiddenOrbit trial_hidden(const ModelState& s) {
    double outer = 0.0;
    for (const StateVector& p : s.planets) outer = std::max(outer, p.position.norm());
    HiddenOrbit h;
    h.mass = 3e-5;
    h.semi_major_axis = 1.5 * outer;
    h.mean_longitude = 1.0;
    return h;
}

void bm_model_run(benchmark::State& state, const std::string& scenario, bool with_hidden, const std::string& integrator) {
    const Exercise& ex = exercise_for(scenario, seed).exercise;
    ModelOptions mo;
    mo.integrator = integrator;
    const ModelSetup setup = make_setup(ex, mo);
    ModelState s = initial_state(setup);
    if (with_hidden) s.hidden = trial_hidden(s);
    std::size_t nodes = 0;
    for (auto _ : state) {
        ModelRun run = run_model(setup, s, setup.t_end);
        if (!run.ok()) {
            state.SkipWithError(("forward model failed: " + run.problem()).c_str());
            break;
        }
        nodes = run.outer.nodes();
        benchmark::DoNotOptimize(run.outer.states.data());
    }
    char label[120];
    std::snprintf(label, sizeof label, "%.1f years, %zu bodies", (setup.t_end - setup.t_begin) / julian_year_days,
                  setup.known.size() - 1 + (with_hidden ? 1 : 0));
    state.SetLabel(label);
    state.counters["nodes"] = benchmark::Counter(static_cast<double>(nodes));
}

// A quadrupole of the size the fitting model's pair has (separation ~1 au, an Earth-mass companion).
CentralQuadrupole typical_quadrupole() {
    CentralQuadrupole q;
    q.q = Eigen::Matrix3d::Zero();
    q.q(0, 0) = q.q(1, 1) = 0.5;
    q.gm_reduced = gm_from_mass(3e-6);
    return q;
}

// Ten years of the default system trimmed to N bodies, with the pair quadrupole, per integrator: time per step
// (for the map, its nodes and their correctors are part of the cost of a step).
void bm_model_step(benchmark::State& state, const std::string& integrator) {
    const std::size_t bodies = static_cast<std::size_t>(state.range(0));
    const System sys = first_bodies(default_system(), bodies);
    const double span = 10.0 * julian_year_days;
    double steps = 0.0;
    for (auto _ : state) {
        if (integrator == "wisdom-holman") {
            WisdomHolmanOptions o;
            o.central_quadrupole = typical_quadrupole();
            WisdomHolmanResult r = integrate_wisdom_holman(sys, 0.0, span, o);
            benchmark::DoNotOptimize(r.ephemeris.states.data());
            steps += static_cast<double>(r.steps);
        } else {
            IntegratorOptions o;
            o.rel_tol = ModelOptions{}.rel_tol;
            o.central_quadrupole = typical_quadrupole();
            IntegrationResult r = integrate(sys, 0.0, span, o);
            benchmark::DoNotOptimize(r.ephemeris.states.data());
            steps += static_cast<double>(r.steps + r.rejected_steps);
        }
    }
    using benchmark::Counter;
    state.counters["per_step"] = Counter(steps, Counter::kIsRate | Counter::kInvert);
    state.counters["per_body_step"] = Counter(steps * static_cast<double>(bodies), Counter::kIsRate | Counter::kInvert);
    state.counters["steps"] = Counter(steps, Counter::kAvgIterations);
}

// One Jacobian of the weighted residuals with respect to every parameter of the solve (planets and an eccentric,
// tilted hidden body): the map's tangent map (one run) against forward differences (one run per parameter and
// the run at the point), both with the Wisdom-Holman model.
void bm_model_jacobian(benchmark::State& state, const std::string& scenario, const std::string& derivatives) {
    const Exercise& ex = exercise_for(scenario, seed).exercise;
    const ModelSetup setup = make_setup(ex);
    FittedModel fit;
    fit.reference = initial_state(setup);
    fit.layout = HiddenParameters::make(setup.planets.size(), true, true, true);
    fit.layout.gm_star = setup.known.gm[0];
    Eigen::VectorXd x = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(fit.layout.size()));
    const HiddenOrbit h = trial_hidden(fit.reference);
    x[fit.layout.i_logm] = std::log(h.mass);
    x[fit.layout.i_a] = std::log(h.semi_major_axis);
    x[fit.layout.i_lon] = h.mean_longitude;
    x[fit.layout.i_k] = 0.05;
    x[fit.layout.i_ix] = 0.02;
    const StateOf state_of = [&](const Eigen::VectorXd& v) { return fit.state(setup, v); };
    LeastSquaresProblem p;
    p.parameters = fit.layout.size();
    p.residuals = 2 * setup.obs.size();
    p.step = fit.layout.steps();
    p.evaluate = [&](const Eigen::VectorXd& v, Eigen::VectorXd& r) { return weighted_residuals(setup, run_model(setup, state_of(v), setup.t_end), r); };
    if (derivatives == "variational") {
        const std::vector<Eigen::Index> all = parameter_columns(p.parameters);
        p.jacobian = [&, all](const Eigen::VectorXd& v, Eigen::MatrixXd& jac) {
            return weighted_residual_jacobian(setup, run_model_tangent(setup, state_of, v, all, fit.layout.seed_steps(), setup.t_end), jac);
        };
    }
    int runs = 0;
    for (auto _ : state) {
        Eigen::VectorXd r;
        Eigen::MatrixXd J;
        runs = 1;
        // Forward differences need the residuals at the point; the tangent run does not.
        if (!p.jacobian && !p.evaluate(x, r)) {
            state.SkipWithError("forward model failed");
            break;
        }
        if (p.jacobian) r.resize(static_cast<Eigen::Index>(p.residuals));
        if (!problem_jacobian(p, x, r, J, runs)) {
            state.SkipWithError("Jacobian failed");
            break;
        }
        benchmark::DoNotOptimize(J.data());
    }
    state.counters["parameters"] = benchmark::Counter(static_cast<double>(p.parameters));
    state.counters["model_runs"] = benchmark::Counter(static_cast<double>(p.jacobian ? 1 : runs));
}

void bm_model_solve(benchmark::State& state, const std::string& scenario, const std::string& integrator, const std::string& derivatives) {
    const Exercise& ex = exercise_for(scenario, seed).exercise;
    SolveOptions opt;
    opt.threads = 1;
    opt.model.integrator = integrator;
    opt.model.derivatives = derivatives;
    const Solution sol = timed_solve(state, ex, opt);
    char label[200];
    std::snprintf(label, sizeof label, "chi2 %.6g, a %.4f au, mass %.4e, lambda %.6f rad", sol.chi2, sol.best.semi_major_axis,
                  sol.best.mass, sol.best.mean_longitude);
    state.SetLabel(label);
}

}  // namespace

void register_model_benchmarks() {
    for (const char* name : bundled_scenarios) {
        const std::string sc = name;
        for (bool hidden : {false, true})
            for (const ModelIntegrator& m : model_integrators())
                benchmark::RegisterBenchmark(("model_run/" + sc + (hidden ? "/with_hidden/" : "/known/") + m.name).c_str(),
                                             bm_model_run, sc, hidden, m.name)
                    ->Unit(benchmark::kMillisecond);
    }
    for (const ModelIntegrator& m : model_integrators())
        benchmark::RegisterBenchmark(("model_step/" + m.name).c_str(), bm_model_step, m.name)
            ->ArgName("bodies")
            ->DenseRange(2, 6)
            ->Unit(benchmark::kMillisecond);
    for (const char* name : bundled_scenarios)
        for (const char* d : {"variational", "differences"})
            benchmark::RegisterBenchmark(("model_jacobian/" + std::string(name) + "/" + d).c_str(), bm_model_jacobian, std::string(name),
                                         std::string(d))
                ->MeasureProcessCPUTime()
                ->Unit(benchmark::kMillisecond);
    // The reference (adaptive model, differences), the map with differences, and the map with its tangent map.
    const std::pair<const char*, const char*> kinds[] = {{"adaptive", "differences"}, {"wisdom-holman", "differences"}, {"wisdom-holman", "variational"}};
    for (const char* name : bundled_scenarios)
        for (const auto& [integrator, derivatives] : kinds)
            benchmark::RegisterBenchmark(("model_solve/" + std::string(name) + "/" + integrator + "/" + derivatives).c_str(), bm_model_solve,
                                         std::string(name), std::string(integrator), std::string(derivatives))
                ->Iterations(1)
                ->MeasureProcessCPUTime()
                ->Unit(benchmark::kSecond);
}

}  // namespace wayward::bench
