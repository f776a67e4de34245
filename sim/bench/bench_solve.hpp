// The solver benchmarks (bench_solve.cpp): registration with Google Benchmark, and the timed solve loop they
// share with the fitting-model benchmarks.
#pragma once

#include <benchmark/benchmark.h>

#include "sim/solve/solve.hpp"

namespace wayward::bench {

void register_solve_benchmarks();

// Solves `ex` once per benchmark iteration; sets the counters model_runs and per_model_run (time per model run)
// and returns the last solution, for the caller's label.
Solution timed_solve(benchmark::State& state, const Exercise& ex, const SolveOptions& options);

}  // namespace wayward::bench
