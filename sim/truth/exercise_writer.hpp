// Making an exercise from a drawn system and its observations: the brief a team gets, the folder on disk (every
// file written atomically, the brief last, so a folder with a brief is complete), or the same held in memory
// for campaigns, budgets and tests. Units: solar masses, au, degrees, days.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "sim/exercise/exercise.hpp"
#include "sim/physics/integrate.hpp"
#include "sim/scenario/scenario.hpp"
#include "sim/truth/answer_key.hpp"
#include "sim/truth/generate.hpp"
#include "sim/truth/observe.hpp"

namespace wayward {

// The brief a team gets: approximate orbits and masses drawn from the scenario's brief errors.
Brief make_brief(const Scenario& sc, const Truth& truth, std::uint64_t seed);

// Writes the whole folder. Refuses (InputError) to overwrite an existing exercise unless `force`.
void write_exercise(const ExercisePaths& paths, const Scenario& sc, const Truth& truth, const ObservationSet& obs,
                    const Brief& brief, const Ephemeris& eph, bool force);

// The observer's positions at the (recorded, rounded) observation times, from the truth ephemeris.
std::vector<ObserverFix> observer_track_for(const std::vector<Observation>& obs, const Ephemeris& eph, std::size_t observer);

// The same exercise held in memory, as `new` would write it (brief with the key's digest, observations,
// answer key).
struct ExerciseInMemory {
    Exercise exercise;
    AnswerKey key;
};
ExerciseInMemory exercise_in_memory(const Scenario& sc, const Truth& truth, const ObservationSet& obs, const Brief& brief,
                                    const Ephemeris& eph);

}  // namespace wayward
