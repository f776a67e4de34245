// Implementations of the `wayward` commands.
#include "sim/commands/commands.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>

#include <erfa.h>
#include <filesystem>
#include <iomanip>
#include <limits>
#include <map>
#include <sstream>

#include "sim/base/errors.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/io/fileio.hpp"
#include "sim/report/text_table.hpp"
#include "sim/fit/known_fit.hpp"
#include "sim/commands/sky_map_command.hpp"
#include "sim/commands/record_command.hpp"
#include "sim/record/record.hpp"
#include "sim/report/luck_report.hpp"
#include "sim/report/report.hpp"
#include "sim/truth/generate.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/base/units.hpp"

namespace wayward {

namespace {
// Julian Day of a Gregorian calendar date at 0 h (ERFA's eraCal2jd; NaN for a date it refuses).
double gregorian_jd(int year, int month, int day) {
    double djm0 = 0.0, djm = 0.0;
    if (eraCal2jd(year, month, day, &djm0, &djm) != 0) return std::nan("");
    return djm0 + djm;
}

bool whole_number(const std::string& s, double& v) {
    char* end = nullptr;
    v = std::strtod(s.c_str(), &end);
    return !s.empty() && end == s.c_str() + s.size() && std::isfinite(v);
}
}  // namespace

double days_from_time_text(const std::string& text, double epoch0_year, const std::string& flag) {
    double v = 0.0;
    if (whole_number(text, v)) return v;
    if (text.size() > 1 && text.back() == 'd' && whole_number(text.substr(0, text.size() - 1), v)) return v;
    if (text.size() > 2 && text.compare(text.size() - 2, 2, "yr") == 0 && whole_number(text.substr(0, text.size() - 2), v))
        return days_from_year(epoch0_year, v);
    int y = 0, m = 0, d = 0;
    char tail = 0;
    if (std::sscanf(text.c_str(), "%d-%d-%d%c", &y, &m, &d, &tail) == 3 && m >= 1 && m <= 12 && d >= 1 && d <= 31) {
        // The program's years are Julian epochs (2000.0 is JD 2451545.0, a year 365.25 days).
        const double julian_epoch = 2000.0 + (gregorian_jd(y, m, d) - 2451545.0) / julian_year_days;
        if (std::isfinite(julian_epoch)) return days_from_year(epoch0_year, julian_epoch);
    }
    throw InputError("", 0, flag, "\"" + text + "\" is not a time: give days after epoch 0 (365.25 or 365.25d), a year (1955.25yr) or a date (1955-03-21)");
}

int run_ephemeris(const EphemerisArgs& args, std::ostream& out) {
    const Scenario sc = load_scenario(args.scenario);
    std::vector<double> days;
    for (const std::string& a : args.at) days.push_back(days_from_time_text(a, sc.epoch0_year, "--at"));
    IntegratorOptions opt;
    opt.method = args.method;
    bool known_method = false;
    for (const auto& m : integrator_methods()) known_method |= m.name == args.method;
    if (!known_method) throw InputError("", 0, "--method", "unknown integration method '" + args.method + "'");
    const double span = sc.span_years * julian_year_days;
    for (double t : days)
        if (!(t >= 0.0 && t <= span) || !std::isfinite(t))
            throw InputError("", 0, "--at", "time " + std::to_string(t) + " d is outside the scenario's span [0, " +
                                                std::to_string(span) + "] d");
    IntegrationResult run;
    const Truth truth = generate(sc, args.seed, &run, opt);
    const Ephemeris& eph = run.ephemeris;
    const std::size_t obs = truth.system.observer_index();
    const ObserverFrame frame = observer_frame(truth.system, obs);

    out << "time_days,year,body,x_au,y_au,z_au,vx_au_per_day,vy_au_per_day,vz_au_per_day,lon_deg,lat_deg,distance_au\n";
    out << std::setprecision(15);
    for (double t : days) {
        for (std::size_t i = 0; i < eph.size(); ++i) {
            const StateVector s = eph.state(i, t);
            out << t << ',' << std::setprecision(10) << decimal_year(sc.epoch0_year, t) << std::setprecision(15) << ','
                << csv_cell(eph.bodies[i].name);
            for (int c = 0; c < 3; ++c) out << ',' << s.position[c];
            for (int c = 0; c < 3; ++c) out << ',' << s.velocity[c];
            if (i == obs) {
                out << ",,,\n";
            } else {
                const Apparent a = apparent(eph, frame, obs, i, t);
                out << ',' << a.sky.lon / deg << ',' << a.sky.lat / deg << ',' << a.sky.distance << '\n';
            }
        }
    }
    return 0;
}

}  // namespace wayward

