// The fitting-model benchmarks (bench_model.cpp): registration with Google Benchmark.
#pragma once

namespace wayward::bench {

void register_model_benchmarks();

}  // namespace wayward::bench
