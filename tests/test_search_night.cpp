// The search rehearsal night by night, on the quick scenario's truth: a bright body at the region's centre is
// found on night 1 with a revisit; one 3 mag below the limit, or outside every field, never is; false
// candidates are all rejected; no pointing breaks the rules over many random plans; the same inputs give the
// same plan and log byte for byte; the apparent retrograde rate at opposition.
#include <doctest/doctest.h>

#include <cmath>
#include <string>
#include <memory>

#include "sim/base/random.hpp"
#include "sim/base/units.hpp"
#include "sim/commands/search_command.hpp"
#include "sim/night/rehearsal.hpp"
#include "sim/physics/elements.hpp"
#include "solve_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;

namespace {

struct World {
    testing::MadeExercise made;
    std::unique_ptr<TruthEphemeris> truth;
    double h = 0.0;
    double opposition_year = 0.0;
};

// The quick scenario's truth, integrated once for every case here, and a date near the body's opposition.
const World& world() {
    static const World w = [] {
        World x;
        x.made = testing::make_exercise(load_scenario(testing::source_path("scenarios/quick.toml")), 1);
        x.truth = std::make_unique<TruthEphemeris>(integrate_truth(x.made.ex.exercise.brief, x.made.ex.key));
        x.h = hidden_absolute_magnitude(x.made.ex.key);
        const Brief& b = x.made.ex.exercise.brief;
        const double d0 = days_from_year(b.epoch0_year, b.search_epochs_year.front());
        double best = -1.0;
        for (double d = d0; d < d0 + 400.0; d += 1.0) {
            const double e = elongation(x.truth->run.ephemeris, x.truth->observer, x.truth->hidden, d);
            if (e > best) { best = e; x.opposition_year = decimal_year(b.epoch0_year, d); }
        }
        return x;
    }();
    return w;
}

// A solution that predicts the true track, shifted by `offset_lat_deg`, with a `sigma_arcsec` circle.
Solution solution_at_truth(double sigma_arcsec, double offset_lat_deg = 0.0) {
    const World& w = world();
    Solution s;
    s.exercise_sha256 = w.made.ex.exercise.brief.answer_key_sha256;
    const double y = w.opposition_year;
    Prediction& p = s.prediction;
    p.epoch_year = y;
    const TrackPoint t = w.truth->at_year(y);
    p.lon = t.lon;
    p.lat = t.lat + offset_lat_deg * deg;
    const double d = days_from_year(w.truth->epoch0_year, y);
    p.distance_au = apparent(w.truth->run.ephemeris, w.truth->frame, w.truth->observer, w.truth->hidden, d).sky.distance;
    p.cov_ll = p.cov_bb = sigma_arcsec * sigma_arcsec;
    p.semi_major_arcsec = p.semi_minor_arcsec = sigma_arcsec;
    for (const TrackPoint& q : true_track(*w.truth, y - 0.5, y + 0.5, 0.02).points) p.track.push_back({q.year, q.lon, q.lat + offset_lat_deg * deg});
    return s;
}

// A small-field telescope on the body's latitude (it passes near the zenith at midnight), always clear.
Telescope test_telescope(double limiting_mag) {
    Telescope t;
    t.field_of_view_deg = 0.2;
    t.limiting_mag = limiting_mag;
    t.chart_limit_mag = limiting_mag + 0.5;
    t.detection_max = 1.0;
    t.site_latitude_deg = world().truth->at_year(world().opposition_year).lat / deg;
    t.clear_fraction = 1.0;
    t.weather_correlation = 0.0;
    t.astrometric_error_arcsec = 0.3;
    return t;
}

RehearsalResult rehearse(const Solution& s, const Telescope& tel, int nights, RehearsalOptions opt = {}) {
    opt.nights = nights;
    opt.start_year = world().opposition_year - 0.5 / 365.25;
    opt.region_samples = 1000;
    return run_rehearsal(world().made.ex.exercise.brief, s, tel, *world().truth, world().h, opt);
}

double body_mag() {
    static const double m = rehearse(solution_at_truth(10.0), test_telescope(12.0), 1).body_mag_first_night;
    return m;
}

}  // namespace

TEST_CASE("apparent retrograde rate at opposition from circular orbits") {
    // Circular-orbit speeds v = k / sqrt(a) (Kepler's third law with Gauss's k), relative speed over the
    // distance between the orbits: 100.01"/day at 30 au, 76.59 at 40, 52.37 at 60 (derived).
    CHECK(std::abs(opposition_rate(30.0, 1.0, 1.0) / arcsec - 100.01) < 0.01);
    CHECK(std::abs(opposition_rate(40.0, 1.0, 1.0) / arcsec - 76.59) < 0.01);
    CHECK(std::abs(opposition_rate(60.0, 1.0, 1.0) / arcsec - 52.37) < 0.01);
}

