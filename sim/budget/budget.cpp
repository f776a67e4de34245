// The error budget; see budget.hpp for the method.
#include "sim/budget/budget.hpp"

#include <algorithm>
#include <atomic>
#include <cmath>
#include <cstdio>
#include <future>
#include <iostream>
#include <map>
#include <memory>
#include <mutex>
#include <sstream>

#include "sim/base/errors.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/truth/generate.hpp"
#include "sim/truth/observe.hpp"
#include "sim/base/parallel.hpp"
#include "sim/base/progress.hpp"
#include "sim/base/random.hpp"
#include "sim/base/statistics.hpp"
#include "sim/night/rehearsal.hpp"
#include "sim/score/score.hpp"
#include "sim/score/truth_ephemeris.hpp"
#include "sim/solve/solve.hpp"
#include "sim/base/units.hpp"

namespace wayward {

const BudgetLine* BudgetResult::line(const std::string& key) const {
    for (const BudgetLine& l : lines)
        if (l.key == key) return &l;
    return nullptr;
}

namespace {

constexpr const char* kEarlyEra = "early sighting";  // the era label observe() gives sparse early sightings
constexpr double kBroadEccSigma = 0.5;                // base priors: much broader than any bundled scenario draws
constexpr double kBroadTiltSigmaDeg = 30.0;

// What one line switches on.
struct LineSpec {
    std::string key, label, short_label;
    bool present = true;
    NoiseSwitches noise;          // for the observations (all off unless said)
    std::vector<std::string> noise_eras;  // random noise in these eras only (their labels in the records)
    bool masses = false, orbits = false, spacing = false, neglect_light_time = false;
    bool matched_priors = false;  // the eccentricity and tilt priors matched to the scenario instead of the base ones
};

NoiseSwitches none() {
    NoiseSwitches n;
    n.random = n.systematic = n.rounding = n.outliers = false;
    return n;
}

std::string num(const char* f, double v) {
    char buf[64];
    std::snprintf(buf, sizeof buf, f, v);
    return buf;
}

const BodySpec* hidden_spec(const Scenario& sc) {
    for (const BodySpec& b : sc.bodies)
        if (b.role == Role::hidden) return &b;
    return nullptr;
}

// Prior sigma matched to the scenario's draw of a hidden-body parameter: a Rayleigh draw of scale s makes each
// component (e cos varpi, e sin varpi; or the tilt's two components) Gaussian with sigma s, which is exactly the
// solve's prior; any other draw gets its largest value, clamped to [lo, hi].
double matched_sigma(const Param& p, double lo, double hi, double fallback) {
    if (p.kind == Param::Kind::rayleigh) return std::clamp(p.sd, lo, hi);
    const double m = p.max_value();
    return std::isfinite(m) ? std::clamp(m, lo, hi) : fallback;
}

std::vector<LineSpec> line_specs(const Scenario& sc, double mass_error, bool priors_differ, const std::string& matched,
                                 const std::vector<std::string>& combine) {
    std::vector<LineSpec> v;
    LineSpec off;
    off.key = "all-off";
    off.label = "all sources off (the numerical floor)";
    off.short_label = "all off";
    off.noise = none();
    v.push_back(off);
    for (const Era& e : sc.plan.eras) {
        LineSpec l;
        l.key = "random:" + e.label;
        l.label = "random noise of era \"" + e.label + "\" alone";
        l.short_label = "noise: " + e.label;
        l.noise = none();
        l.noise_eras = {e.label};
        v.push_back(l);
    }
    if (!sc.plan.early.empty()) {
        LineSpec l;
        l.key = "random:early";
        l.label = "random noise of the early sightings alone";
        l.short_label = "noise: early";
        l.noise = none();
        l.noise_eras = {kEarlyEra};
        v.push_back(l);
    }
    bool systematic = false, rounding = false, outliers = false;
    for (const Era& e : sc.plan.eras) {
        systematic |= e.offset_lon_arcsec != 0 || e.offset_lat_arcsec != 0 || e.drift_lon_arcsec_per_yr != 0 || e.drift_lat_arcsec_per_yr != 0;
        rounding |= e.precision_arcsec > 0;
        outliers |= e.outlier_fraction > 0 && e.outlier_sigma_arcsec > 0;
    }
    auto add = [&](const std::string& key, const std::string& label, const std::string& short_label, bool present, auto&& set) {
        LineSpec l;
        l.key = key;
        l.label = label;
        l.short_label = short_label;
        l.present = present;
        l.noise = none();
        set(l);
        v.push_back(l);
    };
    add("systematic", "systematic offsets and drifts", "systematic", systematic, [](LineSpec& l) { l.noise.systematic = true; });
    add("rounding", "rounding to the recorded precision", "rounding", rounding, [](LineSpec& l) { l.noise.rounding = true; });
    add("outliers", "outliers", "outliers", outliers, [](LineSpec& l) { l.noise.outliers = true; });
    int known = 0;
    for (const BodySpec& b : sc.bodies) known += b.role == Role::known ? 1 : 0;
    if (sc.family.present) known += sc.family.count_min;
    add("distance-prior", "distance: the spacing-rule prior instead of free", "distance prior", known >= 2,
        [](LineSpec& l) { l.spacing = true; });
    add("masses", "known planets' masses in the brief (" + num("%g", 100.0 * mass_error) + "%)", "masses", mass_error > 0,
        [](LineSpec& l) { l.masses = true; });
    add("orbits", "known planets' approximate orbits in the brief (" + num("%g", sc.plan.brief_orbit_error_deg) + " deg)",
        "orbits", sc.plan.brief_orbit_error_deg > 0, [](LineSpec& l) { l.orbits = true; });
    add("shape-priors", "e and tilt priors matched to the draws (" + matched + ")", "e, tilt priors", priors_differ,
        [](LineSpec& l) { l.matched_priors = true; });
    add("light-time", "light time left out of the model", "light time", true, [](LineSpec& l) { l.neglect_light_time = true; });
    // All sources on: every present single source (or those of `combine`) switched on together.
    LineSpec on;
    on.key = "all-on";
    on.label = "all sources on";
    on.short_label = "all on";
    on.noise = none();
    for (const LineSpec& l : v) {
        if (!l.present || l.key == "all-off") continue;
        if (!combine.empty() && std::find(combine.begin(), combine.end(), l.key) == combine.end()) continue;
        on.noise.systematic |= l.noise.systematic;
        on.noise.rounding |= l.noise.rounding;
        on.noise.outliers |= l.noise.outliers;
        on.noise_eras.insert(on.noise_eras.end(), l.noise_eras.begin(), l.noise_eras.end());
        on.masses |= l.masses;
        on.orbits |= l.orbits;
        on.spacing |= l.spacing;
        on.neglect_light_time |= l.neglect_light_time;
        on.matched_priors |= l.matched_priors;
    }
    if (!combine.empty()) {
        on.label = "these sources together:";
        for (std::size_t k = 0; k < combine.size(); ++k) on.label += (k ? ", " : " ") + combine[k];
    }
    v.push_back(on);
    return v;
}

// One drawn system with its truth integration, shared by the lines of a run.
struct RunData {
    std::uint64_t seed = 0;
    std::optional<Truth> truth;
    IntegrationResult run;
    std::string error;
};

class RunCache {
public:
    RunCache(const Scenario& sc, std::vector<int> uses) : sc_(sc), uses_(std::move(uses)), made_(uses_.size()) {}
    std::shared_ptr<const RunData> get(std::size_t r, std::uint64_t seed) {
        std::shared_ptr<std::promise<std::shared_ptr<const RunData>>> maker;
        std::shared_future<std::shared_ptr<const RunData>> f;
        {
            std::lock_guard<std::mutex> lock(mutex_);
            if (!made_[r].valid()) {
                maker = std::make_shared<std::promise<std::shared_ptr<const RunData>>>();
                made_[r] = maker->get_future().share();
            }
            f = made_[r];
        }
        if (maker) {
            auto d = std::make_shared<RunData>();
            d->seed = seed;
            try {
                d->truth = generate(sc_, seed, &d->run);
            } catch (const std::exception& e) {
                d->error = e.what();
            }
            maker->set_value(d);
        }
        return f.get();
    }
    void release(std::size_t r) {
        std::lock_guard<std::mutex> lock(mutex_);
        if (--uses_[r] <= 0) made_[r] = {};
    }

private:
    const Scenario& sc_;
    std::mutex mutex_;
    std::vector<int> uses_;
    std::vector<std::shared_future<std::shared_ptr<const RunData>>> made_;
};

// Observations with random noise in some eras only: the records drawn without random noise, with those eras'
// records taken from a draw with it, of the same seed (observe() draws every random number whatever is switched
// on, so both draws hold the same observations at the same times; the other switches apply to both).
ObservationSet observe_eras(const Scenario& sc, const Truth& truth, const Ephemeris& eph, std::uint64_t seed, const NoiseSwitches& base,
                            const std::vector<std::string>& eras) {
    NoiseSwitches n = base;
    n.random = false;
    ObservationSet quiet = observe(sc, truth, eph, seed, n);
    if (eras.empty()) return quiet;
    n.random = true;
    const ObservationSet noisy = observe(sc, truth, eph, seed, n);
    if (quiet.records.size() != noisy.records.size()) throw std::logic_error("budget: the two observation draws differ in length");
    for (std::size_t k = 0; k < quiet.records.size(); ++k) {
        if (quiet.records[k].time_days != noisy.records[k].time_days || quiet.records[k].era != noisy.records[k].era)
            throw std::logic_error("budget: the two observation draws differ in their times");
        if (std::find(eras.begin(), eras.end(), noisy.records[k].era) != eras.end()) quiet.records[k] = noisy.records[k];
    }
    return quiet;
}

}  // namespace

Scenario apply_what_ifs(const Scenario& base, const BudgetOptions& o) {
    Scenario sc = base;
    if (!sc.plan.present || sc.plan.eras.empty()) throw InputError(sc.file, 0, "observing", "the scenario has no observing plan with eras");
    for (const auto& [label, factor] : o.era_sigma_scale) {
        if (!(factor > 0 && factor <= 1000)) throw InputError("", 0, "--era-sigma", "the factor for era \"" + label + "\" must be in (0, 1000]");
        bool found = false;
        for (Era& e : sc.plan.eras)
            if (e.label == label) {
                e.sigma_lon_arcsec *= factor;
                e.sigma_lat_arcsec *= factor;
                found = true;
            }
        if (!found) {
            std::string names;
            for (const Era& e : sc.plan.eras) names += (names.empty() ? "\"" : ", \"") + e.label + "\"";
            throw InputError("", 0, "--era-sigma", "the scenario has no era \"" + label + "\" (its eras: " + names + ")");
        }
    }
    if (o.end_year) {
        Era& last = sc.plan.eras.back();
        const double hi = sc.epoch0_year + sc.span_years;
        if (!(*o.end_year > last.start_year && *o.end_year <= hi))
            throw InputError("", 0, "--end-year", "must lie after the last era's start (" + num("%g", last.start_year) + ") and within the span (to " +
                                                      num("%g", hi) + ")");
        last.end_year = *o.end_year;
    }
    if (!(o.cadence > 0 && o.cadence <= 100)) throw InputError("", 0, "--cadence", "must be in (0, 100]");
    for (Era& e : sc.plan.eras) e.per_season = std::max(1, static_cast<int>(std::lround(e.per_season * o.cadence)));
    if (o.mass_error) {
        if (!(*o.mass_error >= 0 && *o.mass_error < 0.5)) throw InputError("", 0, "--mass-error", "must be in [0, 0.5)");
        sc.plan.brief_mass_error = *o.mass_error;
    }
    return sc;
}

namespace {

// The base priors: broad (far wider than any bundled scenario's draws), so that noise-free data are fitted to the
// numerical floor; the priors matched to the scenario's draws are a line of their own.
SolveOptions base_solve_options(const BudgetOptions& o, double epoch_year) {
    SolveOptions so;
    so.threads = 1;
    so.samples = 0;  // only the predicted point is scored
    so.starts = o.starts;
    so.grid_distances = o.grid_distances;
    so.grid_longitudes = o.grid_longitudes;
    so.epoch_year = epoch_year;
    so.eccentricity_prior_sigma = o.ecc_sigma.value_or(kBroadEccSigma);
    so.inclination_prior_rad = o.tilt_sigma_deg.value_or(kBroadTiltSigmaDeg) * deg;
    if (!(so.eccentricity_prior_sigma > 0 && so.eccentricity_prior_sigma < 1)) throw InputError("", 0, "--ecc-sigma", "must be in (0, 1)");
    if (!(so.inclination_prior_rad > 0 && so.inclination_prior_rad < 90 * deg)) throw InputError("", 0, "--tilt-sigma", "must be in (0, 90) degrees");
    return so;
}

std::string what_if_words(const BudgetOptions& o) {
    std::vector<std::string> w;
    for (const auto& [label, f] : o.era_sigma_scale) w.push_back("era \"" + label + "\" sigma x" + num("%g", f));
    if (o.end_year) w.push_back("last era ends " + num("%g", *o.end_year));
    if (o.cadence != 1.0) w.push_back("cadence x" + num("%g", o.cadence));
    if (o.mass_error) w.push_back("mass error " + num("%g", 100.0 * *o.mass_error) + "%");
    std::string text;
    for (const std::string& s : w) text += (text.empty() ? "" : ", ") + s;
    return text;
}

// Every key of --only (any line) or --combine (error sources only) names a line of this budget.
void check_keys(const std::vector<LineSpec>& specs, const std::vector<std::string>& keys, const std::string& option, bool sources_only) {
    auto allowed = [&](const LineSpec& s) { return !sources_only || (s.key != "all-off" && s.key != "all-on" && s.present); };
    for (const std::string& k : keys) {
        const auto it = std::find_if(specs.begin(), specs.end(), [&](const LineSpec& s) { return s.key == k; });
        if (it != specs.end() && allowed(*it)) continue;
        std::string names;
        for (const LineSpec& s : specs)
            if (allowed(s)) names += (names.empty() ? "" : ", ") + s.key;
        throw InputError("", 0, option, "no " + std::string(sources_only ? "source" : "line") + " \"" + k + "\" in this budget (" +
                                             (sources_only ? "sources" : "lines") + ": " + names + ")");
    }
}

// The priors matched to the scenario's draws (the line that uses them).
struct MatchedPriors {
    double ecc = 0.3, tilt_rad = 10.0 * deg;
};

struct LineResult {
    double separation_arcmin = NAN;  // NaN: failed
    int found_night = 0;             // the search rehearsal's night of discovery (0: not found or not searched)
};

// The all-on solution's search: `nights` nights from its epoch with the scenario's telescope, the weather, sky
// and detections from the run's seed. Returns the night of discovery, 0 when not found.
int search_run(const ExerciseInMemory& m, const Solution& sol, int nights, std::uint64_t run_seed) {
    RehearsalOptions opt;
    opt.nights = nights;
    opt.start_year = sol.prediction.epoch_year;
    opt.seed = derive_seed(run_seed, "budget-search");
    const TruthEphemeris truth = integrate_truth(m.exercise.brief, m.key);
    const RehearsalResult r = run_rehearsal(m.exercise.brief, sol, *m.exercise.brief.telescope, truth, hidden_absolute_magnitude(m.key), opt);
    return r.found ? r.found_night : 0;
}

// One line of one run: the system re-observed with that line's error sources, solved, scored (NaN: failed), and
// for the all-on line the search rehearsed when asked.
LineResult solve_line(const Scenario& sc, const RunData& data, const LineSpec& ls, const SolveOptions& base, const MatchedPriors& matched,
                      int search_nights) {
    LineResult out;
    if (!data.truth) return out;
    try {
        Scenario s = sc;
        s.plan.brief_mass_error = ls.masses ? sc.plan.brief_mass_error : 0.0;
        if (!ls.orbits) s.plan.brief_orbit_error_deg = 0.0;
        const Truth& truth = *data.truth;
        const Ephemeris& eph = data.run.ephemeris;
        const ObservationSet obs = observe_eras(s, truth, eph, data.seed, ls.noise, ls.noise_eras);
        const Brief brief = make_brief(s, truth, data.seed);
        const ExerciseInMemory m = exercise_in_memory(s, truth, obs, brief, eph);
        SolveOptions opt = base;
        opt.seed = derive_seed(data.seed, "budget-solve");
        opt.distance = ls.spacing ? DistancePrior::spacing : DistancePrior::free;
        if (ls.neglect_light_time) opt.model.light_time = LightTime::neglected;
        if (ls.matched_priors) {
            opt.eccentricity_prior_sigma = matched.ecc;
            opt.inclination_prior_rad = matched.tilt_rad;
        }
        const Solution sol = solve(m.exercise, opt);
        out.separation_arcmin = score_prediction(m.exercise.brief, m.key, sol.prediction).separation_arcmin;
        if (search_nights > 0 && ls.key == "all-on") out.found_night = search_run(m, sol, search_nights, data.seed);
    } catch (const std::exception&) {
        out.separation_arcmin = NAN;  // counted as failed, and as not found
        out.found_night = 0;
    }
    return out;
}

// Medians, 90th percentiles, failures, the quadrature sum of the sources and the all-on radii.
void summarise(BudgetResult& b, const BudgetOptions& o) {
    double q50 = 0.0, q90 = 0.0;
    bool any_source = false;
    for (BudgetLine& l : b.lines) {
        if (!l.present) continue;
        l.failed = static_cast<int>(std::count_if(l.separations_arcmin.begin(), l.separations_arcmin.end(), [](double x) { return !std::isfinite(x); }));
        l.median = quantile(l.separations_arcmin, 0.5);
        l.p90 = quantile(l.separations_arcmin, 0.9);
        const bool combined = o.combine.empty() || std::find(o.combine.begin(), o.combine.end(), l.key) != o.combine.end();
        if (l.key != "all-off" && l.key != "all-on" && combined && std::isfinite(l.median)) {
            q50 += l.median * l.median;
            q90 += l.p90 * l.p90;
            any_source = true;
        }
    }
    if (any_source) {
        b.quadrature_median = std::sqrt(q50);
        b.quadrature_p90 = std::sqrt(q90);
    }
    if (const BudgetLine* on = b.line("all-on"); on && on->present) {
        b.radius50 = quantile(on->separations_arcmin, 0.5);
        b.radius90 = quantile(on->separations_arcmin, 0.9);
        b.radius99 = quantile(on->separations_arcmin, 0.99);
    }
    if (b.search_nights > 0) {
        // Nights for a share q of the runs: the smallest n by which at least q of them had found the body.
        std::vector<int> found;
        for (int n : b.search_found_night)
            if (n > 0) found.push_back(n);
        std::sort(found.begin(), found.end());
        b.search_found = static_cast<int>(found.size());
        auto nights_for = [&](double q) {
            const auto needed = static_cast<std::size_t>(std::ceil(q * static_cast<double>(b.search_found_night.size()) - 1e-9));
            return needed >= 1 && needed <= found.size() ? static_cast<double>(found[needed - 1]) : NAN;
        };
        b.search_nights50 = nights_for(0.5);
        b.search_nights90 = nights_for(0.9);
    }
}

}  // namespace

BudgetResult run_budget(const Scenario& base, const BudgetOptions& o, std::ostream* progress_out) {
    if (o.runs < 1 || o.runs > 100000) throw InputError("", 0, "--runs", "must be in [1, 100000]");
    if (o.starts < 1 || o.starts > 64) throw InputError("", 0, "--starts", "must be in [1, 64]");
    const Scenario sc = apply_what_ifs(base, o);
    BudgetResult b;
    b.scenario_name = sc.name;
    b.epoch_year = sc.plan.search_epochs_year.front();
    b.field_radius_arcmin = sc.plan.field_radius_deg * 60.0;
    b.runs = o.runs;
    b.combined = o.combine;

    const SolveOptions so = base_solve_options(o, b.epoch_year);
    if (o.search_nights < 0 || o.search_nights > 366) throw InputError("", 0, "--search-nights", "must be in [0, 366]");
    if (o.search_nights > 0) {
        if (!sc.telescope) throw InputError(sc.file, 0, "telescope", "the scenario has no [telescope] table, so --search-nights cannot search");
        if (b.epoch_year + (o.search_nights + 2.0) / julian_year_days > sc.epoch0_year + sc.span_years)
            throw InputError("", 0, "--search-nights", "the nights from the search epoch run past the scenario's span");
        b.search_nights = o.search_nights;
        b.search_found_night.assign(static_cast<std::size_t>(o.runs), 0);
    }
    const BodySpec* hidden = hidden_spec(sc);
    MatchedPriors matched;
    matched.ecc = hidden ? matched_sigma(hidden->e, 0.01, 0.5, 0.3) : 0.3;
    matched.tilt_rad = (hidden ? matched_sigma(hidden->i_deg, 0.5, 30.0, 10.0) : 10.0) * deg;
    const bool priors_differ = matched.ecc != so.eccentricity_prior_sigma || matched.tilt_rad != so.inclination_prior_rad;
    b.priors = "prior sigma " + num("%g", so.eccentricity_prior_sigma) + " on e cos(varpi), e sin(varpi) and " +
               num("%g", so.inclination_prior_rad / deg) + " deg on the tilt components" +
               (o.ecc_sigma || o.tilt_sigma_deg ? " (as given)" : " (broad)");
    const std::string matched_words = num("%g", matched.ecc) + ", " + num("%g", matched.tilt_rad / deg) + " deg";
    b.what_if = what_if_words(o);

    const std::vector<LineSpec> specs = line_specs(sc, sc.plan.brief_mass_error, priors_differ, matched_words, o.combine);
    check_keys(specs, o.only, "--only", false);
    check_keys(specs, o.combine, "--combine", true);
    auto wanted = [&](const LineSpec& s) { return o.only.empty() || std::find(o.only.begin(), o.only.end(), s.key) != o.only.end(); };
    std::vector<std::size_t> chosen;
    for (std::size_t i = 0; i < specs.size(); ++i)
        if (specs[i].present && wanted(specs[i])) chosen.push_back(i);
    for (const LineSpec& s : specs) {
        if (!wanted(s)) continue;
        BudgetLine l;
        l.key = s.key;
        l.label = s.label;
        l.present = s.present;
        if (s.present) l.separations_arcmin.assign(static_cast<std::size_t>(o.runs), NAN);
        b.lines.push_back(l);
    }
    for (int r = 0; r < o.runs; ++r) b.seeds.push_back(derive_seed(o.seed, "budget", static_cast<std::uint64_t>(r)) >> 11);

    // Tasks run-major, so that a run's system is drawn once and dropped when its lines are done.
    const std::size_t per_run = chosen.size();
    const std::size_t tasks = per_run * static_cast<std::size_t>(o.runs);
    RunCache cache(sc, std::vector<int>(static_cast<std::size_t>(o.runs), static_cast<int>(per_run)));
    Progress bar(progress_out ? *progress_out : std::cerr, progress_out == nullptr);
    std::atomic<long> finished{0};
    std::mutex result_mutex;
    parallel_for(tasks, o.threads ? o.threads : default_threads(), [&](std::size_t t) {
        const std::size_t r = t / per_run;
        const LineSpec& ls = specs[chosen[t % per_run]];
        struct Release {
            RunCache& c;
            std::size_t r;
            ~Release() { c.release(r); }
        } release{cache, r};
        const auto data = cache.get(r, b.seeds[r]);
        const LineResult res = solve_line(sc, *data, ls, so, matched, o.search_nights);
        {
            std::lock_guard<std::mutex> lock(result_mutex);
            for (BudgetLine& l : b.lines)
                if (l.key == ls.key) l.separations_arcmin[r] = res.separation_arcmin;
            if (b.search_nights > 0 && ls.key == "all-on") b.search_found_night[r] = res.found_night;
        }
        const long done = ++finished;
        bar.update("budget solves", static_cast<double>(done) / static_cast<double>(tasks), done, static_cast<long>(tasks));
    });
    bar.finish();
    summarise(b, o);
    return b;
}

}  // namespace wayward
