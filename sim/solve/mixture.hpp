// The probability map over every plausible minimum: the best minimum's virtual bodies (sampled, and importance-
// weighted where its map is not linear) joined by virtual bodies of each other minimum that is physically
// plausible and holds a share of the probability, drawn from that minimum's own linear ellipse at the epoch. The
// shares are the minima's Laplace probabilities (minima.hpp) renormalised over the minima taken in; within each
// minimum the weights keep their own proportions. This is importance sampling from a mixture with one Gaussian
// proposal per basin and each basin's mass by the Laplace approximation, so the map may be several islands where
// the record leaves several orbits open; each island is smoothed at its own scale (SkySample::group). The other
// minima are taken linearly: a basin that is itself curved is drawn as its ellipse.
#pragma once

#include <cstdint>
#include <vector>

#include "sim/predict/predict.hpp"
#include "sim/solve/minima.hpp"

namespace wayward {

// Minima below this probability stay out of the map (a handful of virtual bodies each would be noise there).
inline constexpr double mixture_min_probability = 1e-3;
// The fewest virtual bodies a minimum taken in gets, however small its share.
inline constexpr int mixture_min_bodies = 30;

// Adds to `p` (the best minimum's prediction with its n virtual bodies) the virtual bodies of every other minimum
// of `minima` (best first, as the solve lists them) that has no implausibility flag, a prediction at p's epoch
// with a positive-definite ellipse and a probability of at least mixture_min_probability: max(30, round(n p_i / P))
// bodies each, P the sum of the probabilities taken in (the best's included), drawn from the stream
// derive_seed(seed, "minimum samples", i) and appended after p's own, with p.sample_group set (0 for p's own, i
// for minimum i's). Recomputes the effective sample size; the sampled ellipse and the 90 % radius stay the best
// minimum's own. Returns how many minima were taken in (0: p unchanged, as when it has no virtual bodies).
int mix_other_minima(Prediction& p, const std::vector<Minimum>& minima, std::uint64_t seed);

// The share of p's weight in other minima's virtual bodies, and how many of them p holds and from how many minima.
struct MixedShare {
    int minima = 0, bodies = 0;
    double probability = 0.0;
};
MixedShare mixed_share(const Prediction& p);

}  // namespace wayward