TEST_CASE("the truth's body moves backwards at opposition") {
    const World& w = world();
    const TrackPoint a = w.truth->at_year(w.opposition_year), b = w.truth->at_year(w.opposition_year + 1.0 / 365.25);
    CHECK(wrap_pi(b.lon - a.lon) < 0.0);  // retrograde near opposition (geometry of the two orbits)
}

TEST_CASE("a bright body at the region's centre in clear weather is found on night 1 with a revisit") {
    const RehearsalResult r = rehearse(solution_at_truth(10.0), test_telescope(body_mag() + 3.0), 1);
    CHECK(r.found);
    CHECK(r.found_night == 1);
    bool revisit = false;
    for (const VisitRecord& v : r.log) revisit |= v.visit == 2 && v.confirmed > 0;
    CHECK(revisit);
    CHECK(r.false_confirmations == 0);
    // Found where the truth puts it, to a few astrometric errors.
    const TrackPoint t = world().truth->at_year(r.found_year);
    CHECK(separation(t.lon, t.lat, r.found_lon, r.found_lat) / arcsec < 3.0);
}

TEST_CASE("a revisit confirms a body whose motion the solution got wrong: any motion of a body beyond the known planets") {
    // The solution's track stands still (its predicted motion is zero); the body moves by its true parallax.
    // A revisit that demanded the predicted motion would take the body for two transients and never find it.
    Solution s = solution_at_truth(10.0);
    for (TrackPoint& q : s.prediction.track) {
        q.lon = s.prediction.lon;
        q.lat = s.prediction.lat;
    }
    const RehearsalResult r = rehearse(s, test_telescope(body_mag() + 3.0), 2);
    CHECK(r.found);
    CHECK(r.false_confirmations == 0);
    const TrackPoint t = world().truth->at_year(r.found_year);
    CHECK(separation(t.lon, t.lat, r.found_lon, r.found_lat) / arcsec < 3.0);
}

TEST_CASE("a body 3 magnitudes below the limit is never found") {
    const RehearsalResult r = rehearse(solution_at_truth(10.0), test_telescope(body_mag() - 3.0), 3);
    CHECK(!r.found);
    int observed = 0;
    for (const VisitRecord& v : r.log) observed += v.outcome == VisitOutcome::observed ? 1 : 0;
    CHECK(observed >= 3);  // the field over the body was looked at every night
}

TEST_CASE("a body outside every field is never found, and every false candidate is rejected") {
    RehearsalOptions opt;
    opt.chart.spurious_detections_per_field = 4.0;  // plenty of false candidates to settle
    const RehearsalResult r = rehearse(solution_at_truth(10.0, 3.0), test_telescope(body_mag() + 3.0), 3, opt);
    CHECK(!r.found);
    CHECK(r.false_candidates > 0);
    CHECK(r.false_confirmations == 0);
    CHECK(r.false_candidate_hours > 0.0);
}

TEST_CASE("over many random plans no pointing is near the star, low or in daylight") {
    const World& w = world();
    const Brief& b = w.made.ex.exercise.brief;
    Rng rng = make_rng(7, "random plans");
    const Telescope tel = test_telescope(12.0);
    int observed = 0, refused = 0, kept_from_star = 0;
    for (int plan = 0; plan < 8; ++plan) {
        RehearsalOptions opt;
        opt.strategy = strategy_by_name("plan");
        for (int night = 1; night <= 2; ++night)
            for (int k = 0; k < 40; ++k)
                opt.plan.push_back({night, uniform(rng, 0.0, two_pi), std::asin(uniform(rng, -1.0, 1.0)), 0});
        const RehearsalResult r = rehearse(solution_at_truth(10.0), tel, 2, opt);
        kept_from_star += r.fields_kept_from_star;
        for (const VisitRecord& v : r.log) {
            CHECK(v.outcome != VisitOutcome::refused_near_star);  // the plan never even tried one
            if (v.outcome == VisitOutcome::observed || v.outcome == VisitOutcome::revisit) {
                ++observed;
                CHECK(v.elongation >= b.elongation_limit_deg * deg);
                CHECK(v.altitude >= tel.min_altitude_deg * deg);
                CHECK(v.star_altitude <= -tel.dark_depression_deg * deg);
            } else if (v.outcome != VisitOutcome::cloudy && v.outcome != VisitOutcome::idle) {
                ++refused;
            }
        }
    }
    CHECK(observed > 50);
    // About 7 % of random directions lie within 30 deg of the star (a cap of (1 - cos 30 deg) / 2 of the sphere).
    CHECK(kept_from_star > 10);
    // The team's own orbit of its planet is good enough that the truth almost never has to refuse a pointing.
    CHECK(refused <= observed / 100);
}

TEST_CASE("the same inputs give the same plan and log, byte for byte") {
    RehearsalOptions opt;
    opt.strategy = strategy_by_name("spiral");
    const Telescope tel = test_telescope(body_mag() - 3.0);
    const RehearsalResult a = rehearse(solution_at_truth(600.0), tel, 2, opt);
    const RehearsalResult b = rehearse(solution_at_truth(600.0), tel, 2, opt);
    const double y0 = world().made.ex.exercise.brief.epoch0_year;
    CHECK(search_plan_csv(a) == search_plan_csv(b));
    CHECK(search_log_csv(a, y0) == search_log_csv(b, y0));
    CHECK(a.log.size() > 10);
}

