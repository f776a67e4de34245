// Shared pieces of the benchmarks: where the bundled scenarios are, the default scenario's fixed system, the
// 300-year truth run, and exercises made in memory (cached, so their generation is never timed).
#pragma once

#include <cstdint>
#include <string>

#include "sim/exercise/exercise.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/physics/integrate.hpp"
#include "sim/scenario/scenario.hpp"

namespace wayward::bench {

// The bundled scenarios, in order of difficulty.
inline constexpr const char* bundled_scenarios[] = {"quick", "tutorial", "default", "classic", "hard"};

// Path of a bundled scenario by short name ("default" -> <scenario dir>/default.toml). The directory is the
// source tree's scenarios/ unless WAYWARD_SCENARIO_DIR is set.
std::string scenario_path(const std::string& name);

// The default scenario's fixed system at epoch 0 (barycentric, every body).
const System& default_system();
// Its span in days (300 years).
double default_span_days();

// The same system keeping only the star and its first `bodies - 1` planets (in file order).
System first_bodies(const System& s, std::size_t bodies);

// |E(t) - E(0)| / |E(0)| with E from total_energy.
double relative_energy_error(const System& start, const System& end);

// An exercise made in memory as `wayward new` would make it (generate -> observe -> make_brief), cached per
// scenario and seed for the life of the process.
const ExerciseInMemory& exercise_for(const std::string& scenario, std::uint64_t seed);

// Seconds on a steady clock since an arbitrary origin.
double now_seconds();

}  // namespace wayward::bench
