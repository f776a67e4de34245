// The answer key's system integrated once; see truth_ephemeris.hpp.
#include "sim/score/truth_ephemeris.hpp"

#include <algorithm>
#include <stdexcept>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"

namespace wayward {

TruthEphemeris integrate_truth(const Brief& brief, const AnswerKey& key) {
    const System sys = key.system();
    const auto hidden = key.hidden_index();
    if (!hidden) throw InputError(key.file, 0, "body", "the answer key has no hidden body");
    TruthEphemeris t;
    t.hidden = *hidden;
    t.hidden_name = key.hidden_name;
    t.epoch0_year = brief.epoch0_year;
    t.span_end_days = brief.span_years * julian_year_days;
    t.run = integrate(sys, -2.0, t.span_end_days);
    if (t.run.outcome != IntegrationOutcome::ok) throw std::runtime_error("the truth could not be integrated: " + to_string(t.run.outcome));
    t.observer = sys.observer_index();
    t.frame = observer_frame(sys, t.observer);
    return t;
}

TrackPoint TruthEphemeris::at_year(double year) const {
    const double d = std::clamp(days_from_year(epoch0_year, year), 0.0, span_end_days);
    const Apparent a = apparent(run.ephemeris, frame, observer, hidden, d);
    return {year, a.sky.lon, a.sky.lat};
}

TruthTrack true_track(const TruthEphemeris& truth, double year_from, double year_to, double step_years) {
    TruthTrack t;
    for (double y = year_from; y <= year_to + 1e-9; y += step_years) t.points.push_back(truth.at_year(y));
    return t;
}

TruthTrack true_track(const Brief& brief, const AnswerKey& key, double year_from, double year_to, double step_years) {
    return true_track(integrate_truth(brief, key), year_from, year_to, step_years);
}

}  // namespace wayward
