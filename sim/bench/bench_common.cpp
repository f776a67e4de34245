// Shared pieces of the benchmarks (see bench_common.hpp).
#include "sim/bench/bench_common.hpp"

#include <chrono>
#include <cmath>
#include <cstdlib>
#include <map>
#include <mutex>
#include <utility>

#include "sim/truth/generate.hpp"
#include "sim/truth/observe.hpp"
#include "sim/physics/system.hpp"
#include "sim/base/units.hpp"

namespace wayward::bench {

std::string scenario_path(const std::string& name) {
    const char* dir = std::getenv("WAYWARD_SCENARIO_DIR");
    return std::string(dir && *dir ? dir : WAYWARD_BENCH_SCENARIO_DIR) + "/" + name + ".toml";
}

namespace {
struct DefaultScenario {
    System system;
    double span_days = 0.0;
};
const DefaultScenario& default_scenario() {
    static const DefaultScenario d = [] {
        const Scenario sc = load_scenario(scenario_path("default"));
        // The default scenario draws its hidden body: the benchmarks use its seed-1 system.
        return DefaultScenario{generate(sc, 1).system, sc.span_years * julian_year_days};
    }();
    return d;
}
}  // namespace

const System& default_system() { return default_scenario().system; }
double default_span_days() { return default_scenario().span_days; }

System first_bodies(const System& s, std::size_t bodies) {
    System out = s;
    while (out.size() > bodies && out.size() > 1) out = without_body(out, out.size() - 1);
    return out;
}

double relative_energy_error(const System& start, const System& end) {
    const double e0 = total_energy(start);
    return std::abs(total_energy(end) - e0) / std::abs(e0);
}

const ExerciseInMemory& exercise_for(const std::string& scenario, std::uint64_t seed) {
    static std::mutex mutex;
    static std::map<std::pair<std::string, std::uint64_t>, ExerciseInMemory> cache;
    std::lock_guard<std::mutex> lock(mutex);
    const auto key = std::make_pair(scenario, seed);
    auto it = cache.find(key);
    if (it == cache.end()) {
        const Scenario sc = load_scenario(scenario_path(scenario));
        IntegrationResult run;
        const Truth truth = generate(sc, seed, &run);
        const ObservationSet obs = observe(sc, truth, run.ephemeris, seed);
        const Brief brief = make_brief(sc, truth, seed);
        it = cache.emplace(key, exercise_in_memory(sc, truth, obs, brief, run.ephemeris)).first;
    }
    return it->second;
}

double now_seconds() {
    return std::chrono::duration<double>(std::chrono::steady_clock::now().time_since_epoch()).count();
}

}  // namespace wayward::bench