namespace wayward {

int run_new(const NewArgs& args, std::ostream& out) {
    const Scenario sc = load_scenario(args.scenario);
    if (!sc.plan.present) throw InputError(sc.file, 0, "observing", "the scenario has no [observing] plan, so there is nothing to observe");
    if (args.out_dir.empty()) throw InputError("", 0, "--out", "is required");
    const ExercisePaths paths = exercise_paths(args.out_dir, args.key_dir);
    refuse_link_at(paths.brief(), "--out");
    if (std::filesystem::exists(paths.brief()) && !args.force)
        throw InputError(paths.dir, 0, "--out", "an exercise already exists here; use --force to overwrite it");
    if (args.seed && *args.seed > static_cast<std::uint64_t>(std::numeric_limits<std::int64_t>::max()))
        throw InputError("", 0, "--seed", "must be in [0, 2^63 - 1]");
    const std::uint64_t seed = args.seed ? *args.seed : secret_seed();
    IntegrationResult run;
    const Truth truth = generate(sc, seed, &run);
    const ObservationSet obs = observe(sc, truth, run.ephemeris, seed);
    const Brief brief = make_brief(sc, truth, seed);
    if (!args.record_dir.empty()) {
        std::error_code ec;
        for (const std::string& d : {paths.dir, paths.key_dir})
            if (std::filesystem::weakly_canonical(args.record_dir, ec) == std::filesystem::weakly_canonical(d, ec))
                throw InputError(args.record_dir, 0, "--record", "must be a folder of its own (not the exercise's or the key's)");
    }
    write_exercise(paths, sc, truth, obs, brief, run.ephemeris, args.force);
    if (!args.record_dir.empty()) write_record_folder(format_record(load_exercise(paths.dir)), args.record_dir);

    out << std::defaultfloat << std::setprecision(6);
    out << "Exercise written to " << paths.dir << " (answer key sealed in " << paths.key_dir << ")\n";
    out << "Scenario: " << sc.name << (args.seed ? ", seed " + std::to_string(seed) : std::string(", a secret random seed (in the answer key)"))
        << (truth.draws > 1 ? ", accepted on draw " + std::to_string(truth.draws) : "") << "\n";
    out << "Span: " << sc.epoch0_year << " to " << sc.epoch0_year + sc.span_years << " (" << sc.span_years << " years)\n";
    out << "Star: " << truth.system.bodies[0].name << ", " << truth.star_mass << (truth.star_mass == 1.0 ? " solar mass\n" : " solar masses\n");
    out << "Known planets:\n";
    for (const BriefPlanet& p : brief.planets)
        out << "  " << std::left << std::setw(12) << p.name << " a = " << std::setprecision(4) << p.elements.semi_major_axis
            << " au, mass " << std::setprecision(3) << p.mass << (p.observer ? "  (observer)" : p.observed ? "  (observed)" : "") << "\n";
    out << std::setprecision(6);
    out << (truth.hidden_index() ? "A hidden body is in the system; its orbit and mass are in the sealed answer key.\n"
                                 : "No hidden body: the scenario has none, so this is a control exercise.\n");
    std::map<std::string, std::size_t> per_era;
    for (const Observation& o : obs.records) ++per_era[o.era];
    out << "Eras:\n";
    for (const Era& e : sc.plan.eras)
        out << "  " << std::setw(18) << e.label << " " << std::setprecision(1) << std::fixed << e.start_year << "-" << e.end_year
            << std::defaultfloat << std::setprecision(6) << ": " << per_era[e.label]
            << " observations" << (e.records_sigma ? "" : " (sigma not recorded)") << "\n";
    if (per_era.count("early sighting")) out << "  " << std::setw(18) << "early sighting" << " " << per_era["early sighting"] << " observations\n";
    out << "Observations: " << obs.records.size() << " in total\n";
    out << "Search epoch(s):";
    for (double y : sc.plan.search_epochs_year) out << " " << y;
    out << "; field radius " << sc.plan.field_radius_deg << " deg\n";
    if (!args.record_dir.empty())
        out << "The same exercise in the record form (ICRS, TDB; `wayward import` reads it): " << args.record_dir << "\n";
    // For the trainer who runs `new` (the trainee's folder carries nothing of it): a search epoch at which the
    // hidden body itself stands within the elongation limit cannot end at the telescope.
    for (const HiddenAtSearch& h : hidden_at_search_epochs(truth, sc, run.ephemeris))
        if (h.inside_limit)
            out << "Trainer's note (not in the exercise folder): at the search epoch " << h.year << " the hidden body is "
                << std::setprecision(3) << h.elongation_deg << " deg from the star, inside the elongation limit of "
                << sc.plan.elongation_limit_deg << " deg: it cannot be searched then.\n" << std::setprecision(6);
    return 0;
}

}  // namespace wayward

