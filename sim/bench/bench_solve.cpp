// Benchmarks of the inverse problem on every bundled scenario (seed 1, exercise made in memory): the setup of
// the fitting model, one forward model over the full span (known planets only, and with a trial hidden body
// as the grid screening runs it), and a whole solve on one thread and on two, with the number of forward
// models it ran.
#include "sim/bench/bench_solve.hpp"

#include <algorithm>
#include <cstdint>
#include <cstdio>
#include <string>

#include <benchmark/benchmark.h>

#include "sim/bench/bench_common.hpp"
#include "sim/fit/known_fit.hpp"
#include "sim/solve/solve.hpp"
#include "sim/base/units.hpp"

namespace wayward::bench {

namespace {

constexpr std::uint64_t seed = 1;

void bm_make_setup(benchmark::State& state, const std::string& scenario) {
    const Exercise& ex = exercise_for(scenario, seed).exercise;
    std::size_t observations = 0;
    for (auto _ : state) {
        ModelSetup setup = make_setup(ex);
        observations = setup.obs.size();
        benchmark::DoNotOptimize(setup.inner.states.data());
    }
    state.counters["observations"] = benchmark::Counter(static_cast<double>(observations));
}

// A trial hidden body half as far again as the outermost observed planet, of ten Earth masses.
HiddenOrbit trial_hidden(const ModelState& s) {
    double outer = 0.0;
    for (const StateVector& p : s.planets) outer = std::max(outer, p.position.norm());
    HiddenOrbit h;
    h.mass = 3e-5;
    h.semi_major_axis = 1.5 * outer;
    h.mean_longitude = 1.0;
    return h;
}

void bm_forward_model(benchmark::State& state, const std::string& scenario, bool with_hidden) {
    const Exercise& ex = exercise_for(scenario, seed).exercise;
    const ModelSetup setup = make_setup(ex);
    ModelState s = initial_state(setup);
    if (with_hidden) s.hidden = trial_hidden(s);
    std::size_t nodes = 0, bodies = 0;
    for (auto _ : state) {
        ModelRun run = run_model(setup, s, setup.t_end);
        if (!run.ok()) {
            state.SkipWithError(("forward model failed: " + run.problem()).c_str());
            break;
        }
        nodes = run.outer.nodes();
        bodies = run.outer.size();
        benchmark::DoNotOptimize(run.outer.states.data());
    }
    char label[120];
    std::snprintf(label, sizeof label, "%.1f years from the first observation, %zu bodies (star+observer as one)",
                  (setup.t_end - setup.t_begin) / julian_year_days, bodies);
    state.SetLabel(label);
    state.counters["steps"] = benchmark::Counter(static_cast<double>(nodes > 0 ? nodes - 1 : 0));
}

void bm_solve(benchmark::State& state, const std::string& scenario) {
    const Exercise& ex = exercise_for(scenario, seed).exercise;
    SolveOptions opt;
    opt.threads = static_cast<unsigned>(state.range(0));
    const Solution sol = timed_solve(state, ex, opt);
    char label[160];
    std::snprintf(label, sizeof label, "chi2 %.4g for %zu dof, best a %.2f au, %zu minima", sol.chi2, sol.dof,
                  sol.best.semi_major_axis, sol.minima.size());
    state.SetLabel(label);
}

}  // namespace

Solution timed_solve(benchmark::State& state, const Exercise& ex, const SolveOptions& options) {
    Solution sol;
    for (auto _ : state) {
        sol = solve(ex, options);
        // A pointer, not the double chi2: DoNotOptimize on a floating-point lvalue lost its value here under
        // GCC 12 -O3 (the label then showed a chi2 of 0).
        benchmark::DoNotOptimize(sol.minima.data());
    }
    state.counters["model_runs"] = benchmark::Counter(static_cast<double>(sol.model_runs));
    state.counters["per_model_run"] =
        benchmark::Counter(static_cast<double>(sol.model_runs), benchmark::Counter::kIsIterationInvariantRate | benchmark::Counter::kInvert);
    return sol;
}

void register_solve_benchmarks() {
    for (const char* name : bundled_scenarios) {
        const std::string sc = name;
        benchmark::RegisterBenchmark(("make_setup/" + sc).c_str(), bm_make_setup, sc)->Unit(benchmark::kMillisecond);
        benchmark::RegisterBenchmark(("forward_model/" + sc + "/known").c_str(), bm_forward_model, sc, false)
            ->Unit(benchmark::kMillisecond);
        benchmark::RegisterBenchmark(("forward_model/" + sc + "/with_hidden").c_str(), bm_forward_model, sc, true)
            ->Unit(benchmark::kMillisecond);
    }
    // Whole solves are long: one iteration each, wall time, and the CPU time of the whole process.
    for (const char* name : bundled_scenarios) {
        const std::string sc = name;
        benchmark::RegisterBenchmark(("solve/" + sc).c_str(), bm_solve, sc)
            ->ArgName("threads")
            ->Arg(1)
            ->Arg(2)
            ->Iterations(1)
            ->UseRealTime()
            ->MeasureProcessCPUTime()
            ->Unit(benchmark::kSecond);
    }
}

}  // namespace wayward::bench
