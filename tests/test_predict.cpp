// The one predictor (sim/predict): predictions at several epochs from one solution equal, at the solve's own
// epoch, the prediction the solve made; the parameter layout maps vectors to orbits and back as the solve fits them.
#include <doctest/doctest.h>

#include <cmath>
#include <string>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/predict/predict.hpp"
#include "sim/scenario/scenario.hpp"
#include "sim/solve/solve.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/truth/generate.hpp"
#include "sim/truth/observe.hpp"
#include "test_helpers.hpp"

using namespace wayward;

namespace {

// Exact equality of two predictions, field by field (the same code path must give the same bits).
void check_same(const Prediction& a, const Prediction& b) {
    CHECK(a.epoch_year == b.epoch_year);
    CHECK(a.lon == b.lon);
    CHECK(a.lat == b.lat);
    CHECK(a.distance_au == b.distance_au);
    CHECK(a.cov_ll == b.cov_ll);
    CHECK(a.cov_lb == b.cov_lb);
    CHECK(a.cov_bb == b.cov_bb);
    CHECK(a.semi_major_arcsec == b.semi_major_arcsec);
    CHECK(a.semi_minor_arcsec == b.semi_minor_arcsec);
    CHECK(a.orientation_deg == b.orientation_deg);
    CHECK(a.sampled_semi_major_arcsec == b.sampled_semi_major_arcsec);
    CHECK(a.sampled_semi_minor_arcsec == b.sampled_semi_minor_arcsec);
    CHECK(a.radius90_arcsec == b.radius90_arcsec);
    CHECK(a.samples_used == b.samples_used);
    REQUIRE(a.track.size() == b.track.size());
    for (std::size_t k = 0; k < a.track.size(); ++k) {
        CHECK(a.track[k].year == b.track[k].year);
        CHECK(a.track[k].lon == b.track[k].lon);
        CHECK(a.track[k].lat == b.track[k].lat);
    }
}

// An exercise made in memory from a bundled scenario and seed, with the noise `wayward new` draws.
ExerciseInMemory bundled_exercise(const std::string& name, std::uint64_t seed) {
    const Scenario sc = load_scenario(testing::source_path("scenarios/" + name + ".toml"));
    IntegrationResult run;
    const Truth truth = generate(sc, seed, &run);
    const ObservationSet obs = observe(sc, truth, run.ephemeris, seed);
    return exercise_in_memory(sc, truth, obs, make_brief(sc, truth, seed), run.ephemeris);
}

}  // namespace

TEST_CASE("predictions at several epochs from one solution equal solve's own prediction at its epoch") {
    const Scenario sc = load_scenario(testing::source_path("scenarios/quick.toml"));
    const std::uint64_t seed = 5808391462932554ULL;
    IntegrationResult run;
    const Truth truth = generate(sc, seed, &run);
    const ObservationSet obs = observe(sc, truth, run.ephemeris, seed);
    const ExerciseInMemory m = exercise_in_memory(sc, truth, obs, make_brief(sc, truth, seed), run.ephemeris);
    SolveOptions o;
    o.eccentricity_prior_sigma = 0.03;
    o.inclination_prior_rad = 2.0 * deg;
    o.grid_distances = 6;
    o.grid_longitudes = 12;
    o.starts = 2;
    o.samples = 200;
    o.threads = 2;
    o.epoch_year = 2005.0;
    const Solution sol = solve(m.exercise, o);
    REQUIRE(sol.setup);
    REQUIRE(sol.fit.best.size() == static_cast<Eigen::Index>(sol.fit.layout.size()));
    // Another thread count: the samples do not depend on it.
    PredictOptions po = prediction_options(o);
    po.threads = 1;
    const std::vector<Prediction> p = predict(*sol.setup, sol.fit, {1995.0, 2005.0}, po);
    REQUIRE(p.size() == 2);
    check_same(p[1], sol.prediction);
    // The earlier epoch: a smaller ellipse (closer to the data), and the data's centre inside the record.
    CHECK(p[0].semi_major_arcsec < p[1].semi_major_arcsec);
    const double centre = decimal_year(m.exercise.brief.epoch0_year, sol.fit.layout.t_ref);
    CHECK(centre > 1905.0);
    CHECK(centre < 1985.0);
    // Each minimum keeps its whole parameter vector; the best one's is the solution's.
    REQUIRE(!sol.minima.empty());
    CHECK(sol.minima.front().parameters == sol.fit.best);
}

TEST_CASE("predictor: an epoch outside the exercise's span is refused with the field named") {
    const Scenario sc = load_scenario(testing::source_path("scenarios/quick.toml"));
    IntegrationResult run;
    const Truth truth = generate(sc, 3, &run);
    const ObservationSet obs = observe(sc, truth, run.ephemeris, 3);
    const ExerciseInMemory m = exercise_in_memory(sc, truth, obs, make_brief(sc, truth, 3), run.ephemeris);
    const ModelSetup setup = make_setup(m.exercise);
    ModelState s = initial_state(setup);
    s.hidden = HiddenOrbit{};
    const double late = m.exercise.brief.epoch0_year + m.exercise.brief.span_years + 1.0;
    CHECK_THROWS_WITH_AS(predict_position(setup, s, late, 10.0, 0.25), doctest::Contains("epoch_year"), InputError);
}

