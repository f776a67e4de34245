// The sealed answer key (answer-key/answer_key.toml and answer-key/true_positions.csv): the true bodies at
// epoch 0 and what really happened to each observation. The brief carries the key file's SHA-256, the key that
// of its true-positions table; the key is opened only after the digest has been checked.
// Units: solar masses, au, degrees, arcsec, days.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "sim/exercise/exercise.hpp"
#include "sim/scenario/scenario.hpp"
#include "sim/truth/generate.hpp"
#include "sim/truth/observe.hpp"

namespace wayward {

struct AnswerKey {
    std::string file;
    std::string scenario_name;
    std::uint64_t seed = 0;
    std::string star_name;
    double star_mass = 1.0;
    std::vector<DrawnBody> bodies;   // the true bodies (known and hidden) at epoch 0
    std::string hidden_name;
    std::string true_positions_sha256;
    System system() const;           // the true barycentric system at epoch 0
    std::optional<std::size_t> hidden_index() const;  // index in system()
};

std::string true_positions_csv(const ObservationSet& obs, double epoch0_year);
std::string answer_key_text(const Scenario& sc, const Truth& truth, const std::string& positions_sha);

// Opens the answer key after checking its SHA-256 against the brief (InputError if it was changed).
AnswerKey open_answer_key(const Brief& brief, const std::string& key_path);

}  // namespace wayward
