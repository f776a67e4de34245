// The truth integrated once per answer key (sim/score/truth_ephemeris) and the luck curve's inside-the-field
// years (sim/score/luck_intervals): scoring against a shared integration gives the same numbers as scoring
// from the key, the true track is the same either way, and the field's edges are placed between samples.
#include <doctest/doctest.h>

#include <cmath>

#include "sim/base/units.hpp"
#include "sim/score/luck_intervals.hpp"
#include "sim/score/score.hpp"
#include "sim/score/truth_ephemeris.hpp"
#include "sim/scenario/scenario.hpp"
#include "sim/truth/answer_key.hpp"
#include "solve_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;

namespace {

// The quick scenario's exercise and answer key in memory, as the writer would seal them.
struct KeyedExercise {
    testing::MadeExercise made;
    const Brief& brief() const { return made.ex.exercise.brief; }
    const AnswerKey& key() const { return made.ex.key; }
};

KeyedExercise quick_keyed() { return {testing::make_exercise(load_scenario(testing::source_path("scenarios/quick.toml")), 3)}; }

}  // namespace

TEST_CASE("truth ephemeris: one integration serves the track and every score, equal to integrating per call") {
    const KeyedExercise k = quick_keyed();
    const Brief& brief = k.brief();
    REQUIRE(k.key().hidden_index());
    const TruthEphemeris truth = integrate_truth(brief, k.key());
    CHECK(truth.hidden_name == k.key().hidden_name);
    const double epoch = brief.search_epochs_year.front();
    const TruthTrack shared = true_track(truth, epoch - 5.0, epoch + 5.0, 0.5);
    const TruthTrack alone = true_track(brief, k.key(), epoch - 5.0, epoch + 5.0, 0.5);
    REQUIRE(shared.points.size() == 21);
    REQUIRE(alone.points.size() == shared.points.size());
    for (std::size_t i = 0; i < shared.points.size(); ++i) {
        CHECK(shared.points[i].lon == alone.points[i].lon);
        CHECK(shared.points[i].lat == alone.points[i].lat);
    }
    // A prediction one degree north of the truth: both routes give the same score, 60 arcmin away.
    Prediction p;
    p.epoch_year = epoch;
    p.lon = shared.points[10].lon;
    p.lat = shared.points[10].lat + 1.0 * deg;
    const Score a = score_prediction(brief, truth, p), b = score_prediction(brief, k.key(), p);
    CHECK(a.separation_arcmin == b.separation_arcmin);
    CHECK(a.separation_arcmin == doctest::Approx(60.0).epsilon(1e-9));
    CHECK(a.luck.size() == b.luck.size());
    CHECK(a.closest_arcmin == b.closest_arcmin);
    CHECK(a.luck_fraction_inside == b.luck_fraction_inside);
}

TEST_CASE("inside the field: the luck curve's crossings of the field radius are interpolated between samples") {
    Score s;
    s.field_radius_deg = 2.0;  // 120 arcmin
    // 100' at 1990, 140' at 1991 (crossing 120' half way), out until 1993 (200'), back in by 1994 (80'),
    // crossing 120' at 1993 + 80/120.
    s.luck = {{1989.0, 90.0}, {1990.0, 100.0}, {1991.0, 140.0}, {1992.0, 180.0}, {1993.0, 200.0}, {1994.0, 80.0}, {1995.0, 60.0}};
    const std::vector<Interval> in = inside_field_intervals(s);
    REQUIRE(in.size() == 2);
    CHECK(in[0].from == 1989.0);
    CHECK(in[0].to == doctest::Approx(1990.5).epsilon(1e-12));
    CHECK(in[1].from == doctest::Approx(1993.0 + 80.0 / 120.0).epsilon(1e-12));
    CHECK(in[1].to == 1995.0);
    s.field_radius_deg = 0.5;  // 30': never inside
    CHECK(inside_field_intervals(s).empty());
}
