// The truth's ephemeris: the answer key's true system integrated once (from two days before epoch 0, so that
// light-time at the first instants stays inside it, to the span's end) with the true observer's frame. Scoring
// and the viewer's reveal both read the hidden body's true apparent places from this one integration.
// Units: days inside, decimal years at the interface, radians for sky positions.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "sim/physics/geometry.hpp"
#include "sim/physics/integrate.hpp"
#include "sim/solve/solve.hpp"
#include "sim/truth/answer_key.hpp"

namespace wayward {

struct TruthTrack {
    std::vector<TrackPoint> points;  // true apparent position of the hidden body
};

struct TruthEphemeris {
    IntegrationResult run;           // the key's system, barycentric
    ObserverFrame frame;             // the true observer's frame
    std::size_t observer = 0;        // indices in the key's system
    std::size_t hidden = 0;
    std::string hidden_name;
    double epoch0_year = 0.0;
    double span_end_days = 0.0;      // the exercise's span; times beyond it are clamped to it
    // The hidden body's light-time corrected apparent place at a decimal year (clamped to [epoch 0, span end]).
    TrackPoint at_year(double year) const;
};

// Integrates the key's system. InputError if the key has no hidden body; runtime_error if the integration fails.
TruthEphemeris integrate_truth(const Brief& brief, const AnswerKey& key);

// The true apparent track of the hidden body from year_from to year_to (inclusive) at a step in years.
TruthTrack true_track(const TruthEphemeris& truth, double year_from, double year_to, double step_years);
// The same with the key integrated for this one call.
TruthTrack true_track(const Brief& brief, const AnswerKey& key, double year_from, double year_to, double step_years);

}  // namespace wayward
