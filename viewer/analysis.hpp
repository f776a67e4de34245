// The trainee's work on an exercise, run by sim in worker threads and polled by the frame loop: the
// known-bodies fit (sim fit_known, started at load), the solver (sim solve with the priors of `wayward solve`,
// cancellable), the selected local minimum's predicted track (sim predict_position), the reveal (sim
// open_answer_key, which checks the key's SHA-256 against the brief, then the key's system integrated) and the
// scores of the trainee's and the solver's predictions (sim score_prediction). The viewer computes none of
// these numbers itself; this file only schedules sim's functions and keeps their results.
#pragma once

#include <cmath>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "sim/fit/known_fit.hpp"
#include "sim/score/score.hpp"
#include "sim/solve/solve.hpp"
#include "viewer/controls.hpp"
#include "viewer/jobs.hpp"
#include "viewer/model.hpp"

namespace wayward::viewer {

// The solver's priors as the Solve panel edits them; solve_options() turns them into the solver's options.
struct SolveForm {
    enum Distance { free = 0, fixed = 1, gauss = 2, spacing = 3 };
    int distance = free;
    double fixed_au = 30.0;
    double gauss_au = 30.0, gauss_sigma_au = 5.0;
    double spacing_fraction = 0.1;
    bool circular = false;
    bool coplanar = false;
    double ecc_sigma = 0.1;        // prior sigma on e cos(varpi), e sin(varpi)
    double tilt_sigma_deg = 3.0;   // prior sigma on the tilt components
    double epoch_year = 0.0;       // the prediction's epoch (the brief's search epoch to start)
    int starts = 4;
    int samples = 300;
};
// The solver's options for these priors (sim's validation: InputError naming the library field).
SolveOptions solve_options(const SolveForm& form);
// The `wayward solve` command line for these priors (shown in the panel); --epoch only when it is not
// `default_epoch` (the brief's search epoch, which `wayward solve` takes by default).
std::string solve_command(const SolveForm& form, const std::string& dir, double default_epoch = NAN);

enum class SolutionSource { none, file, run };

// The selected local minimum's prediction and orbit, for drawing.
struct MinimumView {
    std::uint64_t solution_id = 0;
    std::size_t minimum = 0;      // index into Solution::minima
    bool exact = false;           // true: the solver's own prediction (the best minimum)
    Prediction prediction;        // position at the epoch and track (the solver's own for the best minimum)
    // For drawing: the track 10 years either side of the epoch at 0.01-year steps (sim's predict_position with
    // the planets at their known-fit states), fine enough to show the yearly loops the 0.25-year track skips.
    std::vector<TrackPoint> fine_track;
    std::vector<float> xyz;       // the hidden body's model positions at the model's sample times (au)
};

struct ScoredPrediction {
    std::string who;              // "your prediction" / "the solver's prediction"
    Prediction prediction;
    Score score;
};

struct ScoreSet {
    std::optional<ScoredPrediction> trainee, solver;
    std::string trainee_error, solver_error;
};

class Analysis {
public:
    explicit Analysis(std::shared_ptr<const Exercise> exercise);
    Analysis(const Analysis&) = delete;
    Analysis& operator=(const Analysis&) = delete;

    const Exercise& exercise() const { return *exercise_; }

    // ---- the known-bodies fit ----
    void start_fit();
    Job<std::shared_ptr<const KnownFit>> fit_job;
    std::shared_ptr<const KnownFit> fit;
    std::string fit_error;
    std::string fit_stage;        // the fit's last report

    // ---- the solution ----
    SolveForm form;
    std::string form_error;       // the priors were refused, or the run failed
    std::string solve_note;       // "cancelled" and the like
    Job<Solution> solve_job;
    std::shared_ptr<const Solution> solution;
    SolutionSource source = SolutionSource::none;
    std::uint64_t solution_id = 0;      // grows with every new solution
    std::string solution_file_problem;  // DIR/solution.toml exists but could not be used
    bool solution_saved = false;
    // Starts the solver with the form's priors (sim's solve_options checks them; false and form_error if not).
    bool start_solve();
    // Loads DIR/solution.toml if it exists and belongs to this exercise.
    void load_solution_file();
    std::string solution_path() const;
    bool save_solution(std::string* error);
    // Whether a minimum's orbit is complete enough to predict a track (the best always; others only from a
    // run here: solution.toml keeps a, mean longitude, mass, e and chi2 of the others).
    bool minimum_has_orbit(std::size_t minimum) const;

    // ---- the selected minimum ----
    Job<MinimumView> minimum_job;
    std::optional<MinimumView> minimum_view;
    std::string minimum_error;

    // ---- the reveal and the scores ----
    std::string reveal_error;     // the key was refused (changed, missing) or its system could not be integrated
    Job<RevealedTruth> reveal_job;
    // Opens the answer key (sim checks its SHA-256 against the brief) and starts integrating its system.
    // False, with reveal_error set and nothing revealed, if the key is refused.
    bool request_reveal(const ViewerModel& model);
    Job<ScoreSet> score_job;
    std::optional<ScoreSet> scores;

    // Takes finished results (applying the reveal to the model) and starts the work that is due: the
    // selected minimum's track, the scores after the reveal when a prediction changed.
    void poll(ViewerModel& model, ViewerControls& controls);
    // A job is running or due to start.
    bool busy(const ViewerModel& model, const ViewerControls& controls) const;
    // Polls until nothing is running or due (tests and screenshots). False on timeout.
    bool wait_idle(ViewerModel& model, ViewerControls& controls, double timeout_seconds = 600.0);

private:
    std::shared_ptr<const Exercise> exercise_;
    std::optional<AnswerKey> opened_key_;
    struct ScoreInput {
        bool marker = false;
        double lon = 0, lat = 0, epoch_days = 0;
        std::uint64_t solution_id = 0;
        bool operator==(const ScoreInput&) const = default;
    };
    std::optional<ScoreInput> scored_, scoring_;
    std::optional<std::pair<std::uint64_t, std::size_t>> minimum_running_, minimum_failed_;
    ScoreInput score_input(const ViewerControls& c) const;
    bool minimum_due(const ViewerControls& c) const;
    bool score_due(const ViewerModel& m, const ViewerControls& c) const;
    void take_solution(Solution s, SolutionSource from, ViewerControls* controls);
    // Steps of poll: take the fit, solve and reveal jobs that ended; take a finished score and start the due one.
    void take_finished(ViewerModel& model, ViewerControls& controls);
    void poll_scores(ViewerModel& model, ViewerControls& controls);
};

// Gives a trainee model its Analysis (the app and tests call this after load_model; author models get none):
// reads DIR/solution.toml if it belongs to the exercise and, if `start_fit`, starts the known-bodies fit.
void attach_analysis(ViewerModel& model, bool start_fit = true);

}  // namespace wayward::viewer
