// What the viewer shows, as computed by sim: the scenario, the drawn system and its truth integration, the
// observer's frame, positions and apparent directions sampled from the ephemeris for trails and tracks, and
// the background star field. Built once when a file is opened; panels only read it. Every position and date
// here comes from a sim function (Ephemeris::position, apparent, elongation, decimal_year, orbital_period ...).
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "sim/generate.hpp"
#include "sim/geometry.hpp"
#include "sim/scenario.hpp"
#include "sim/starfield.hpp"

namespace wayward::viewer {

// Author mode shows everything of a scenario, the hidden body included. (Trainee mode, for exercise folders,
// keeps the hidden body out of view until a confirmed reveal.)
enum class ViewerMode { author, trainee };

struct BodyView {
    std::string name;
    Role role = Role::known;
    bool observer = false;
    std::size_t index = 0;     // in the system / ephemeris
    double mass = 0.0;         // solar masses
    double a_au = 0.0;         // osculating semi-major axis at epoch 0
    double e = 0.0;
    double period_days = 0.0;  // two-body period from a (sim's orbital_period); 0 for the star
};

struct ViewerModel {
    ViewerMode mode = ViewerMode::author;
    std::string source;          // the file opened
    std::uint64_t seed = 1;
    Scenario scenario;
    Truth truth;
    IntegrationResult run;
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
    double t_end() const { return truth.span_days; }
    std::size_t body_count() const { return bodies.size(); }
    bool shows(std::size_t body) const;  // false for the hidden body outside author mode
    double elongation_limit() const;     // radians, from the observing plan

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

// Opens a scenario file (author mode). Never throws: problems come back as a message.
LoadOutcome load_model(const std::string& path, const LoadOptions& options);

// Regenerates the star field with a new count or faint limit.
void regenerate_stars(ViewerModel& model, long count, double faint_mag);

}  // namespace wayward::viewer