TEST_CASE("the probability covered never falls from one night to the next, cloudy nights included") {
    Telescope tel = test_telescope(body_mag() - 3.0);
    tel.clear_fraction = 0.5;
    tel.weather_correlation = 0.5;
    const RehearsalResult r = rehearse(solution_at_truth(1800.0), tel, 8);
    int cloudy = 0;
    for (std::size_t k = 0; k < r.nights.size(); ++k) {
        cloudy += r.nights[k].clear ? 0 : 1;
        if (k > 0) CHECK(r.nights[k].probability_covered >= r.nights[k - 1].probability_covered);
    }
    CHECK(cloudy > 0);
    CHECK(cloudy < 8);
}

namespace {

// A solution whose predicted place sits on the star as the team's own orbit of its planet sees it at the
// opposition date (no track: the place stays put), with a 10" circle.
Solution solution_on_the_star() {
    const World& w = world();
    const Brief& b = w.made.ex.exercise.brief;
    Solution s = solution_at_truth(10.0);
    const Vec3 star = -kepler_observer_path(b)(days_from_year(b.epoch0_year, w.opposition_year));
    s.prediction.lon = wrap_two_pi(std::atan2(star.y(), star.x()));
    s.prediction.lat = std::asin(star.z() / star.norm());
    s.prediction.track.clear();
    return s;
}

bool line_has(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

}  // namespace

TEST_CASE("a region on the star searches nothing, and every night and the whole search say why") {
    const RehearsalResult r = rehearse(solution_on_the_star(), test_telescope(12.0), 3);
    const Brief& b = world().made.ex.exercise.brief;
    CHECK(r.fields_searched == 0);
    CHECK(r.plan.empty());
    REQUIRE(r.nights.size() == 3);
    for (const NightRecord& n : r.nights) {
        CHECK(n.idle == NightIdle::near_star);
        CHECK(n.centre_elongation < b.elongation_limit_deg * deg);
    }
    int idle_rows = 0;
    for (const VisitRecord& v : r.log) idle_rows += v.outcome == VisitOutcome::idle && v.idle == NightIdle::near_star ? 1 : 0;
    CHECK(idle_rows == 3);
    CHECK(line_has(search_log_csv(r, b.epoch0_year), "no field: the region is within the elongation limit of the star"));
    const std::string line = search_idle_line(r, b.elongation_limit_deg);
    CHECK(line_has(line, "Nothing could be searched on any of the 3 nights: 3 nights the region is within the elongation limit"));
    CHECK(line_has(line, "--start"));
}

TEST_CASE("a site that never gets dark, one where the region never rises high enough, and all cloud: each said") {
    const double body_lat_deg = world().truth->at_year(world().opposition_year).lat / deg;
    {   // The star sinks at most 30 deg below the horizon at latitude 60 (it stays near the equator of a planet
        // whose axis is normal to its orbit), so a darkness of 40 deg depression never comes.
        Telescope t = test_telescope(12.0);
        t.site_latitude_deg = 60.0;
        t.dark_depression_deg = 40.0;
        const RehearsalResult r = rehearse(solution_at_truth(10.0), t, 2);
        for (const NightRecord& n : r.nights) CHECK(n.idle == NightIdle::no_darkness);
        CHECK(line_has(search_idle_line(r, 30.0), "2 nights no darkness"));
    }
    {   // 60 deg from the body's declination the region culminates 30 deg high, below a 40 deg minimum.
        Telescope t = test_telescope(12.0);
        t.site_latitude_deg = body_lat_deg - 60.0;
        t.min_altitude_deg = 40.0;
        const RehearsalResult r = rehearse(solution_at_truth(10.0), t, 2);
        CHECK(r.fields_searched == 0);
        for (const NightRecord& n : r.nights) CHECK(n.idle == NightIdle::too_low);
        CHECK(line_has(search_idle_line(r, 30.0), "2 nights the region is below the minimum altitude"));
    }
    {
        Telescope t = test_telescope(12.0);
        t.clear_fraction = 0.0;
        const RehearsalResult r = rehearse(solution_at_truth(10.0), t, 2);
        for (const NightRecord& n : r.nights) CHECK(n.idle == NightIdle::cloudy);
        CHECK(line_has(search_idle_line(r, 30.0), "2 nights cloudy"));
    }
    {   // A searched night has no reason and no such line.
        const RehearsalResult r = rehearse(solution_at_truth(10.0), test_telescope(body_mag() - 3.0), 1);
        CHECK(r.fields_searched > 0);
        CHECK(r.nights.front().idle == NightIdle::none);
        CHECK(search_idle_line(r, 30.0).empty());
    }
}
