// Reproducible random streams. Each stage draws from its own stream whose seed is derived from
// (scenario seed, stage name, run index) by the SplitMix64 finaliser (Steele, Lea & Flood 2014), so results
// never depend on thread count, shard or order. Engines and distributions come from Boost.Random, whose
// algorithms are fixed (unlike std:: distributions), so streams are identical on every platform.
#pragma once

#include <cstdint>
#include <string_view>

#include <boost/random/mersenne_twister.hpp>
#include <boost/random/normal_distribution.hpp>
#include <boost/random/uniform_01.hpp>
#include <boost/random/uniform_real_distribution.hpp>

namespace wayward {

using Rng = boost::random::mt19937_64;

constexpr std::uint64_t splitmix64(std::uint64_t x) {
    x += 0x9e3779b97f4a7c15ULL;
    x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9ULL;
    x = (x ^ (x >> 27)) * 0x94d049bb133111ebULL;
    return x ^ (x >> 31);
}

constexpr std::uint64_t derive_seed(std::uint64_t seed, std::string_view stage, std::uint64_t index = 0) {
    std::uint64_t h = 0xcbf29ce484222325ULL;  // FNV-1a of the stage name
    for (char c : stage) h = (h ^ static_cast<unsigned char>(c)) * 0x100000001b3ULL;
    return splitmix64(splitmix64(seed ^ h) + index);
}

inline Rng make_rng(std::uint64_t seed, std::string_view stage, std::uint64_t index = 0) {
    return Rng(derive_seed(seed, stage, index));
}

inline double uniform(Rng& rng, double lo, double hi) {
    return boost::random::uniform_real_distribution<double>(lo, hi)(rng);
}
inline double uniform01(Rng& rng) { return boost::random::uniform_01<double>()(rng); }
inline double normal(Rng& rng, double mean = 0.0, double sd = 1.0) {
    return boost::random::normal_distribution<double>(mean, sd)(rng);
}

}  // namespace wayward
