// Trainee mode without a window: an exercise folder opens with the brief and observations only (the answer key
// may even be absent), the model's planets, samples and dates are sim's, the known-bodies fit and the solver run
// in worker threads and give exactly sim's results (and the solver can be cancelled), the residual panel's
// layout, hover pick and RMS table match sim, a non-best minimum's track comes from sim's predict_position, a
// changed answer key is refused with nothing revealed, and after a reveal the hidden body and the scores are
// sim's. Exercises are made with the `wayward` CLI (WAYWARD_CLI).
#include <doctest/doctest.h>

#include <chrono>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <string>
#include <thread>

#include <unistd.h>

#include "sim/exercise/exercise.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/fit/known_fit.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/report/report.hpp"
#include "sim/score/score.hpp"
#include "sim/solve/solve.hpp"
#include "sim/base/units.hpp"
#include "test_helpers.hpp"
#include "viewer/analysis.hpp"
#include "viewer/model.hpp"
#include "viewer/residuals_view.hpp"
#include "viewer/sky_chart.hpp"

using namespace wayward;
using namespace wayward::viewer;
namespace fs = std::filesystem;

namespace {

const fs::path& work_dir() {
    static const fs::path dir = [] {
        fs::path d = fs::temp_directory_path() / ("wayward-viewer-trainee-" + std::to_string(::getpid()));
        fs::remove_all(d);
        fs::remove_all(d.string() + "-answer-key");  // a key left by an earlier run under the same pid
        fs::create_directories(d);
        return d;
    }();
    return dir;
}

// A fresh exercise folder made by `wayward new`.
std::string make_exercise(const std::string& scenario, const std::string& name) {
    const fs::path dir = work_dir() / name;
    fs::remove_all(dir);
    const auto r = wayward::testing::run_cli("new " + wayward::testing::source_path(scenario) + " --seed 1 --out " + dir.string());
    REQUIRE_MESSAGE(r.status == 0, r.output);
    return dir.string();
}

const std::string& default_exercise() {
    static const std::string dir = make_exercise("scenarios/default.toml", "default");
    return dir;
}
const std::string& quick_exercise() {
    static const std::string dir = make_exercise("scenarios/quick.toml", "quick");
    return dir;
}


LoadOutcome open(const std::string& dir, bool start = true) {
    LoadOptions o;
    o.star_count = 100;
    LoadOutcome loaded = load_model(dir, o);
    if (loaded.model) attach_analysis(*loaded.model, start);
    return loaded;
}

}  // namespace