namespace wayward {

int run_residuals(const ResidualsArgs& args, std::ostream& out, std::ostream& progress) {
    const Exercise ex = load_exercise(args.dir);
    for (const char* f : {"/residuals.csv", "/residuals.png"}) refuse_link_at(args.dir + f);  // before the work, not after
    ModelOptions mo;
    if (args.neglect_light_time) mo.light_time = LightTime::neglected;
    const KnownFit fit = fit_known(ex, mo, [&](const std::string& line) {
        if (!args.quiet) progress << line << "\n" << std::flush;
    });
    // The write phase holds the folder (waiting for another writer) and first sweeps leftovers of killed runs.
    const WriterLock lock(args.dir, "DIR", LockWait::wait);
    remove_stale_temporaries(args.dir);
    write_file_atomic(args.dir + "/residuals.csv", residuals_csv(fit.setup, fit.residuals));
    residuals_plot(fit.setup, fit.residuals, args.dir + "/residuals.png",
                   "O−C of the known-planets-only model: " + ex.brief.scenario_name);
    const std::size_t n_planets = fit.setup.planets.size(), n_obs = fit.setup.obs.size();
    out << "Known-planets-only fit of " << n_planets << (n_planets == 1 ? " planet" : " planets") << " to " << n_obs
        << (n_obs == 1 ? " observation (" : " observations (") << fit.rejected << " set aside as outliers)\n";
    print_residual_summary(fit, out);
    out << "Wrote " << args.dir << "/residuals.csv and " << args.dir << "/residuals.png\n";
    return 0;
}

}  // namespace wayward

#include "sim/base/progress.hpp"
#include "sim/predict/near_star.hpp"
#include "sim/score/score.hpp"
#include "sim/solve/mixture.hpp"
#include "sim/score/stated_prediction.hpp"
#include "sim/io/toml_reader.hpp"

