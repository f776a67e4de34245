// Scheduling sim's fit, solve, reveal and score for the trainee. See analysis.hpp.
#include "viewer/analysis.hpp"

#include <charconv>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <limits>
#include <thread>

#include "sim/base/errors.hpp"
#include "sim/io/fileio.hpp"
#include "sim/base/units.hpp"

namespace wayward::viewer {

namespace {

// Shortest text that reads back as the same number (a command line must give the solver the same priors).
std::string number_text(double v) {
    char buf[32];
    const auto r = std::to_chars(buf, buf + sizeof buf, v);
    return std::string(buf, r.ptr);
}

// The luck curve's half-window: `wayward score`'s default (--window 60).
constexpr double luck_window_years = 60.0;

}  // namespace

SolveOptions solve_options(const SolveForm& f) {
    SolveOptions o;
    switch (f.distance) {
        case SolveForm::fixed: o.distance = DistancePrior::fixed; o.distance_au = f.fixed_au; break;
        case SolveForm::gauss: o.distance = DistancePrior::gaussian; o.distance_au = f.gauss_au; o.distance_sigma_au = f.gauss_sigma_au; break;
        case SolveForm::spacing: o.distance = DistancePrior::spacing; o.spacing_sigma_fraction = f.spacing_fraction; break;
        default: o.distance = DistancePrior::free; break;
    }
    o.circular = f.circular;
    o.coplanar = f.coplanar;
    o.eccentricity_prior_sigma = f.ecc_sigma;
    o.inclination_prior_rad = f.tilt_sigma_deg * deg;
    o.epoch_year = f.epoch_year;
    o.starts = f.starts;
    o.samples = f.samples;
    validate(o);
    return o;
}

std::string solve_command(const SolveForm& f, const std::string& dir, double default_epoch) {
    const SolveOptions defaults;
    SolveOptions o;
    try {
        o = solve_options(f);
    } catch (const InputError&) {
        return "wayward solve " + dir + " (the priors above are not valid yet)";
    }
    std::string cmd = "wayward solve " + dir;
    if (o.distance != DistancePrior::free) cmd += " --distance " + distance_prior_text(o);
    if (o.circular) cmd += " --circular";
    if (o.coplanar) cmd += " --coplanar";
    if (!o.circular && f.ecc_sigma != defaults.eccentricity_prior_sigma) cmd += " --ecc-sigma " + number_text(f.ecc_sigma);
    if (!o.coplanar && f.tilt_sigma_deg != 3.0) cmd += " --tilt-sigma " + number_text(f.tilt_sigma_deg);
    if (o.epoch_year && *o.epoch_year != default_epoch) cmd += " --epoch " + number_text(*o.epoch_year);
    if (o.starts != defaults.starts) cmd += " --starts " + std::to_string(o.starts);
    if (o.samples != defaults.samples) cmd += " --samples " + std::to_string(o.samples);
    return cmd;
}

Analysis::Analysis(std::shared_ptr<const Exercise> exercise) : exercise_(std::move(exercise)) {
    const Brief& b = exercise_->brief;
    form.epoch_year = b.search_epochs_year.empty() ? b.epoch0_year + b.span_years : b.search_epochs_year.front();
}

void Analysis::start_fit() {
    fit_error.clear();
    fit_stage = "starting";
    std::shared_ptr<const Exercise> ex = exercise_;
    fit_job.start([ex](JobControl& control) {
        control.report("setting up the model of the known planets", -1.0);
        KnownFit f = fit_known(*ex, ModelOptions{}, [&](const std::string& stage) { control.report(stage, -1.0); });
        return std::shared_ptr<const KnownFit>(std::make_shared<KnownFit>(std::move(f)));
    });
}

std::string Analysis::solution_path() const { return exercise_->dir + "/solution.toml"; }

void Analysis::take_solution(Solution s, SolutionSource from, ViewerControls* controls) {
    solution = std::make_shared<const Solution>(std::move(s));
    source = from;
    ++solution_id;
    minimum_view.reset();
    minimum_error.clear();
    if (controls) controls->selected_minimum = 0;
}

void Analysis::load_solution_file() {
    const std::string path = solution_path();
    std::error_code ec;
    if (!std::filesystem::exists(path, ec)) return;
    try {
        Solution s = load_solution(path);
        if (s.exercise_sha256 != exercise_->brief.identity_sha256()) {
            solution_file_problem = path + " belongs to another exercise (its exercise_sha256 differs from the brief's)";
            return;
        }
        take_solution(std::move(s), SolutionSource::file, nullptr);
        solution_saved = true;
    } catch (const std::exception& e) {
        solution_file_problem = e.what();
    }
}

bool Analysis::save_solution(std::string* error) {
    if (!solution) return false;
    try {
        write_file_atomic(solution_path(), solution_toml(*solution));
        solution_saved = true;
        return true;
    } catch (const std::exception& e) {
        if (error) *error = e.what();
        return false;
    }
}

bool Analysis::start_solve() {
    form_error.clear();
    solve_note.clear();
    SolveOptions options;
    try {
        options = solve_options(form);
    } catch (const std::exception& e) {
        form_error = e.what();
        return false;
    }
    std::shared_ptr<const Exercise> ex = exercise_;
    solve_job.start([ex, options](JobControl& control) {
        SolveProgress progress;
        progress.report = [&](const std::string& stage, double fraction) { control.report(stage, fraction); };
        progress.cancel = &control.cancel_flag();
        return solve(*ex, options, progress);
    });
    return true;
}

bool Analysis::minimum_has_orbit(std::size_t minimum) const {
    if (!solution || minimum >= solution->minima.size()) return false;
    return minimum == 0 || source == SolutionSource::run;
}

bool Analysis::request_reveal(const ViewerModel& model) {
    reveal_error.clear();
    if (model.revealed || reveal_job.running()) return true;
    try {
        opened_key_ = open_answer_key(exercise_->brief, find_answer_key(exercise_->dir));
    } catch (const std::exception& e) {
        reveal_error = e.what();
        opened_key_.reset();
        return false;
    }
    const Brief brief = exercise_->brief;
    const AnswerKey key = *opened_key_;
    const std::vector<double> times = model.sample_times;
    reveal_job.start([brief, key, times](JobControl& control) {
        control.report("integrating the true system from the answer key", -1.0);
        return make_revealed_truth(key, std::make_shared<const TruthEphemeris>(integrate_truth(brief, key)), times);
    });
    return true;
}

Analysis::ScoreInput Analysis::score_input(const ViewerControls& c) const {
    ScoreInput in;
    in.marker = c.marker.placed;
    if (in.marker) {
        in.lon = c.marker.lon;
        in.lat = c.marker.lat;
        in.epoch_days = c.marker.epoch_days;
    }
    in.solution_id = solution ? solution_id : 0;
    return in;
}

bool Analysis::minimum_due(const ViewerControls& c) const {
    if (!fit || !solution) return false;
    const auto k = static_cast<std::size_t>(std::max(0, c.selected_minimum));
    if (!minimum_has_orbit(k)) return false;
    if (minimum_view && minimum_view->solution_id == solution_id && minimum_view->minimum == k) return false;
    if (minimum_running_ && *minimum_running_ == std::make_pair(solution_id, k)) return false;
    if (minimum_failed_ && *minimum_failed_ == std::make_pair(solution_id, k)) return false;
    return true;
}

bool Analysis::score_due(const ViewerModel& m, const ViewerControls& c) const {
    if (!m.revealed || !opened_key_) return false;
    const ScoreInput in = score_input(c);
    if (!in.marker && !solution) return false;
    return !(scored_ && *scored_ == in) && !(scoring_ && *scoring_ == in);
}

void Analysis::take_finished(ViewerModel& model, ViewerControls& controls) {
    if (fit_job.running()) {
        const auto [stage, fraction] = fit_job.progress();
        (void)fraction;
        if (!stage.empty()) fit_stage = stage;
    } else if (fit_job.ended()) {
        const std::string why = fit_job.error();
        if (auto v = fit_job.take()) fit = *v;
        else fit_error = why.empty() ? "the fit stopped" : why;
    }

    if (solve_job.ended()) {
        const bool was_cancelled = solve_job.state() == JobState::cancelled;
        const std::string why = solve_job.error();
        if (auto v = solve_job.take(); v && !was_cancelled) {
            take_solution(std::move(*v), SolutionSource::run, &controls);
            solution_saved = false;
        } else if (was_cancelled) {
            solve_note = "the run was cancelled; the previous solution (if any) is kept";
        } else {
            form_error = why.empty() ? "the solver stopped" : why;
        }
    }

    if (reveal_job.ended()) {
        const std::string why = reveal_job.error();
        if (auto v = reveal_job.take()) apply_reveal(model, std::move(*v));
        else reveal_error = "the answer key's system could not be integrated: " + why;
    }
}

void Analysis::poll_scores(ViewerModel& model, ViewerControls& controls) {
    if (score_job.ended()) {
        const std::string why = score_job.error();
        if (auto v = score_job.take()) {
            scores = std::move(*v);
            scored_ = scoring_;
        } else {
            ScoreSet failed;
            failed.trainee_error = failed.solver_error = why;
            scores = failed;
            scored_ = scoring_;
        }
        scoring_.reset();
    }
    if (!score_job.running() && score_due(model, controls)) {
        const ScoreInput in = score_input(controls);
        scoring_ = in;
        const Brief brief = exercise_->brief;
        std::shared_ptr<const TruthEphemeris> truth = model.revealed->truth;  // the reveal's integration, not another
        std::shared_ptr<const Solution> s = solution;
        std::optional<Prediction> own;
        if (in.marker) {
            Prediction p;
            p.lon = wrap_two_pi(in.lon);
            p.lat = in.lat;
            p.epoch_year = model.year(in.epoch_days);
            own = p;
        }
        score_job.start([brief, truth, s, own](JobControl& control) {
            ScoreSet set;
            if (own) {
                control.report("scoring your prediction", -1.0);
                try {
                    set.trainee = ScoredPrediction{"your prediction", *own, score_prediction(brief, *truth, *own, luck_window_years)};
                } catch (const std::exception& e) {
                    set.trainee_error = e.what();
                }
            }
            if (s) {
                control.report("scoring the solver's prediction", -1.0);
                try {
                    set.solver = ScoredPrediction{"the solver's prediction", s->prediction,
                                                  score_prediction(brief, *truth, s->prediction, luck_window_years)};
                } catch (const std::exception& e) {
                    set.solver_error = e.what();
                }
            }
            return set;
        });
    }
}

void Analysis::poll(ViewerModel& model, ViewerControls& controls) {
    take_finished(model, controls);

    // The selected minimum's track.
    if (minimum_job.ended()) {
        const std::string why = minimum_job.error();
        auto v = minimum_job.take();
        if (v && v->solution_id == solution_id) minimum_view = std::move(*v);
        else if (!v && minimum_running_ && minimum_running_->first == solution_id) {
            minimum_error = why;
            minimum_failed_ = minimum_running_;
        }
        minimum_running_.reset();
    }
    if (solution && (controls.selected_minimum < 0 || static_cast<std::size_t>(controls.selected_minimum) >= solution->minima.size()))
        controls.selected_minimum = 0;
    if (!minimum_job.running() && minimum_due(controls)) {
        const auto k = static_cast<std::size_t>(controls.selected_minimum);
        minimum_error.clear();
        minimum_running_ = std::make_pair(solution_id, k);
        std::shared_ptr<const KnownFit> f = fit;
        std::shared_ptr<const Solution> s = solution;
        const std::uint64_t id = solution_id;
        const std::vector<double> times = model.sample_times;
        const double span_end = model.t_end();
        minimum_job.start([f, s, id, k, times, span_end](JobControl& control) {
            control.report("predicting the track of minimum " + std::to_string(k + 1), -1.0);
            MinimumView v;
            v.solution_id = id;
            v.minimum = k;
            v.exact = k == 0;
            // A solve run here keeps each minimum's whole parameter vector (its own corrections to the planets);
            // a solution read from a file keeps only the hidden orbits, drawn with the known fit's planets.
            const bool whole = s->setup && s->minima[k].parameters.size() > 0;
            const ModelSetup& setup = whole ? *s->setup : f->setup;
            ModelState state = f->state;
            if (whole) {
                state = s->fit.state(setup, s->minima[k].parameters);
            } else {
                state.hidden = k == 0 ? s->best : s->minima[k].orbit;
            }
            const Prediction& best = s->prediction;
            if (k == 0) {
                v.prediction = best;
            } else {
                const double track_years = best.track.empty() ? 60.0 : std::max(best.epoch_year - best.track.front().year,
                                                                               best.track.back().year - best.epoch_year);
                const double step = best.track.size() >= 2 ? best.track[1].year - best.track[0].year : 0.25;
                v.prediction = predict_position(setup, state, best.epoch_year, track_years, step);
            }
            v.fine_track = predict_position(setup, state, best.epoch_year, 10.0, 0.01).track;
            const ModelRun run = run_model(setup, state, span_end, 0.0);
            v.xyz.assign(times.size() * 3, std::numeric_limits<float>::quiet_NaN());
            if (run.ok() && run.hidden_index)
                for (std::size_t i = 0; i < times.size(); ++i) {
                    if (!run.outer.covers(times[i])) continue;
                    const Vec3 p = run.outer.position(*run.hidden_index, times[i]);
                    for (int c = 0; c < 3; ++c) v.xyz[i * 3 + static_cast<std::size_t>(c)] = static_cast<float>(p[c]);
                }
            return v;
        });
    }

    // Scores, after the reveal.
    poll_scores(model, controls);
}

bool Analysis::busy(const ViewerModel& m, const ViewerControls& c) const {
    return fit_job.running() || fit_job.ended() || solve_job.running() || solve_job.ended() || reveal_job.running() ||
           reveal_job.ended() || minimum_job.running() || minimum_job.ended() || score_job.running() || score_job.ended() ||
           minimum_due(c) || score_due(m, c);
}

bool Analysis::wait_idle(ViewerModel& m, ViewerControls& c, double timeout_seconds) {
    const auto until = std::chrono::steady_clock::now() + std::chrono::duration<double>(timeout_seconds);
    for (;;) {
        poll(m, c);
        if (!busy(m, c)) return true;
        if (std::chrono::steady_clock::now() > until) return false;
        std::this_thread::sleep_for(std::chrono::milliseconds(5));
    }
}

void attach_analysis(ViewerModel& m, bool start_fit) {
    if (m.mode != ViewerMode::trainee || !m.exercise || m.analysis) return;
    m.analysis = std::make_shared<Analysis>(m.exercise);
    m.analysis->load_solution_file();
    if (start_fit) m.analysis->start_fit();
}

}  // namespace wayward::viewer
