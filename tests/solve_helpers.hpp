// Shared by the solver tests: an exercise made in memory from a scenario text or file, with chosen noise.
#pragma once

#include <string>

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

}  // namespace wayward::testing