namespace wayward {

namespace {

// The solver names its options by their library fields; the user typed flags.
InputError as_flag_error(const InputError& e) {
    static const std::map<std::string, std::string> flags = {
        {"distance", "--distance"}, {"ecc_sigma", "--ecc-sigma"}, {"tilt_sigma_deg", "--tilt-sigma"},
        {"samples", "--samples"},   {"starts", "--starts"},       {"epoch_year", "--epoch"}};
    const auto it = flags.find(e.field());
    if (!e.file().empty() || it == flags.end()) return e;
    return InputError("", 0, it->second, e.message());
}

}  // namespace

SolveOptions solve_options(const SolveArgs& a) {
    SolveOptions o;
    o.circular = a.circular;
    o.coplanar = a.coplanar;
    o.eccentricity_prior_sigma = a.ecc_sigma;
    o.inclination_prior_rad = a.tilt_sigma_deg * deg;
    o.epoch_year = a.epoch_year;
    o.samples = a.samples;
    o.starts = a.starts;
    o.shape_starts = !a.circular_starts_only;
    o.threads = a.threads;
    if (a.neglect_light_time) o.model.light_time = LightTime::neglected;
    if (!is_model_integrator(a.fitting_model)) {
        std::string names;
        for (const ModelIntegrator& m : model_integrators()) names += (names.empty() ? "" : ", ") + m.name;
        throw InputError("", 0, "--fitting-model", "unknown fitting model '" + a.fitting_model + "' (one of: " + names + ")");
    }
    if (a.derivatives != "variational" && a.derivatives != "differences")
        throw InputError("", 0, "--derivatives", "must be variational or differences, not '" + a.derivatives + "'");
    if (a.era_systematics != "none" && a.era_systematics != "offsets" && a.era_systematics != "drifts")
        throw InputError("", 0, "--era-systematics", "must be none, offsets or drifts, not '" + a.era_systematics + "'");
    o.model.era_systematics = a.era_systematics;
    o.model.integrator = a.fitting_model;
    // The adaptive reference model has no tangent map: its fits always take differences.
    o.model.derivatives = a.fitting_model == "wisdom-holman" ? a.derivatives : "differences";
    try {
        set_distance_prior(o, a.distance);  // validates every option
    } catch (const InputError& e) {
        throw as_flag_error(e);
    }
    if (o.samples == 0) throw InputError("", 0, "--samples", "must be in [20, 100000]");
    return o;
}

int run_solve(const SolveArgs& args, std::ostream& out, std::ostream& progress_out, Solution* solved) {
    const SolveOptions o = solve_options(args);
    const Exercise ex = load_exercise(args.dir);
    const std::string out_file = args.out_file.empty() ? args.dir + "/solution.toml" : args.out_file;
    if (std::filesystem::is_directory(out_file)) throw InputError(out_file, 0, "--out", "is a folder; give the solution file's name");
    refuse_link_at(out_file);  // before the work, not after
    const bool replacing = std::filesystem::exists(out_file);
    if (args.sky_map) check_sky_map_request(args.dir, args.sky_map_form);
    Progress bar(progress_out, args.quiet);
    SolveProgress sp;
    sp.report = [&](const std::string& stage, double f) { bar.update(stage, f); };
    Solution s;
    try {
        s = solve(ex, o, sp);
    } catch (const InputError& e) {
        throw as_flag_error(e);
    }
    bar.finish();
    const DetectionTest& d = s.detection;
    if (!d.detected() && !args.point_anyway) {
        out << std::setprecision(4) << "No detection: the record does not demand a hidden body. Adding the best one ("
            << s.detection.parameters << " parameters) lowers chi2 by " << std::max(0.0, d.delta_chi2) << "; a detection needs "
            << d.threshold << " (false-alarm rate " << 100.0 * d.alpha << "% over " << d.trials << " trial orbits).\n"
            << "No pointing written. `wayward solve " << args.dir << " --point-anyway` writes the best solution regardless.\n";
        return 0;
    }
    // As in residuals: one writer in the folder the solution goes to, leftovers of killed runs swept.
    const std::string out_dir = std::filesystem::path(out_file).parent_path().empty() ? "." : std::filesystem::path(out_file).parent_path().string();
    const WriterLock lock(out_dir, "--out", LockWait::wait);
    remove_stale_temporaries(out_dir);
    write_file_atomic(out_file, solution_toml(s));

    out << std::setprecision(4);
    out << "Hidden body, " << o.describe() << " (" << s.model_runs << " model runs):\n";
    if (s.shape_screens > 0)
        out << "  the circular starts' best fit was poor (chi2 " << table_number("%.6g", s.shape_fallback_chi2) << "): " << s.shape_screens
            << " eccentric or tilted orbits screened about the grid minima started " << s.shape_starts << " more fit"
            << (s.shape_starts == 1 ? "" : "s") << "; the best is now " << (s.shape_start_won ? "from one of them" : "still the circular start's") << "\n";
    out << "  local minima (best first; probability: each basin's share by the Laplace approximation):\n";
    // Columns padded by displayed width and always two spaces apart, so long numbers never run together.
    out << "    " << pad("a (au)", 10) << "  " << pad("mean longitude (deg)", 20) << "  " << pad("mass (solar)", 12) << "  " << pad("e", 7)
        << "  " << pad("chi2", 14) << "  " << pad("probability", 11) << "\n";
    for (const Minimum& m : s.minima)
        out << "    " << pad(table_number("%.4g", m.orbit.semi_major_axis), 10) << "  "
            << pad(table_number("%.4g", wrap_two_pi(m.orbit.mean_longitude) / deg), 20) << "  " << pad(table_number("%.4g", m.orbit.mass), 12)
            << "  " << pad(table_number("%.4g", std::hypot(m.orbit.k, m.orbit.h)), 7) << "  " << pad(table_number("%.8g", m.chi2), 14) << "  "
            << pad(std::isfinite(m.probability) ? table_number("%.3g", m.probability) : std::string("-"), 11)
            << (m.converged ? "" : "  (not converged)") << "\n";
    for (std::size_t i = 1; i < s.minima.size(); ++i)
        if (const auto& mp = s.minima[i].prediction)
            out << "  minimum " << i + 1 << " would put the body at λ = " << table_number("%.2f", mp->lon / deg) << " deg, β = "
                << table_number("%.2f", mp->lat / deg) << " deg (1-sigma " << table_number("%.4g", mp->semi_major_arcsec / 60) << " x "
                << table_number("%.4g", mp->semi_minor_arcsec / 60) << " arcmin), "
                << table_number("%.3g", separation(mp->lon, mp->lat, s.prediction.lon, s.prediction.lat) / deg) << " deg from the best's\n";
    for (std::size_t i = 0; i < s.minima.size(); ++i)
        for (const std::string& f : s.minima[i].flags)
            out << "  implausible: minimum " << i + 1 << " (a = " << table_number("%.4g", s.minima[i].orbit.semi_major_axis) << " au): " << f << "\n";
    out << "  best: a = " << s.best.semi_major_axis << " +- " << s.distance_sigma_au << " au, mass = " << s.best.mass << " +- "
        << s.mass_sigma << " solar masses, e = " << std::hypot(s.best.k, s.best.h) << "\n";
    if (s.spacing_rule_au > 0) out << "  (the spacing rule's next distance is " << s.spacing_rule_au << " au)\n";
    out << "  mass-distance correlation: " << s.mass_distance_correlation << "\n";
    out << "  chi2 = " << s.chi2 << " for " << s.dof << " degrees of freedom" << (s.covariance_scaled ? " (covariance scaled by chi2/dof: some eras' sigma was estimated)" : "") << "\n";
    if (s.goodness.poor())
        out << "  Poor fit: with every sigma recorded, chi2 this high has probability " << s.goodness.p_value
            << ": a wrong minimum or unmodelled systematics. The covariance is widened by chi2/dof = " << s.chi2 / static_cast<double>(s.dof)
            << "; treat the region with suspicion.\n";
    if (s.clipping.newly_set_aside || s.clipping.restored)
        out << "  the solve's clipping (beyond 4 sigma of the hidden-body model) set aside " << s.clipping.newly_set_aside
            << " observations the known-bodies fit had kept, and restored " << s.clipping.restored << "\n";
    out << "  detection: adding the hidden body lowers chi2 by " << std::max(0.0, d.delta_chi2) << " for " << d.parameters
        << " parameters; a detection needs " << d.threshold << " (false-alarm rate " << 100.0 * d.alpha << "% over " << d.trials
        << " trial orbits): " << (d.detected() ? "detected" : "NOT detected (written because of --point-anyway)") << "\n";
    const Prediction& p = s.prediction;
    out << std::fixed << std::setprecision(3);
    out << "Prediction for " << std::setprecision(2) << p.epoch_year << std::setprecision(3) << ": λ = " << p.lon / deg << " deg, β = "
        << p.lat / deg << " deg, distance " << p.distance_au << " au\n";
    out << "  1-sigma ellipse (linear): " << p.semi_major_arcsec / 60 << " x " << p.semi_minor_arcsec / 60
        << " arcmin, major axis at position angle " << std::setprecision(1) << position_angle_deg(p.orientation_deg) << std::setprecision(3)
        << " deg (from north, +β, through east, +λ)\n";
    const MixedShare mixed = mixed_share(p);
    const int own = p.samples_used - mixed.bodies;  // the best minimum's own samples (the others' follow them)
    out << "  1-sigma ellipse (" << own << " samples): " << p.sampled_semi_major_arcsec / 60 << " x "
        << p.sampled_semi_minor_arcsec / 60 << " arcmin; 90% of samples within " << p.radius90_arcsec / 60 << " arcmin\n";
    if (std::isfinite(p.effective_samples) && p.samples_in_full >= own) {
        out << "  (the model is not linear over the region: the samples were drawn in the hidden body's parameters, the planets'\n"
            << "  corrections solved for each, and weighted by their exact chi2; effective sample size " << std::setprecision(1)
            << p.effective_samples << std::setprecision(3) << " of " << p.samples_used << ")\n";
        if (p.effective_samples < 29.95)  // as printed: equal weights give n up to rounding, and 30.0 is not "under 30"
            out << "  Caution: so few effective samples cannot map the region; its shape and size are poorly known.\n";
    }
    if (p.samples_in_full < own)
        out << "  (" << p.samples_in_full << " samples run through the model lay within " << std::setprecision(1)
            << 100.0 * p.pilot_departure << std::setprecision(3) << "% of the minor axis of their linear propagation; the other "
            << own - p.samples_in_full << " were propagated linearly)\n";
    if (mixed.minima > 0)
        out << "  the probability map also holds " << mixed.minima << " other minim" << (mixed.minima == 1 ? "um" : "a") << " ("
            << std::setprecision(1) << 100.0 * mixed.probability << std::setprecision(3) << "% of the probability; " << mixed.bodies
            << " virtual bodies drawn from " << (mixed.minima == 1 ? "its own ellipse" : "their own ellipses")
            << "):\n  the region may be several islands\n";
    out << "  search field radius: " << ex.brief.field_radius_deg * 60 << " arcmin\n";
    out << std::defaultfloat;
    out << icrs_pointing_text(ex.brief, p);
    if (const std::string c = near_star_caution(near_star(ex.brief, p), p.epoch_year); !c.empty()) out << c << "\n";
    out << "Wrote " << out_file << (replacing ? " (replacing the earlier solution there; --out FILE keeps both)\n" : "\n");
    if (args.sky_map) write_sky_map(args.dir, ex.brief, ex.brief.scenario_name, p, out, args.sky_map_form);
    if (solved) *solved = std::move(s);
    return 0;
}

namespace {
std::optional<std::array<double, 3>> parse_ellipse(const std::string& text) {
    if (text.empty()) return std::nullopt;
    std::array<double, 3> v{};
    std::size_t start = 0;
    for (int i = 0; i < 3; ++i) {
        const std::size_t comma = text.find(',', start);
        if ((i < 2) != (comma != std::string::npos)) throw InputError("", 0, "--ellipse", "must be A,B,PA (three numbers)");
        const std::string part = text.substr(start, i < 2 ? comma - start : std::string::npos);
        try {
            std::size_t used = 0;
            v[static_cast<std::size_t>(i)] = std::stod(part, &used);
            if (used != part.size()) throw std::invalid_argument(part);
        } catch (const std::exception&) {
            throw InputError("", 0, "--ellipse", "'" + part + "' is not a number (A,B,PA)");
        }
        start = comma + 1;
    }
    return v;
}
}  // namespace

int run_score(const ScoreArgs& args, std::ostream& out, Score* scored) {
    if (!(args.window_years > 0.0 && args.window_years <= 5000.0)) throw InputError("", 0, "--window", "must be in (0, 5000] years");
    const Exercise ex = load_exercise(args.dir);
    if (ex.brief.imported())
        throw InputError(ex.brief.file, 0, "exercise.record_sha256",
                         "this folder was imported from a survey record: there is no truth to score against");
    Prediction p;
    std::string source;
    const bool own = args.lon_deg || args.lat_deg || args.epoch_year;
    if (own) {
        if (!(args.lon_deg && args.lat_deg && args.epoch_year))
            throw InputError("", 0, "--lon", "a prediction of your own needs --lon, --lat and --epoch together");
        if (!std::isfinite(*args.lon_deg)) throw InputError("", 0, "--lon", "must be a finite number of degrees");
        if (!(*args.lat_deg >= -90 && *args.lat_deg <= 90)) throw InputError("", 0, "--lat", "must be in [-90, 90]");
        if (!std::isfinite(*args.epoch_year)) throw InputError("", 0, "--epoch", "must be a finite year");
        p.lon = wrap_two_pi(*args.lon_deg * deg);
        p.lat = *args.lat_deg * deg;
        p.epoch_year = *args.epoch_year;
        set_stated_region(p, args.radius_arcmin, parse_ellipse(args.ellipse),
                   [](const std::string& field, const std::string& why) { throw InputError("", 0, field, why); }, "--radius", "--ellipse");
        source = "your prediction";
    } else if (!args.prediction_file.empty()) {
        const std::vector<Prediction> stated = parse_stated_predictions(detail::read_text_file(args.prediction_file), args.prediction_file, &ex.brief);
        if (stated.size() != 1)
            throw InputError(args.prediction_file, 0, "prediction", "holds " + std::to_string(stated.size()) + " predictions; score takes one");
        p = stated.front();
        source = args.prediction_file;
    } else {
        const std::string path = args.solution.empty() ? args.dir + "/solution.toml" : args.solution;
        if (!std::filesystem::exists(path)) throw InputError(path, 0, "", "no solution here: run `wayward solve " + args.dir + "` first, or give --lon --lat --epoch");
        const Solution s = load_solution(path);
        if (s.exercise_sha256 != ex.brief.identity_sha256())
            throw InputError(path, 0, "solution.exercise_sha256",
                             "does not match the exercise named by " + ex.brief.file + ": this solution belongs to another exercise, or the brief was changed");
        p = s.prediction;
        source = path;
    }
    const std::string key_path = args.key.empty() ? find_answer_key(args.dir) : args.key;
    const AnswerKey key = open_answer_key(ex.brief, key_path);
    const Score sc = score_prediction(ex.brief, key, p, args.window_years);
    // A prediction of the trainee's own gets files of its own, so it never overwrites the solver's luck curve.
    // A trainee's prediction writes luck_own.*, another solution file luck_NAME.* (after its file name), the
    // exercise's own solution.toml luck.*: no score overwrites the luck curve of another prediction.
    std::string stem = (own || !args.prediction_file.empty()) ? "luck_own" : "luck";
    if (!own && args.prediction_file.empty() && !args.solution.empty()) {
        const std::filesystem::path sol(args.solution);
        const bool exercise_own = sol.filename() == "solution.toml" &&
                                  std::filesystem::weakly_canonical(sol.parent_path()) == std::filesystem::weakly_canonical(args.dir);
        if (!exercise_own) stem = "luck_" + sol.stem().string();
    }
    for (const char* ext : {".csv", ".png"}) refuse_link_at(args.dir + "/" + stem + ext);
    const WriterLock lock(args.dir, "DIR", LockWait::wait);  // as in residuals: one writer, leftovers swept
    remove_stale_temporaries(args.dir);
    write_luck(sc, args.dir + "/" + stem + ".csv", args.dir + "/" + stem + ".png", "Luck of the epoch: " + ex.brief.scenario_name);

    out << std::fixed << std::setprecision(3);
    out << "Answer key verified (SHA-256 matches the brief). Scoring " << source << ".\n";
    out << "True position of " << sc.hidden_name << " at " << std::setprecision(2) << sc.epoch_year << std::setprecision(3) << ": λ = "
        << sc.true_lon / deg << " deg, β = " << sc.true_lat / deg << " deg\n";
    out << "Predicted: λ = " << sc.predicted_lon / deg << " deg, β = " << sc.predicted_lat / deg << " deg\n";
    out << "Separation: " << sc.separation_arcmin << " arcmin; field radius " << sc.field_radius_deg * 60 << " arcmin: "
        << (sc.hit ? "HIT" : "MISS") << "\n";
    {   // A hit the telescope could not have taken: the region (or the trainee's field) reaches into the star's glare.
        const NearStar n = (own || !args.prediction_file.empty())
                               ? near_star(ex.brief, p.epoch_year, p.lon, p.lat, ex.brief.field_radius_deg * 3600.0)
                               : near_star(ex.brief, p);
        if (const std::string c = near_star_caution(n, p.epoch_year); !c.empty()) out << c << "\n";
    }
    if (!sc.mahalanobis && !sc.map_truth_rank && (own || !args.prediction_file.empty()))
        out << "(no region given with this prediction, so no normalised error, rank or covered probability: --radius or --ellipse add one)\n";
    if (sc.mahalanobis) {
        out << "Normalised error (Mahalanobis): " << *sc.mahalanobis << " sigma\n";
        out << "Rank of the truth in the stated region: the smallest region holding it holds " << std::setprecision(1) << 100.0 * *sc.truth_rank
            << "% of the probability\n";
        out << "Probability the field covered, by the stated region: " << 100.0 * *sc.field_probability << "%\n" << std::setprecision(3);
    }
    if (sc.map_truth_rank)
        out << (!p.stated_map_file.empty()                         ? "By the stated sky map " + p.stated_map_file + ": rank of the truth "
                : own || !args.prediction_file.empty() ? std::string("By the stated samples' map: rank of the truth ")
                                                       : "By the solve's virtual bodies (" + std::string(why_samples_describe_region(p)) + "): rank of the truth ") << std::setprecision(1) << 100.0 * *sc.map_truth_rank
            << "%, the field covered " << 100.0 * *sc.map_field_probability << "%\n" << std::setprecision(3);
    out << "Luck curve (" << sc.luck.size() << " epochs, " << (sc.luck_from_track ? "predicted track" : "fixed point") << "): inside the field "
        << std::setprecision(1) << 100.0 * sc.luck_fraction_inside << "% of the window; closest agreement "
        << std::setprecision(3) << sc.closest_arcmin << " arcmin in " << std::setprecision(2) << sc.closest_year << "\n";
    // Say so when the window was cut: the curve only covers the years the exercise's span (or track) reaches.
    if (!sc.luck.empty()) {
        const double first = sc.luck.front().year, last = sc.luck.back().year, half_step = 0.5 / 24.0;
        const bool cut_before = first > sc.epoch_year - args.window_years + half_step, cut_after = last < sc.epoch_year + args.window_years - half_step;
        if (cut_before || cut_after)
            out << "  (the window of ±" << std::defaultfloat << args.window_years << std::fixed << " years is cut to " << std::setprecision(2) << first << "–" << last
                << ": the exercise's span ends there)\n";
    }
    out << std::defaultfloat << "Wrote " << args.dir << "/" << stem << ".csv and " << args.dir << "/" << stem << ".png\n";
    if (scored) *scored = sc;
    return 0;
}

}  // namespace wayward

