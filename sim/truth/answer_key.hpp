// The sealed answer key (DIR-answer-key/answer_key.toml and true_positions.csv beside the exercise folder DIR,
// owner-only): the true bodies at
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
// `salt` (random, secret, written into the key) makes the brief's SHA-256 a hiding commitment: without it, anyone
// could regenerate candidate keys for guessed seeds and compare digests. Empty for keys that never leave memory.
std::string answer_key_text(const Scenario& sc, const Truth& truth, const std::string& positions_sha, const std::string& salt = "");

// A fresh secret from the operating system's random source (getrandom(2)): `bytes` random bytes as hex.
std::string secret_hex(std::size_t bytes);
// A fresh secret seed for a system nobody chose (below 2^63, so it fits the key's TOML integer).
std::uint64_t secret_seed();

// Where to read an exercise's key when none is named: beside the folder, or, for folders made before the key moved
// out, DIR/answer-key/answer_key.toml when only that exists.
std::string find_answer_key(const std::string& dir);

// Opens the answer key after checking its SHA-256 against the brief (InputError if it was changed).
AnswerKey open_answer_key(const Brief& brief, const std::string& key_path);
// The key from its text, without the digest check (open_answer_key checks first, then calls this).
AnswerKey parse_answer_key(const std::string& text, const std::string& key_path);

}  // namespace wayward
