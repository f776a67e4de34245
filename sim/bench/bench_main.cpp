// Entry point of wayward_bench: Google Benchmark's runner over the integrator and solver benchmarks, plus one
// mode of our own, --export-truth=FILE, that writes the default scenario's truth run for compare_scipy.sh.
#include <cstdlib>
#include <exception>
#include <iostream>
#include <string>
#include <string_view>
#include <vector>

#include <benchmark/benchmark.h>

#include "sim/bench/bench_integrate.hpp"
#include "sim/bench/bench_region.hpp"
#include "sim/bench/bench_search.hpp"
#include "sim/bench/bench_model.hpp"
#include "sim/bench/bench_solve.hpp"

namespace {

void print_usage() {
    std::cout << "wayward_bench [Google Benchmark flags, e.g. --benchmark_filter=REGEX]\n"
                 "wayward_bench --export-truth=FILE [--repeats=N] [--step-fraction=X] [--method=NAME] [--rel-tol=X] [--step-precision=X] [--reference-step-fraction=X]\n"
                 "  (step fractions: the step cap as a fraction of the shortest orbital period; step precision: the\n"
                 "  Gauss-Radau step control's epsilon)\n";
}

// Value of "--name=value" if `arg` is that flag.
bool flag_value(std::string_view arg, std::string_view name, std::string& value) {
    if (arg.size() <= name.size() + 1 || arg.substr(0, name.size()) != name || arg[name.size()] != '=') return false;
    value = std::string(arg.substr(name.size() + 1));
    return true;
}

}  // namespace

int main(int argc, char** argv) {
    try {
        wayward::bench::TruthExportOptions exp;
        std::vector<char*> rest{argv[0]};
        for (int i = 1; i < argc; ++i) {
            const std::string_view arg = argv[i];
            std::string v;
            if (arg == "--help" || arg == "-h") {
                print_usage();
                rest.push_back(argv[i]);
            } else if (flag_value(arg, "--export-truth", v)) {
                exp.path = v;
            } else if (flag_value(arg, "--repeats", v)) {
                exp.repeats = std::stoi(v);
            } else if (flag_value(arg, "--step-fraction", v)) {
                exp.step_fraction = std::stod(v);
            } else if (flag_value(arg, "--method", v)) {
                exp.method = v;
            } else if (flag_value(arg, "--rel-tol", v)) {
                exp.rel_tol = std::stod(v);
            } else if (flag_value(arg, "--step-precision", v)) {
                exp.step_precision = std::stod(v);
            } else if (flag_value(arg, "--reference-step-fraction", v)) {
                exp.reference_step_fraction = std::stod(v);
            } else {
                rest.push_back(argv[i]);
            }
        }
        if (!exp.path.empty()) return wayward::bench::export_truth_run(exp);

        wayward::bench::register_integrate_benchmarks();
        wayward::bench::register_solve_benchmarks();
        wayward::bench::register_search_benchmarks();
        wayward::bench::register_region_benchmarks();
        wayward::bench::register_model_benchmarks();
        int n = static_cast<int>(rest.size());
        benchmark::Initialize(&n, rest.data());
        if (benchmark::ReportUnrecognizedArguments(n, rest.data())) return 1;
        benchmark::RunSpecifiedBenchmarks();
        benchmark::Shutdown();
        return 0;
    } catch (const std::exception& e) {
        std::cerr << "wayward_bench: " << e.what() << "\n";
        return 1;
    }
}