TEST_SUITE("viewer_trainee") {

TEST_CASE("an exercise folder opens in trainee mode with the team's model and no hidden body, even without the key") {
    const std::string dir = make_exercise("scenarios/default.toml", "no-key");
    // Move the sealed answer key away: opening must not need it.
    const fs::path key_dir = default_key_dir(dir), away = work_dir() / "no-key-key-moved-away";
    fs::remove_all(away);
    fs::rename(key_dir, away);
    LoadOutcome loaded = open(dir, false);
    REQUIRE_MESSAGE(loaded.model, loaded.error);
    ViewerModel& m = *loaded.model;
    CHECK(m.mode == ViewerMode::trainee);
    REQUIRE(m.exercise);
    const Brief& brief = m.exercise->brief;
    CHECK(m.body_count() == brief.planets.size() + 1);
    for (const BodyView& b : m.bodies) CHECK(b.role != Role::hidden);
    CHECK_FALSE(m.hidden_shown());
    CHECK_FALSE(m.revealed);
    // The planets, samples and dates are sim's: the brief's known-planet model integrated over the span.
    const System known = known_model_system(brief);
    const IntegrationResult run = integrate(known, 0.0, brief.span_years * julian_year_days);
    REQUIRE(run.outcome == IntegrationOutcome::ok);
    const ObserverFrame frame = observer_frame(known, known.observer_index());
    const std::size_t n = m.body_count();
    for (std::size_t k : {std::size_t{0}, std::size_t{12345}, m.sample_times.size() - 1}) {
        const double t = m.sample_times[k];
        for (std::size_t i = 0; i < n; ++i) {
            CHECK(m.sample_xyz[(k * n + i) * 3] == static_cast<float>(run.ephemeris.position(i, t).x()));
            if (i == m.observer) continue;
            CHECK(m.sample_lon[k * n + i] == static_cast<float>(apparent(run.ephemeris, frame, m.observer, i, t).sky.lon));
        }
    }
    CHECK(m.year(1000.0) == decimal_year(brief.epoch0_year, 1000.0));
    CHECK(m.days_at_year(1960.0) == days_from_year(brief.epoch0_year, 1960.0));
    CHECK(m.field_radius() == doctest::Approx(brief.field_radius_deg * deg));
    CHECK(m.search_epoch_year() == brief.search_epochs_year.front());
    // Revealing without the key fails with a message naming it; nothing is revealed.
    ViewerControls c;
    CHECK_FALSE(m.analysis->request_reveal(m));
    CHECK(m.analysis->reveal_error.find("answer_key.toml") != std::string::npos);
    CHECK(m.analysis->wait_idle(m, c));
    CHECK_FALSE(m.revealed);
    CHECK(m.body_count() == n);
    fs::rename(away, key_dir);
}

TEST_CASE("bad exercise folders come back as messages naming the file and line") {
    const LoadOutcome missing = open((work_dir() / "nowhere").string());
    CHECK_FALSE(missing.model);
    CHECK(missing.error.find("nowhere") != std::string::npos);
    CHECK(missing.error.find("no such file or folder") != std::string::npos);

    const fs::path empty = work_dir() / "empty";
    fs::create_directories(empty);
    const LoadOutcome no_brief = open(empty.string());
    CHECK_FALSE(no_brief.model);
    CHECK(no_brief.error.find("brief.toml") != std::string::npos);

    const std::string dir = make_exercise("scenarios/quick.toml", "corrupt");
    const std::string obs = dir + "/observations.csv";
    std::string text = wayward::testing::read(obs);
    // Replace the fifth line (a data row) with a row of two cells.
    std::size_t at = 0;
    for (int k = 0; k < 4; ++k) at = text.find('\n', at) + 1;
    text.replace(at, text.find('\n', at) - at, "1234.5,garbage");
    wayward::testing::write(obs, text);
    const LoadOutcome corrupt = open(dir);
    CHECK_FALSE(corrupt.model);
    CHECK(corrupt.error.find("observations.csv:5") != std::string::npos);
    CHECK(corrupt.error.find("expected 8 columns") != std::string::npos);
}

TEST_CASE("the known-bodies fit runs in a worker and gives sim's residuals; the panel's table and hover match sim") {
    LoadOutcome loaded = open(default_exercise());
    REQUIRE(loaded.model);
    ViewerModel& m = *loaded.model;
    ViewerControls c;
    Analysis& a = *m.analysis;
    CHECK(a.fit_job.running());  // started at load, off the frame loop
    REQUIRE(a.wait_idle(m, c));
    REQUIRE_MESSAGE(a.fit, a.fit_error);
    const KnownFit direct = fit_known(load_exercise(default_exercise()));
    REQUIRE(a.fit->residuals.size() == direct.residuals.size());
    bool same = a.fit->chi2 == direct.chi2;
    for (std::size_t k = 0; k < direct.residuals.size(); ++k)
        same = same && a.fit->residuals[k] == direct.residuals[k] && a.fit->setup.obs[k].rejected == direct.setup.obs[k].rejected;
    CHECK(same);

    // The sidebar's RMS table against `wayward residuals`' printed table (3 decimals).
    std::ostringstream printed;
    print_residual_summary(direct, printed);
    std::map<std::string, std::vector<double>> cli;  // "planet era" -> n, rms lon, rms lat, out
    std::istringstream lines(printed.str());
    std::string line;
    while (std::getline(lines, line)) {
        for (const ResidualSummaryRow& r : residual_summary(*a.fit)) {
            const std::string prefix = "  " + r.planet_name;
            if (line.rfind(prefix, 0) != 0 || line.find(r.era_name) == std::string::npos) continue;
            std::istringstream rest(line.substr(line.find(r.era_name) + r.era_name.size()));
            double nv, l, b, sig, out;
            rest >> nv >> l >> b >> sig;
            rest.ignore(1);  // the '*' of an estimated sigma, or a space
            rest >> out;
            cli[r.planet_name + " " + r.era_name] = {nv, l, b, out};
        }
    }
    const auto rows = residual_summary(*a.fit);
    REQUIRE(rows.size() == cli.size());
    for (const ResidualSummaryRow& r : rows) {
        CAPTURE(r.planet_name + " " + r.era_name);
        const auto& v = cli[r.planet_name + " " + r.era_name];
        CHECK(static_cast<double>(r.kept) == v[0]);
        CHECK(std::abs(r.rms_lon - v[1]) <= 0.0005);
        CHECK(std::abs(r.rms_lat - v[2]) <= 0.0005);
        CHECK(static_cast<double>(r.set_aside) == v[3]);
    }

    // Hover: the observation under the mouse is the one drawn there, and the text carries its numbers.
    const sf::FloatRect canvas(350, 0, 930, 800);
    const float ts = 16.0f;
    const ResidualLayout layout = residual_layout(*a.fit, canvas, ts);
    REQUIRE(layout.cells.size() == 2 * a.fit->setup.planets.size());
    std::size_t kept_k = 0, rejected_k = 0;
    for (std::size_t k = 0; k < a.fit->setup.obs.size(); ++k) {
        if (a.fit->setup.obs[k].rejected) rejected_k = k;
        else if (a.fit->setup.obs[k].era == 1 && kept_k == 0) kept_k = k;
    }
    REQUIRE(a.fit->setup.obs[rejected_k].rejected);
    for (const std::size_t k : {kept_k, rejected_k}) {
        CAPTURE(k);
        const FitObservation& o = a.fit->setup.obs[k];
        const ResidualCell* cell = nullptr;
        for (const ResidualCell& cl : layout.cells)
            if (cl.planet == o.planet && cl.component == 1) cell = &cl;
        REQUIRE(cell);
        const ImVec2 at = residual_positions(*a.fit, layout, *cell, ts, true)[k];
        const auto picked = residual_under(*a.fit, layout, ts, true, at);
        REQUIRE(picked);
        // Several observations may share the pixel: the one picked is drawn within half a pixel of it.
        const ImVec2 p = residual_positions(*a.fit, layout, *cell, ts, true)[*picked];
        CHECK(std::hypot(p.x - at.x, p.y - at.y) < 0.5f);
        const std::vector<std::string> text = describe_observation(*a.fit, *picked);
        const FitObservation& q = a.fit->setup.obs[*picked];
        std::string all;
        for (const auto& s : text) all += s + "\n";
        CAPTURE(all);
        CHECK(all.find(a.fit->setup.known.bodies[a.fit->setup.planets[q.planet]].name) != std::string::npos);
        CHECK(all.find("era: " + a.fit->setup.eras[q.era]) != std::string::npos);
        char year[32];
        std::snprintf(year, sizeof year, "%.3f", decimal_year(a.fit->setup.brief.epoch0_year, q.time_days));
        CHECK(all.find(year) != std::string::npos);
        char oc[32];
        std::snprintf(oc, sizeof oc, "%.3f", std::abs(a.fit->residuals[*picked][1]));
        CHECK(all.find(oc) != std::string::npos);
        char sigma[32];
        std::snprintf(sigma, sizeof sigma, "%.3f", q.sigma_lat_arcsec);
        CHECK(all.find(sigma) != std::string::npos);
        CHECK((all.find("set aside") != std::string::npos) == q.rejected);
    }
    // Hidden set-aside points are not picked; far from every point, nothing is.
    const ResidualCell& c0 = layout.cells[0];
    CHECK_FALSE(residual_under(*a.fit, layout, ts, true, ImVec2(c0.lo.x - 30, c0.lo.y - 30)));
    const FitObservation& r = a.fit->setup.obs[rejected_k];
    for (const ResidualCell& cl : layout.cells)
        if (cl.planet == r.planet && cl.component == 1) {
            const ImVec2 at = residual_positions(*a.fit, layout, cl, ts, true)[rejected_k];
            const auto picked = residual_under(*a.fit, layout, ts, false, at);
            CHECK((!picked || !a.fit->setup.obs[*picked].rejected));
        }
}

TEST_CASE("the Solve panel's priors are `wayward solve`'s") {
    SolveForm f;
    CHECK(distance_prior_text(solve_options(f)) == "free");
    f.distance = SolveForm::fixed;
    f.fixed_au = 41.5;
    CHECK(distance_prior_text(solve_options(f)) == "fixed:41.5");
    CHECK(solve_options(f).distance == DistancePrior::fixed);
    CHECK(solve_options(f).distance_au == 41.5);
    f.distance = SolveForm::gauss;
    f.gauss_au = 30;
    f.gauss_sigma_au = 4;
    CHECK(distance_prior_text(solve_options(f)) == "gauss:30,4");
    CHECK(solve_options(f).distance_sigma_au == 4.0);
    f.distance = SolveForm::spacing;
    f.spacing_fraction = 0.2;
    f.circular = true;
    f.coplanar = true;
    f.epoch_year = 1990;
    const SolveOptions o = solve_options(f);
    CHECK(o.distance == DistancePrior::spacing);
    CHECK(o.spacing_sigma_fraction == 0.2);
    CHECK(o.circular);
    CHECK(o.coplanar);
    CHECK(o.epoch_year == 1990.0);
    CHECK(solve_command(f, "D") == "wayward solve D --distance spacing:0.2 --circular --coplanar --epoch 1990");
    CHECK(solve_command(f, "D", 1990.0) == "wayward solve D --distance spacing:0.2 --circular --coplanar");  // the default epoch

    // Refused priors come back as the form's message (sim's wording) and start nothing.
    LoadOutcome loaded = open(quick_exercise(), false);
    REQUIRE(loaded.model);
    Analysis& a = *loaded.model->analysis;
    a.form.distance = SolveForm::fixed;
    a.form.fixed_au = -3;
    CHECK_FALSE(a.start_solve());
    CHECK(a.form_error.find("positive") != std::string::npos);
    CHECK_FALSE(a.solve_job.running());
}

TEST_CASE("the solver runs in a worker with progress, gives sim's solution, can be cancelled; minima tracks come from sim") {
    LoadOutcome loaded = open(quick_exercise());
    REQUIRE(loaded.model);
    ViewerModel& m = *loaded.model;
    ViewerControls c;
    Analysis& a = *m.analysis;
    REQUIRE(a.wait_idle(m, c));
    REQUIRE(a.fit);
    CHECK_FALSE(a.solution);  // no solution.toml in a fresh folder

    // Cancel: the run stops early, nothing replaces the (absent) solution.
    REQUIRE(a.start_solve());
    const auto t0 = std::chrono::steady_clock::now();
    while (a.solve_job.running() && a.solve_job.progress().second < 0.06) std::this_thread::sleep_for(std::chrono::milliseconds(5));
    a.solve_job.cancel();
    REQUIRE(a.wait_idle(m, c, 60));
    CHECK(std::chrono::steady_clock::now() - t0 < std::chrono::seconds(60));
    CHECK_FALSE(a.solution);
    CHECK(a.solve_note.find("cancelled") != std::string::npos);

    // A full run: progress reaches the stages of sim's solve, the result is solve()'s.
    REQUIRE(a.start_solve());
    double last = -1;
    std::string stage;
    while (a.solve_job.running()) {
        const auto [s, f] = a.solve_job.progress();
        if (f >= 0) last = f;
        if (!s.empty()) stage = s;
        std::this_thread::sleep_for(std::chrono::milliseconds(2));
    }
    CHECK(last > 0.5);
    REQUIRE(a.wait_idle(m, c));
    REQUIRE_MESSAGE(a.solution, a.form_error);
    CHECK(a.source == SolutionSource::run);
    const Solution direct = solve(a.exercise(), solve_options(a.form));
    REQUIRE(a.solution->minima.size() == direct.minima.size());
    for (std::size_t k = 0; k < direct.minima.size(); ++k) CHECK(a.solution->minima[k].chi2 == direct.minima[k].chi2);
    CHECK(a.solution->prediction.lon == direct.prediction.lon);
    CHECK(a.solution->prediction.lat == direct.prediction.lat);
    CHECK(a.solution->prediction.radius90_arcsec == direct.prediction.radius90_arcsec);

    // The best minimum's view is the solver's own prediction; its fine track agrees with the solver's track.
    REQUIRE(a.minimum_view);
    CHECK(a.minimum_view->exact);
    CHECK(a.minimum_view->prediction.lon == direct.prediction.lon);
    bool exact = false;
    CHECK(shown_prediction(m, c, &exact) == &a.solution->prediction);
    CHECK(exact);
    double worst = 0;
    std::size_t matched = 0;
    for (const TrackPoint& coarse : direct.prediction.track)
        for (const TrackPoint& fine : a.minimum_view->fine_track)
            if (std::abs(fine.year - coarse.year) < 1e-6) {
                worst = std::max(worst, separation(fine.lon, fine.lat, coarse.lon, coarse.lat) / arcsec);
                ++matched;
            }
    CHECK(matched >= 40);
    CHECK(worst < 1.0);  // arcsec: only the planets' small corrections differ

    // A non-best minimum: its track is sim's predict_position for its own polished state (planets included).
    if (direct.minima.size() >= 2) {
        c.selected_minimum = 1;
        REQUIRE(a.wait_idle(m, c));
        REQUIRE(a.minimum_view);
        CHECK(a.minimum_view->minimum == 1);
        CHECK_FALSE(a.minimum_view->exact);
        REQUIRE(direct.setup);
        const ModelState state = direct.fit.state(*direct.setup, direct.minima[1].parameters);
        const Prediction p = predict_position(*direct.setup, state, direct.prediction.epoch_year, 60.0, 0.25);
        CHECK(a.minimum_view->prediction.lon == p.lon);
        CHECK(a.minimum_view->prediction.lat == p.lat);
        CHECK(shown_prediction(m, c, &exact) == &a.minimum_view->prediction);
        CHECK_FALSE(exact);
        CHECK(separation(p.lon, p.lat, direct.prediction.lon, direct.prediction.lat) > 1e-6);
    } else {
        MESSAGE("the quick exercise has a single minimum: the non-best track check did not run");
    }

    // Saved, it reads back as `wayward solve` would have written it.
    std::string error;
    REQUIRE(a.save_solution(&error));
    const Solution back = load_solution(a.solution_path());
    CHECK(back.prediction.lon == doctest::Approx(direct.prediction.lon).epsilon(1e-12));
    CHECK(back.exercise_sha256 == a.exercise().brief.answer_key_sha256);
    fs::remove(a.solution_path());
}

TEST_CASE("a changed answer key is refused and reveals nothing; the intact key reveals sim's truth and sim's scores") {
    const std::string dir = make_exercise("scenarios/default.toml", "reveal");
    const std::string key_path = exercise_paths(dir).answer_key();
    const std::string key_text = wayward::testing::read(key_path);
    LoadOutcome loaded = open(dir, false);
    REQUIRE(loaded.model);
    ViewerModel& m = *loaded.model;
    ViewerControls c;
    Analysis& a = *m.analysis;
    const std::size_t n = m.body_count();

    // One byte changed (a digit in the file's last number): refused by the SHA-256 check.
    std::string changed = key_text;
    const std::size_t digit = changed.find_last_of("0123456789");
    changed[digit] = changed[digit] == '1' ? '2' : '1';
    wayward::testing::write(key_path, changed);
    CHECK_FALSE(a.request_reveal(m));
    CHECK(a.reveal_error.find("SHA-256") != std::string::npos);
    REQUIRE(a.wait_idle(m, c));
    CHECK_FALSE(m.revealed);
    CHECK(m.body_count() == n);
    CHECK_FALSE(m.hidden_shown());
    CHECK_FALSE(a.scores);

    // Restored: revealed, with the hidden body from the key.
    wayward::testing::write(key_path, key_text);
    c.marker = PredictionMarker{true, 100.0 * deg, 1.0 * deg, m.days_at_year(1960.0), m.field_radius()};
    REQUIRE(a.request_reveal(m));
    REQUIRE(a.wait_idle(m, c));
    REQUIRE(m.revealed);
    REQUIRE(m.body_count() == n + 1);
    const AnswerKey key = open_answer_key(m.exercise->brief, key_path);
    const BodyView& h = m.bodies.back();
    CHECK(h.role == Role::hidden);
    CHECK(h.name == key.hidden_name);
    CHECK(m.shows(h.index));
    CHECK(m.hidden_shown());

    // Scores: exactly sim's score_prediction for the same prediction.
    Prediction p;
    p.lon = 100.0 * deg;
    p.lat = 1.0 * deg;
    p.epoch_year = 1960.0;
    const Score direct = score_prediction(m.exercise->brief, key, p, 60.0);
    REQUIRE(a.scores);
    REQUIRE(a.scores->trainee);
    CHECK(a.scores->trainee->score.separation_arcmin == direct.separation_arcmin);
    CHECK(a.scores->trainee->score.hit == direct.hit);
    CHECK(a.scores->trainee->score.luck.size() == direct.luck.size());
    CHECK_FALSE(a.scores->solver);  // no solution in this folder
    // The revealed body on the sky at the epoch is where sim's score puts the truth.
    const SkyPosition at = m.sky(h.index, m.days_at_year(1960.0));
    CHECK(separation(at.lon, at.lat, direct.true_lon, direct.true_lat) < 1e-9);

    // Moving the marker rescores it.
    c.marker.lon = direct.true_lon;
    c.marker.lat = direct.true_lat + 0.5 * deg;
    REQUIRE(a.wait_idle(m, c));
    CHECK(a.scores->trainee->score.separation_arcmin == doctest::Approx(30.0).epsilon(1e-6));
    CHECK(a.scores->trainee->score.hit);
}

}  // TEST_SUITE
