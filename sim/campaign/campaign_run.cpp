// The campaign runner: systems generated once, units solved on all cores, rows appended as they finish, resumable
// after any interruption; and the process memory cap. See campaign.hpp.
#include "sim/campaign/campaign_detail.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <functional>
#include <future>
#include <map>
#include <memory>
#include <mutex>
#include <set>
#include <sstream>

#include <boost/random/uniform_int_distribution.hpp>
#include <fcntl.h>
#include <sys/file.h>
#include <sys/resource.h>
#include <unistd.h>

#include <toml++/toml.h>

#include "sim/base/errors.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/io/fileio.hpp"
#include "sim/fit/known_fit.hpp"
#include "sim/truth/generate.hpp"
#include "sim/io/hash.hpp"
#include "sim/truth/observe.hpp"
#include "sim/base/parallel.hpp"
#include "sim/base/progress.hpp"
#include "sim/base/random.hpp"
#include "sim/night/rehearsal.hpp"
#include "sim/score/score.hpp"
#include "sim/score/truth_ephemeris.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/base/units.hpp"


namespace wayward {

namespace fs = std::filesystem;

// ------------------------------------------------------------------------------------------------ the runner

namespace {

struct SystemData {
    std::uint64_t seed = 0;
    std::optional<ExerciseInMemory> ex;
    std::string error;
    double true_a_au = NAN, true_mass = NAN;
};

std::shared_ptr<const SystemData> make_system_data(const CampaignSpec& spec, std::size_t scenario, std::size_t seed_index) {
    auto d = std::make_shared<SystemData>();
    const Scenario& sc = spec.scenarios[scenario].scenario;
    d->seed = campaign_system_seed(spec, scenario, seed_index);
    try {
        // The calls `wayward new` makes, in memory.
        IntegrationResult run;
        const Truth truth = generate(sc, d->seed, &run);
        const ObservationSet obs = observe(sc, truth, run.ephemeris, d->seed);
        const Brief brief = make_brief(sc, truth, d->seed);
        d->ex = exercise_in_memory(sc, truth, obs, brief, run.ephemeris);
        for (const DrawnBody& body : truth.bodies)
            if (body.role == Role::hidden) {
                d->true_a_au = body.elements.semi_major_axis;
                d->true_mass = body.mass;
            }
    } catch (const std::exception& e) {
        d->error = std::string("could not make the exercise: ") + e.what();
    }
    return d;
}

// Systems shared by the units that need them: made once by the first unit that asks, dropped after the last
// unit of this run that needs it has finished, so memory stays flat in the number of cases.
class SystemCache {
public:
    SystemCache(const CampaignSpec& spec, std::map<std::size_t, int> uses) : spec_(spec), uses_(std::move(uses)) {}
    std::shared_ptr<const SystemData> get(std::size_t system) {
        std::shared_ptr<std::promise<std::shared_ptr<const SystemData>>> maker;
        std::shared_future<std::shared_ptr<const SystemData>> future;
        {
            std::lock_guard<std::mutex> lock(mutex_);
            auto it = made_.find(system);
            if (it == made_.end()) {
                maker = std::make_shared<std::promise<std::shared_ptr<const SystemData>>>();
                future = maker->get_future().share();
                made_.emplace(system, future);
            } else {
                future = it->second;
            }
        }
        if (maker) maker->set_value(make_system_data(spec_, system / spec_.seeds, system % spec_.seeds));
        return future.get();
    }
    void release(std::size_t system) {
        std::lock_guard<std::mutex> lock(mutex_);
        if (--uses_[system] <= 0) made_.erase(system);
    }

private:
    const CampaignSpec& spec_;
    std::mutex mutex_;
    std::map<std::size_t, int> uses_;
    std::map<std::size_t, std::shared_future<std::shared_ptr<const SystemData>>> made_;
};

// The search rehearsal of one case: the case's prediction as the team's solution, the scenario's telescope,
// `nights` nights from the epoch. Its streams come from (system seed, epoch index) alone, so the sky, the chart
// and the weather of a system and epoch are the same under every settings, thread count and shard. A rehearsal
// that cannot run is a search miss with the reason in the note.
void search_case(const CampaignSpec& spec, const Exercise& ex, const TruthEphemeris& truth, double hidden_h, const Prediction& p,
                 std::uint64_t system_seed, std::size_t epoch, CaseRow& r) {
    r.searched = true;
    r.search_found = false;
    r.search_hours = 0.0;
    if (!ex.brief.telescope) {
        r.note = "search: the brief has no telescope";
        return;
    }
    Solution team;
    team.exercise_sha256 = ex.brief.identity_sha256();
    team.prediction = p;
    RehearsalOptions opt;
    opt.nights = spec.search.nights;
    opt.start_year = p.epoch_year;
    opt.strategy = strategy_by_name(spec.search.strategy);
    opt.seed = derive_seed(system_seed, "campaign-search", epoch);
    try {
        const RehearsalResult res = run_rehearsal(ex.brief, team, *ex.brief.telescope, truth, hidden_h, opt);
        r.search_found = res.found;
        r.search_night = res.found ? res.found_night : 0;
        r.search_hours = res.hours_used;
    } catch (const InputError& e) {
        r.note = "search: " + e.message();
    }
}

// Solves one unit and scores it at every epoch. Returns no rows if cancelled.
std::vector<CaseRow> run_unit(const CampaignSpec& spec, const SystemData& data, std::size_t unit, const std::string& out_dir,
                              const std::atomic<bool>* cancel) {
    const std::size_t system = unit / spec.settings.size();
    const std::size_t scenario = system / spec.seeds;
    const CampaignScenario& cs = spec.scenarios[scenario];
    const CampaignSettings& st = spec.settings[unit % spec.settings.size()];
    const auto start = std::chrono::steady_clock::now();
    std::vector<CaseRow> rows(spec.epochs.size());
    for (std::size_t e = 0; e < rows.size(); ++e) {
        CaseRow& r = rows[e];
        r.index = unit * spec.epochs.size() + e;
        r.scenario = cs.name;
        r.seed = data.seed;
        r.settings = st.name;
        r.epoch_year = cs.epochs_year[e];
        r.epoch_offset_years = cs.epochs_year[e] - cs.search_epoch_year;
        r.field_radius_arcmin = cs.scenario.plan.field_radius_deg * 60.0;
        r.true_a_au = data.true_a_au;
        r.true_mass = data.true_mass;
    }
    auto fail_all = [&](const std::string& why) {
        for (CaseRow& r : rows) {
            r.ok = false;
            r.hit = false;
            r.separation_arcmin = r.radius90_arcmin = r.luck_fraction = r.closest_year = r.closest_arcmin = NAN;
            r.data_centre_year = r.fitted_a_au = r.fitted_mass = NAN;
            r.mahalanobis.reset();
            r.note = why;
        }
    };
    auto cancelled = [&] { return cancel && cancel->load(); };
    if (!data.ex) {
        fail_all(data.error);
    } else if (!st.external.empty()) {
        // A team's own solver: its stated prediction at each epoch, scored like Wayward's.
        const Exercise& ex = data.ex->exercise;
        try {
            const std::vector<Prediction> preds =
                run_external_solver(st, ex, cs.epochs_year, out_dir + "/external/" + st.name + "-" + std::to_string(unit), cancel);
            if (cancelled()) return {};
            const TruthEphemeris truth = integrate_truth(ex.brief, data.ex->key);
            for (std::size_t e = 0; e < rows.size(); ++e) {
                const Score s = score_prediction(ex.brief, truth, preds[e], spec.window_years);
                CaseRow& r = rows[e];
                r.separation_arcmin = s.separation_arcmin;
                r.detected = true;
                r.hit = s.hit;
                r.mahalanobis = s.mahalanobis;
                r.map_rank = s.map_truth_rank.value_or(NAN);  // where the program stated its region as samples or a sky map
                r.radius90_arcmin = NAN;
                r.luck_fraction = s.luck_fraction_inside;
                r.closest_year = s.closest_year;
                r.closest_arcmin = s.closest_arcmin;
                r.data_centre_year = r.fitted_a_au = r.fitted_mass = NAN;
            }
        } catch (const std::exception& e) {
            if (cancelled()) return {};
            fail_all(std::string("external solver: ") + e.what());
        }
    } else {
        const Exercise& ex = data.ex->exercise;
        SolveOptions o = st.options;
        o.threads = 1;
        o.seed = derive_seed(data.seed, "campaign-samples:" + st.name);
        o.epoch_year = cs.epochs_year.front();
        SolveOptions fit = o;
        fit.samples = 0;  // the samples are drawn once, for every epoch, by the predictor below
        SolveProgress sp;
        sp.cancel = cancel;
        try {
            const Solution sol = solve(ex, fit, sp);
            if (cancelled()) return {};
            PredictHooks hooks;
            hooks.cancel = cancel;
            const std::vector<Prediction> preds = predict(*sol.setup, sol.fit, cs.epochs_year, prediction_options(o), hooks);
            const double centre = decimal_year(ex.brief.epoch0_year, sol.fit.layout.t_ref);
            const TruthEphemeris truth = integrate_truth(ex.brief, data.ex->key);  // once for every epoch
            for (std::size_t e = 0; e < rows.size(); ++e) {
                if (cancelled()) return {};
                const Score s = score_prediction(ex.brief, truth, preds[e], spec.window_years);
                CaseRow& r = rows[e];
                r.separation_arcmin = s.separation_arcmin;
                // A record that does not demand a body gets no pointing (as `wayward solve` writes none): a miss,
                // counted apart; the separation stays as what the best solution would have given.
                r.detected = sol.detection.detected();
                r.hit = r.detected && s.hit;
                r.mahalanobis = s.mahalanobis;
                r.radius90_arcmin = preds[e].samples_used > 0 ? preds[e].radius90_arcsec / 60.0 : NAN;
                r.map_rank = s.map_truth_rank.value_or(NAN);
                r.luck_fraction = s.luck_fraction_inside;
                r.closest_year = s.closest_year;
                r.closest_arcmin = s.closest_arcmin;
                r.data_centre_year = centre;
                r.fitted_a_au = sol.best.semi_major_axis;
                r.fitted_mass = sol.best.mass;
                if (spec.search.on && r.detected) search_case(spec, ex, truth, hidden_absolute_magnitude(data.ex->key), preds[e], data.seed, e, r);
            }
        } catch (const std::bad_alloc&) {
            if (cancelled()) return {};
            fail_all("the solve ran out of memory (a model run that went astray; see --max-memory)");
        } catch (const std::exception& e) {
            if (cancelled()) return {};
            fail_all(std::string("the solve failed: ") + e.what());
        }
    }
    const double seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    for (CaseRow& r : rows) r.unit_seconds = seconds;
    return rows;
}
}  // namespace

namespace {

// The folder holds this campaign's shard, or nothing yet (then its manifest is written).
void claim_folder(const CampaignSpec& spec, const CampaignRun& run, const CampaignManifest& want) {
    const std::string& dir = run.out_dir;
    std::error_code ec;
    const std::string csv = cases_path(dir);
    if (fs::exists(manifest_path(dir), ec)) {
        const CampaignManifest have = load_campaign_manifest(dir);
        if (have.id != spec.id)
            throw InputError(manifest_path(dir), 0, "campaign.id",
                             "this folder holds another campaign (\"" + have.name + "\", id " + short_id(have.id) + "), not \"" + spec.name +
                                 "\" (id " + short_id(spec.id) + "); a changed spec or scenario file is another campaign: use a new --out folder");
        if (have.shard.index != run.shard.index || have.shard.count != run.shard.count)
            throw InputError(manifest_path(dir), 0, "campaign.shard",
                             "this folder holds shard " + have.shard.text() + " of the campaign, not shard " + run.shard.text());
    } else {
        if (fs::exists(csv, ec))
            throw InputError(csv, 0, "--out", "the folder has a cases.csv but no manifest.toml, so its campaign is unknown; use a new --out folder");
        write_file_atomic(manifest_path(dir), manifest_text(want));
    }
}

// Cuts the table back to its whole lines, through a descriptor that does not follow a link planted at its name.
void cut_torn_row(const std::string& csv, std::size_t end) {
    const int fd = ::open(csv.c_str(), O_WRONLY | O_CLOEXEC | O_NOFOLLOW);
    const bool ok = fd >= 0 && ::ftruncate(fd, static_cast<off_t>(end)) == 0;
    const int err = errno;
    if (fd >= 0) ::close(fd);
    if (!ok) throw std::runtime_error("cannot repair " + csv + ": " + std::strerror(err));
}

// Which cases cases.csv holds already (a torn last line, from a run killed mid-write, is cut off).
std::vector<char> finished_cases(const CampaignSpec& spec, const CampaignRun& run, CampaignOutcome& outcome, std::ostream& progress_out) {
    const std::string csv = cases_path(run.out_dir);
    std::vector<char> done(spec.cases(), 0);
    std::error_code ec;
    if (fs::exists(csv, ec)) {
        std::size_t end = 0;
        bool torn = false;
        const std::vector<RawRow> rows = checked_rows(spec, run.shard, csv, &end, &torn);
        if (torn) {
            cut_torn_row(csv, end);
            outcome.repaired = true;
            progress_out << "Cut off a torn last row of " << csv << " (a run was killed while writing it); that case runs again.\n";
        }
        for (const RawRow& r : rows) done[r.row.index] = 1;
    }
    if (!fs::exists(csv, ec) || fs::file_size(csv, ec) == 0) {
        Journal head(csv);
        head.append(campaign_csv_header() + "\n");
    }
    return done;
}

// The units of this shard that still have cases to run, and how many units each system serves.
struct Plan {
    std::vector<std::size_t> units;
    std::map<std::size_t, int> uses;
    std::size_t cases = 0;
};

Plan plan_units(const CampaignSpec& spec, const CampaignRun& run, const std::vector<char>& done, CampaignOutcome& outcome) {
    const std::size_t ne = spec.epochs.size();
    Plan plan;
    for (std::size_t u = 0; u < spec.units(); ++u) {
        if (!run.shard.holds_unit(u)) continue;
        outcome.shard_cases += ne;
        std::size_t have = 0;
        for (std::size_t e = 0; e < ne; ++e) have += done[u * ne + e] ? 1 : 0;
        outcome.resumed += have;
        if (have == ne) continue;
        plan.units.push_back(u);
        plan.cases += ne - have;
        ++plan.uses[u / spec.settings.size()];
    }
    return plan;
}

void announce(const CampaignSpec& spec, const CampaignRun& run, const CampaignOutcome& outcome, const Plan& plan, unsigned threads,
              std::ostream& progress_out) {
    if (run.quiet) return;
    progress_out << "Campaign " << spec.name << " (id " << short_id(spec.id) << "), shard " << run.shard.text() << ": "
                 << outcome.shard_cases << " of " << spec.cases() << " cases";
    if (outcome.resumed) progress_out << ", " << outcome.resumed << " already finished";
    progress_out << "; " << plan.units.size() << " solves to run on " << std::min<std::size_t>(threads, std::max<std::size_t>(plan.units.size(), 1))
                 << " thread(s)\n";
    if (outcome.shard_cases == 0)
        progress_out << "Note: shard " << run.shard.text() << " holds no case: the campaign has only " << spec.units() << " solves\n";
    progress_out << std::flush;
}

// Solves every planned unit on `threads` threads, appending each unit's rows as one write.
std::size_t run_units(const CampaignSpec& spec, const CampaignRun& run, const Plan& plan, const std::vector<char>& done, unsigned threads,
                      std::ostream& progress_out) {
    Journal journal(cases_path(run.out_dir));
    SystemCache cache(spec, plan.uses);
    Progress bar(progress_out, run.quiet);
    std::atomic<long> finished{0};
    bar.update("cases", 0.0, 0, static_cast<long>(plan.cases));
    parallel_for(plan.units.size(), threads, [&](std::size_t i) {
        if (run.cancel && run.cancel->load()) return;
        const std::size_t u = plan.units[i];
        const std::size_t system = u / spec.settings.size();
        struct Release {
            SystemCache& c;
            std::size_t s;
            ~Release() { c.release(s); }
        } release{cache, system};
        const std::shared_ptr<const SystemData> data = cache.get(system);
        const std::vector<CaseRow> rows = run_unit(spec, *data, u, run.out_dir, run.cancel);
        if (rows.empty()) return;  // cancelled
        std::string text;
        long added = 0;
        for (const CaseRow& r : rows) {
            if (done[r.index]) continue;
            text += format_case_row(r);
            ++added;
        }
        journal.append(text);
        const long total = finished += added;
        bar.update("cases", static_cast<double>(total) / static_cast<double>(plan.cases), total, static_cast<long>(plan.cases));
    });
    bar.finish();
    return static_cast<std::size_t>(finished.load());
}

}  // namespace

CampaignOutcome run_campaign(const CampaignSpec& spec, const CampaignRun& run, std::ostream& progress_out) {
    CampaignOutcome outcome;
    make_folder(run.out_dir);
    const WriterLock lock(run.out_dir, "--out");  // two runs never share a folder
    const CampaignManifest want = manifest_for(spec, run.shard);
    claim_folder(spec, run, want);
    const std::vector<char> done = finished_cases(spec, run, outcome, progress_out);
    const Plan plan = plan_units(spec, run, done, outcome);
    const unsigned threads = run.threads ? run.threads : default_threads();
    announce(spec, run, outcome, plan, threads, progress_out);
    if (!plan.units.empty()) outcome.finished = run_units(spec, run, plan, done, threads, progress_out);
    if (run.cancel && run.cancel->load()) return outcome;

    // Complete: the table sorted by case (rewritten atomically).
    const std::string csv = cases_path(run.out_dir);
    std::vector<RawRow> rows = checked_rows(spec, run.shard, csv, nullptr, nullptr);
    if (rows.size() != outcome.shard_cases)
        throw std::runtime_error("the shard should hold " + std::to_string(outcome.shard_cases) + " cases but " + csv + " has " +
                                 std::to_string(rows.size()));
    for (const RawRow& r : rows) outcome.failed += r.row.ok ? 0 : 1;
    write_file_atomic(csv, sorted_table(rows));
    std::sort(rows.begin(), rows.end(), [](const RawRow& a, const RawRow& b) { return a.row.index < b.row.index; });
    for (RawRow& r : rows) outcome.rows.push_back(std::move(r.row));
    outcome.manifest = want;
    outcome.complete = true;
    return outcome;
}

std::uint64_t limit_memory(double gigabytes, unsigned threads) {
    if (gigabytes == 0.0) return 0;
    const double gib = 1024.0 * 1024.0 * 1024.0;
    double bytes = gigabytes * gib;
    if (gigabytes < 0.0) {
        const unsigned t = threads ? threads : default_threads();
        bytes = (1.0 + 0.5 * t) * gib;
        const long pages = ::sysconf(_SC_PHYS_PAGES), page = ::sysconf(_SC_PAGE_SIZE);
        if (pages > 0 && page > 0) bytes = std::min(bytes, 0.8 * static_cast<double>(pages) * static_cast<double>(page));
    }
    // On top of what is mapped already (libraries, and the reservations of a sanitizer build, which are huge).
    {
        std::ifstream statm("/proc/self/statm");
        double pages = 0.0;
        if (statm >> pages) bytes += pages * static_cast<double>(::sysconf(_SC_PAGE_SIZE));
    }
    rlimit lim{};
    if (::getrlimit(RLIMIT_AS, &lim) != 0) return 0;
    const auto want = static_cast<rlim_t>(bytes);
    if (lim.rlim_max != RLIM_INFINITY && want > lim.rlim_max) return 0;  // a lower limit is already in force
    lim.rlim_cur = want;
    if (::setrlimit(RLIMIT_AS, &lim) != 0) return 0;
    return static_cast<std::uint64_t>(want);
}

}  // namespace wayward
