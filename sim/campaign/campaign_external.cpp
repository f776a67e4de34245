// A team's own solver inside a campaign; see campaign_detail.hpp.
#include <algorithm>
#include <chrono>
#include <cmath>
#include <csignal>
#include <cstring>
#include <filesystem>
#include <stdexcept>
#include <thread>

#include <fcntl.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"
#include "sim/campaign/campaign_detail.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/io/fileio.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/score/stated_prediction.hpp"

extern char** environ;

namespace wayward {

namespace fs = std::filesystem;

namespace {

// The case's exercise as the team receives it, with the campaign's epochs as the brief's search epochs (the
// span stretched to hold them).
void write_case_exercise(const Exercise& ex, const std::vector<double>& epochs_year, const std::string& dir) {
    std::error_code ec;
    fs::create_directories(dir, ec);
    if (ec) throw std::runtime_error("cannot create " + dir + ": " + ec.message());
    Brief b = ex.brief;
    b.search_epochs_year = epochs_year;
    for (double y : epochs_year) b.span_years = std::max(b.span_years, y - b.epoch0_year + 1.0 / julian_year_days);
    const ExercisePaths p = exercise_paths(dir);
    for (const std::string& f : {p.observations(), p.observer_track(), p.brief(), dir + "/prediction.toml", dir + "/solver.log"})
        refuse_link_at(f, "external");
    fs::remove(dir + "/prediction.toml", ec);  // never a prediction left by an earlier run
    write_file_atomic(p.observations(), format_observations_csv(ex.observations, b.epoch0_year));
    write_file_atomic(p.observer_track(), format_observer_csv(ex.observer_track));
    write_file_atomic(p.brief(), format_brief(b));
}

// Runs argv in `cwd` with output to `log`; the exit status, or throws on a timeout, a cancel or a spawn failure.
int run_program(const std::vector<std::string>& command, const std::string& cwd, const std::string& log, double timeout_s,
                const std::atomic<bool>* cancel) {
    std::vector<char*> argv;
    for (const std::string& a : command) argv.push_back(const_cast<char*>(a.c_str()));
    argv.push_back(nullptr);
    posix_spawn_file_actions_t actions;
    posix_spawn_file_actions_init(&actions);
    posix_spawn_file_actions_addopen(&actions, STDIN_FILENO, "/dev/null", O_RDONLY, 0);
    posix_spawn_file_actions_addopen(&actions, STDOUT_FILENO, log.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_NOFOLLOW, 0644);
    posix_spawn_file_actions_adddup2(&actions, STDOUT_FILENO, STDERR_FILENO);
    posix_spawn_file_actions_addchdir_np(&actions, cwd.c_str());
    // A process group of its own, so a timeout stops the program and everything it started.
    posix_spawnattr_t attr;
    posix_spawnattr_init(&attr);
    posix_spawnattr_setflags(&attr, POSIX_SPAWN_SETPGROUP);
    posix_spawnattr_setpgroup(&attr, 0);
    pid_t pid = 0;
    const int err = posix_spawnp(&pid, argv[0], &actions, &attr, argv.data(), environ);
    posix_spawn_file_actions_destroy(&actions);
    posix_spawnattr_destroy(&attr);
    if (err != 0) throw std::runtime_error("cannot start \"" + command.front() + "\": " + std::strerror(err));
    const auto start = std::chrono::steady_clock::now();
    for (;;) {
        int status = 0;
        const pid_t done = ::waitpid(pid, &status, WNOHANG);
        if (done == pid) {
            if (WIFEXITED(status)) return WEXITSTATUS(status);
            throw std::runtime_error("\"" + command.front() + "\" was stopped by signal " + std::to_string(WTERMSIG(status)));
        }
        const double waited = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
        const bool stop = cancel && cancel->load();
        if (waited > timeout_s || stop) {
            ::kill(-pid, SIGKILL);
            ::waitpid(pid, &status, 0);
            throw std::runtime_error(stop ? "cancelled" : "\"" + command.front() + "\" took longer than external_timeout_s (" +
                                                              std::to_string(static_cast<long>(timeout_s)) + " s) and was stopped");
        }
        std::this_thread::sleep_for(std::chrono::milliseconds(20));
    }
}

}  // namespace

std::vector<Prediction> run_external_solver(const CampaignSettings& st, const Exercise& ex, const std::vector<double>& epochs_year,
                                            const std::string& case_dir, const std::atomic<bool>* cancel) {
    const std::string dir = fs::absolute(case_dir).string();
    write_case_exercise(ex, epochs_year, dir);
    std::vector<std::string> command = st.external;
    command.push_back(dir);
    const int status = run_program(command, st.external_dir, dir + "/solver.log", st.external_timeout_s, cancel);
    if (status != 0) throw std::runtime_error("the external solver exited with status " + std::to_string(status) + " (its output: " + dir + "/solver.log)");
    const std::string file = dir + "/prediction.toml";
    if (!fs::exists(file)) throw std::runtime_error("the external solver wrote no " + file);
    std::vector<Prediction> stated;
    try {
        stated = parse_stated_predictions(detail::read_text_file(file), file, &ex.brief);  // a sky_map beside it is read too
    } catch (const InputError& e) {
        throw std::runtime_error(e.what());
    }
    std::vector<Prediction> out;
    for (double y : epochs_year) {
        const auto it = std::find_if(stated.begin(), stated.end(), [y](const Prediction& p) { return std::abs(p.epoch_year - y) < 1e-3; });
        if (it == stated.end()) throw std::runtime_error(file + " has no prediction for the epoch " + std::to_string(y));
        out.push_back(*it);
    }
    return out;
}

}  // namespace wayward
