// The truth-integrator benchmarks (bench_integrate.cpp): registration with Google Benchmark, and the export of
// the default scenario's 300-year truth run for the comparison with SciPy (compare_scipy.sh).
#pragma once

#include <string>

#include "sim/physics/integrate.hpp"

namespace wayward::bench {

void register_integrate_benchmarks();

struct TruthExportOptions {
    std::string path;                 // JSON file to write
    int repeats = 5;                  // timed truth runs (the median is compared)
    double step_fraction = IntegratorOptions{}.max_step_fraction;  // our run's step cap (default: the truth default)
    std::string method = IntegratorOptions{}.method;              // our run's method and tolerance (default: the truth's)
    double rel_tol = IntegratorOptions{}.rel_tol;
    double step_precision = IntegratorOptions{}.step_precision;
    // The reference that judges both end states: RKF 7(8) in long double with a fixed step of this fraction of
    // the shortest period, and once more with twice the step to estimate its own error. (The default truth run
    // takes every step at its cap, so a tighter tolerance alone would change nothing, and in double precision
    // a run with many more steps gathers more round-off than it removes truncation error.)
    double reference_step_fraction = 1.0 / 800.0;
};
// Runs the truth integration (default options but the step cap) of the default scenario over its span
// `repeats` times, then the reference runs, and writes initial state, GMs, times, energy errors and end states
// to `path`.
int export_truth_run(const TruthExportOptions& options);

}  // namespace wayward::bench
