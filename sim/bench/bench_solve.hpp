// The solver benchmarks (bench_solve.cpp): registration with Google Benchmark.
#pragma once

namespace wayward::bench {

void register_solve_benchmarks();

}  // namespace wayward::bench