TEST_CASE("parameter layout: the hidden orbit of a vector, and the steps of each kind of parameter") {
    HiddenParameters l = HiddenParameters::make(2, true, true, true);
    REQUIRE(l.size() == 12 + 7);
    CHECK(l.names.front() == "log_mass");
    l.gm_star = gauss_k * gauss_k;
    l.t_ref = 0.0;
    Eigen::VectorXd x = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(l.size()));
    x[l.i_logm] = std::log(2e-5);
    x[l.i_a] = std::log(50.0);
    x[l.i_k] = 0.03;
    x[l.i_h] = -0.04;
    x[l.i_lon] = 1.0;
    x[l.i_ix] = 0.01;
    x[l.i_iy] = 0.0;
    const HiddenOrbit h = l.hidden(x);
    CHECK(h.mass == doctest::Approx(2e-5).epsilon(1e-14));
    CHECK(h.semi_major_axis == doctest::Approx(50.0).epsilon(1e-14));
    CHECK(std::hypot(h.k, h.h) == doctest::Approx(0.05).epsilon(1e-14));
    CHECK(h.mean_longitude == 1.0);  // t_ref = 0: the mean longitude at epoch 0 is the parameter itself
    CHECK(h.inclination == doctest::Approx(0.01).epsilon(1e-14));
    CHECK(h.node == 0.0);
    const Eigen::VectorXd st = l.steps();
    CHECK(st[0] == 1.0);
    CHECK(st[l.i_logm] == 0.01);
    CHECK(st[l.i_a] == 1e-3);
    // A fixed distance: no log_a parameter, and the orbit takes the fixed value.
    HiddenParameters f = HiddenParameters::make(1, false, false, false);
    f.fixed_a = 42.0;
    CHECK(f.i_a == -1);
    CHECK(f.size() == 6 + 2);
    Eigen::VectorXd y = Eigen::VectorXd::Zero(8);
    y[f.i_logm] = std::log(1e-5);
    CHECK(f.hidden(y).semi_major_axis == 42.0);
}

TEST_CASE("covariance samples are propagated linearly only where a pilot run through the model shows the map is linear") {
    const ExerciseInMemory m = bundled_exercise("tutorial", 1);
    SolveOptions o;
    o.threads = 2;
    const Solution sol = solve(m.exercise, o);
    const Prediction& mixed = sol.prediction;
    PredictOptions full = prediction_options(o);
    full.linear_tolerance = 0.0;  // every sample through the model
    const Prediction all = predict(*sol.setup, sol.fit, {mixed.epoch_year}, full).front();
    // Tutorial's region is a small linear patch: the pilot passes and the rest are propagated linearly.
    CHECK(all.samples_in_full == 300);
    CHECK(mixed.samples_in_full == 40);
    CHECK(mixed.samples_used == 300);
    CHECK(mixed.pilot_departure < 0.02);
    // The same draws either way: the sampled ellipse and the 90 % radius agree to the pilot's tolerance.
    CHECK(std::abs(mixed.radius90_arcsec / all.radius90_arcsec - 1.0) < 0.02);
    CHECK(std::abs(mixed.sampled_semi_major_arcsec / all.sampled_semi_major_arcsec - 1.0) < 0.02);
    CHECK(std::abs(mixed.sampled_semi_minor_arcsec / all.sampled_semi_minor_arcsec - 1.0) < 0.02);

    // The hard scenario's distance is poorly known and its region far from linear: the pilot fails and every
    // sample is run through the model.
    const ExerciseInMemory h = bundled_exercise("hard", 1);
    const Solution sol_h = solve(h.exercise, o);
    CHECK(sol_h.prediction.pilot_departure > 0.02);
    CHECK(sol_h.prediction.samples_in_full == sol_h.prediction.samples_used);
}

TEST_SUITE("slow") {
TEST_CASE("importance-weighted samples: equal weights where the problem is linear and a usable sample where it is not") {
    SolveOptions o;
    o.threads = 2;
    // Tutorial, every sample run through the model: the profile posterior equals the proposal, so the weights
    // are all close to one (effective sample size near the sample count).
    {
        const ExerciseInMemory m = bundled_exercise("tutorial", 1);
        const Solution sol = solve(m.exercise, o);
        PredictOptions full = prediction_options(o);
        full.linear_tolerance = 0.0;
        const Prediction p = predict(*sol.setup, sol.fit, {sol.prediction.epoch_year}, full).front();
        REQUIRE(std::isfinite(p.effective_samples));
        CHECK(p.effective_samples > 0.95 * p.samples_used);
        double sum = 0.0;
        for (double w : p.sample_weight) sum += w;
        CHECK(sum == doctest::Approx(1.0).epsilon(1e-12));
        // The weighted samples agree with the linear ellipse.
        CHECK(std::abs(p.sampled_semi_major_arcsec / p.semi_major_arcsec - 1.0) < 0.15);
    }
    // The default scenario (seed 2): the planets' states make the joint Gaussian a poor picture, but the profiled
    // samples keep most of their weight and agree with the linear ellipse to its sampling error.
    {
        const ExerciseInMemory m = bundled_exercise("default", 2);
        const Solution sol = solve(m.exercise, o);
        const Prediction& p = sol.prediction;
        REQUIRE(std::isfinite(p.effective_samples));
        MESSAGE("default seed 2: effective sample size " << p.effective_samples << " of " << p.samples_used << "; sampled "
                                                         << p.sampled_semi_major_arcsec / 60 << "' vs linear " << p.semi_major_arcsec / 60 << "'");
        CHECK(p.effective_samples > 0.5 * p.samples_used);
        CHECK(std::abs(p.sampled_semi_major_arcsec / p.semi_major_arcsec - 1.0) < 0.15);
        CHECK(std::abs(p.sampled_semi_minor_arcsec / p.semi_minor_arcsec - 1.0) < 0.15);
    }
}
}  // TEST_SUITE("slow")
