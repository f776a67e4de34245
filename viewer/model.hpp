// What the viewer shows, as computed by sim. Author mode (a scenario file): the drawn system and its truth
// integration. Trainee mode (an exercise folder): the brief and observations only, and the team's model of the
// known planets (sim's known_model_system integrated); the hidden body is not in the model at all until the
// answer key is revealed, when its true orbit (the key's system integrated) is added as one more body. Both:
// the observer's frame, positions and apparent directions sampled from the ephemeris for trails and tracks,
// and the background star field. Panels only read it. Every position and date here comes from a sim function
// (Ephemeris::position, apparent, elongation, decimal_year, orbital_period ...).
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "sim/exercise/exercise.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/truth/generate.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/scenario/scenario.hpp"
#include "sim/score/truth_ephemeris.hpp"
#include "sim/search/starfield.hpp"

namespace wayward::viewer {

class Analysis;  // viewer/analysis.hpp: the trainee's fit, solve and score work (attach_analysis gives it)

// Author mode shows everything of a scenario, the hidden body included. Trainee mode, for exercise folders,
// keeps the hidden body out of view until a confirmed reveal.
enum class ViewerMode { author, trainee };

// What the panels say about the setting, from the scenario (author mode) or the brief (trainee mode).
struct PlanFacts {
    std::string name;                 // scenario name
    double epoch0_year = 0.0;
    double span_days = 0.0;
    double elongation_limit_deg = 0.0;
    double field_radius_deg = 1.0;
    std::vector<double> search_epochs_year;
};

// The answer key once revealed: the true system as sim's integrate_truth integrates it, the same integration
// the scores are computed from.
struct RevealedTruth {
    AnswerKey key;
    std::shared_ptr<const TruthEphemeris> truth;
    // The hidden body at the model's sample times (same layout as one body's samples in ViewerModel).
    std::vector<float> xyz, lon, lat;
    double mass = 0.0, a_au = 0.0, e = 0.0, period_days = 0.0;
};

struct BodyView {
    std::string name;
    Role role = Role::known;
    bool observer = false;
    std::size_t index = 0;     // in `bodies`
    bool from_key = false;     // the revealed hidden body: positions from the answer key's integration
    std::size_t source = 0;    // index in its ephemeris (ViewerModel::run, or RevealedTruth::run when from_key)
    double mass = 0.0;         // solar masses
    double a_au = 0.0;         // osculating semi-major axis at epoch 0
    double e = 0.0;
    double period_days = 0.0;  // two-body period from a (sim's orbital_period); 0 for the star
};

struct ViewerModel {
    ViewerMode mode = ViewerMode::author;
    std::string source;          // the file or folder opened
    std::uint64_t seed = 1;
    PlanFacts facts;
    Scenario scenario;           // author mode
    Truth truth;                 // author mode
    std::shared_ptr<const Exercise> exercise;  // trainee mode: brief, observations, observer track
    std::shared_ptr<Analysis> analysis;        // trainee mode: fit, solve, reveal and score work
    std::optional<RevealedTruth> revealed;     // trainee mode, after the reveal
    IntegrationResult run;       // author: the truth; trainee: the team's known-planet model
    std::size_t observer = 0;
    ObserverFrame frame;
    std::vector<BodyView> bodies;  // one per system body, same order (bodies[0] is the star)

    // Samples on a uniform grid of times over [t_begin, t_end] for trails and tracks.
    double sample_step_days = 0.0;
    std::vector<double> sample_times;
    std::vector<float> sample_xyz;     // barycentric au: [(k * n + i) * 3 + c]
    std::vector<float> sample_lon;     // apparent from the observer, radians: [k * n + i] (observer: NaN)
    std::vector<float> sample_lat;

    StarFieldSpec star_spec;
    std::vector<Star> stars;

    double t_begin() const { return 0.0; }
    double t_end() const { return facts.span_days; }
    std::size_t body_count() const { return bodies.size(); }
    bool shows(std::size_t body) const;  // false for the hidden body in trainee mode before the reveal
    bool hidden_shown() const;           // a hidden body is among the bodies shown
    double elongation_limit() const;     // radians, from the observing plan
    double field_radius() const;         // radians, the search field's radius
    double search_epoch_year() const;    // the first search epoch (or the span's end if none)

    // Straight from sim, at any time in the span.
    Vec3 position(std::size_t body, double t) const;
    SkyPosition sky(std::size_t body, double t) const;   // light-time corrected apparent direction
    double elongation(std::size_t body, double t) const;
    double year(double t) const;           // decimal year
    double days_at_year(double year) const;

    std::size_t nearest_sample(double t) const;
};

struct LoadOptions {
    std::uint64_t seed = 1;
    double sample_step_days = 2.0;
    long star_count = -1;         // < 0: the count law's expected count down to star_faint_mag
    double star_faint_mag = 7.0;
};

struct LoadOutcome {
    std::optional<ViewerModel> model;
    std::string error;            // set when model is empty: what went wrong, for the window and stderr
};

// Opens a scenario file (author mode) or an exercise folder (trainee mode; the trainee's work comes with
// attach_analysis in viewer/analysis.hpp). Never throws: problems come back as a message.
LoadOutcome load_model(const std::string& path, const LoadOptions& options);

// Adds the revealed hidden body to a trainee model (its samples were computed with make_revealed_truth).
void apply_reveal(ViewerModel& model, RevealedTruth truth);
// Samples the hidden body of the key's integrated system (sim's integrate_truth) at the model's sample times.
RevealedTruth make_revealed_truth(const AnswerKey& key, std::shared_ptr<const TruthEphemeris> truth,
                                  const std::vector<double>& sample_times);

// Regenerates the star field with a new count or faint limit.
void regenerate_stars(ViewerModel& model, long count, double faint_mag);

}  // namespace wayward::viewer