// ---- Campaigns, merge and the error budget ----
#include <atomic>
#include <csignal>

#include "sim/budget/budget.hpp"
#include "sim/campaign/campaign.hpp"
#include "sim/report/budget_report.hpp"
#include "sim/report/campaign_report.hpp"

namespace wayward {

namespace {
std::atomic<bool> campaign_stop{false};
extern "C" void campaign_on_signal(int sig) {
    campaign_stop.store(true);
    std::signal(sig, SIG_DFL);  // a second signal stops at once
}
}  // namespace

int run_campaign_command(const CampaignArgs& args, std::ostream& out, std::ostream& progress) {
    // Everything is checked before any work: the spec, every scenario, the shard, the output folder.
    const CampaignSpec spec = load_campaign_spec(args.spec);
    CampaignRun run;
    run.shard = parse_shard(args.shard);
    run.out_dir = args.out_dir;
    run.threads = args.threads;
    run.quiet = args.quiet;
    run.cancel = &campaign_stop;
    campaign_stop.store(false);
    if (args.max_memory_gb < 0.0 && args.max_memory_gb != -1.0) throw InputError("", 0, "--max-memory", "must be 0 (no limit) or positive");
    limit_memory(args.max_memory_gb, args.threads);
    auto old_int = std::signal(SIGINT, campaign_on_signal);
    auto old_term = std::signal(SIGTERM, campaign_on_signal);
    CampaignOutcome o;
    try {
        o = run_campaign(spec, run, progress);
    } catch (...) {
        std::signal(SIGINT, old_int);
        std::signal(SIGTERM, old_term);
        throw;
    }
    std::signal(SIGINT, old_int);
    std::signal(SIGTERM, old_term);
    if (!o.complete) {
        progress << "Stopped: " << o.resumed + o.finished << " of " << o.shard_cases << " cases of shard " << run.shard.text()
                 << " are in " << args.out_dir << "/cases.csv; run the same command again to finish the rest.\n";
        return 130;
    }
    out << write_campaign_report(o.rows, o.manifest, args.out_dir);
    out << "Wrote " << args.out_dir << "/cases.csv (" << o.shard_cases << " cases, " << o.resumed << " from an earlier run), summary.txt, "
        << "success_vs_epoch.png, separations.png, luck_fraction.png, closest_agreement.png\n";
    return 0;
}

int run_merge(const MergeArgs& args, std::ostream& out) {
    if (args.out_dir.empty()) throw InputError("", 0, "--out", "is required");
    const MergedCampaign m = merge_campaigns(args.dirs, args.out_dir, out);
    out << write_campaign_report(m.rows, m.manifest, args.out_dir);
    out << "Wrote " << args.out_dir << "/cases.csv, summary.txt and the plots\n";
    return 0;
}

int run_budget_command(const BudgetArgs& args, std::ostream& out, std::ostream& progress) {
    const Scenario sc = load_scenario(args.scenario);
    if (!sc.plan.present) throw InputError(sc.file, 0, "observing", "the scenario has no [observing] plan, so there is nothing to observe");
    BudgetOptions o;
    o.runs = args.runs;
    o.seed = args.seed;
    o.threads = args.threads;
    o.ecc_sigma = args.ecc_sigma;
    o.tilt_sigma_deg = args.tilt_sigma_deg;
    o.starts = args.starts;
    for (const std::string& e : args.era_sigma) {
        const auto eq = e.rfind('=');
        char* end = nullptr;
        const double f = eq == std::string::npos ? NAN : std::strtod(e.c_str() + eq + 1, &end);
        if (eq == std::string::npos || eq == 0 || !end || *end != '\0' || !std::isfinite(f))
            throw InputError("", 0, "--era-sigma", "\"" + e + "\" is not LABEL=FACTOR (e.g. --era-sigma survey=2)");
        o.era_sigma_scale.emplace_back(e.substr(0, eq), f);
    }
    o.end_year = args.end_year;
    o.cadence = args.cadence;
    o.mass_error = args.mass_error;
    o.only = args.only;
    o.combine = args.combine;
    o.search_nights = args.search_nights;
    apply_what_ifs(sc, o);  // every option checked before any work
    if (args.out_dir.empty()) throw InputError("", 0, "--out", "is required");
    std::error_code ec;
    std::filesystem::create_directories(args.out_dir, ec);
    if (ec || !std::filesystem::is_directory(args.out_dir, ec))
        throw InputError(args.out_dir, 0, "--out", "cannot create the folder" + (ec ? ": " + ec.message() : std::string()));
    const std::string probe = args.out_dir + "/.budget-write-test";
    try {
        write_file_atomic(probe, "");
        std::filesystem::remove(probe, ec);
    } catch (const std::exception& e) {
        throw InputError(args.out_dir, 0, "--out", std::string("cannot write in the folder: ") + e.what());
    }
    if (args.max_memory_gb < 0.0 && args.max_memory_gb != -1.0) throw InputError("", 0, "--max-memory", "must be 0 (no limit) or positive");
    limit_memory(args.max_memory_gb, args.threads);
    const BudgetResult b = run_budget(sc, o, args.quiet ? nullptr : &progress);
    write_file_atomic(args.out_dir + "/budget.csv", budget_csv(b));
    write_file_atomic(args.out_dir + "/budget_runs.csv", budget_runs_csv(b));
    budget_plot(b, args.out_dir + "/budget.png");
    out << budget_table(b);
    out << "Wrote " << args.out_dir << "/budget.csv, budget_runs.csv and budget.png\n";
    return 0;
}

}  // namespace wayward
