// Shared by the solver tests: an exercise made in memory from a scenario text or file, with chosen noise.
#pragma once

#include <cmath>
#include <string>
#include <vector>

#include "sim/exercise/exercise.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/truth/observe.hpp"
#include "sim/scenario/scenario.hpp"

namespace wayward::testing {

struct MadeExercise {
    Scenario scenario;
    Truth truth;
    IntegrationResult run;
    ObservationSet obs;
    ExerciseInMemory ex;
};

inline MadeExercise make_exercise(const Scenario& sc, std::uint64_t seed, const NoiseSwitches& noise = {}) {
    MadeExercise m;
    m.scenario = sc;
    m.truth = generate(sc, seed, &m.run);
    m.obs = observe(sc, m.truth, m.run.ephemeris, seed, noise);
    m.ex = exercise_in_memory(sc, m.truth, m.obs, make_brief(sc, m.truth, seed), m.run.ephemeris);
    return m;
}

inline NoiseSwitches no_noise() {
    NoiseSwitches n;
    n.random = n.systematic = n.rounding = n.outliers = false;
    return n;
}

inline std::string replace_all(std::string s, const std::string& from, const std::string& to) {
    for (std::size_t pos = s.find(from); pos != std::string::npos; pos = s.find(from, pos + to.size())) s.replace(pos, from.size(), to);
    return s;
}

// Squared Mahalanobis distances of the truth (negative: none) against the stated 50 % and 90 % regions of a 2-D
// Gaussian, which hold d^2 <= 2 ln 2 and d^2 <= 2 ln 10 (1 - exp(-d^2/2), standard result), and their mean.
struct RegionTally {
    std::size_t valid = 0, in50 = 0, in90 = 0;
    double mean_d2 = 0.0;  // over the valid ones
};
inline RegionTally tally_regions(const std::vector<double>& d2) {
    RegionTally t;
    for (double v : d2) {
        if (v < 0) continue;
        ++t.valid;
        t.in50 += v <= 2.0 * std::log(2.0) ? 1 : 0;
        t.in90 += v <= 2.0 * std::log(10.0) ? 1 : 0;
        t.mean_d2 += v;
    }
    if (t.valid > 0) t.mean_d2 /= static_cast<double>(t.valid);
    return t;
}

}  // namespace wayward::testing
