// `wayward search`: the rehearsal from the command line. See search_command.hpp.
#include "sim/commands/search_command.hpp"

#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <sstream>

#include "sim/base/errors.hpp"
#include "sim/base/format.hpp"
#include "sim/base/units.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/io/fileio.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/night/rehearsal.hpp"
#include "sim/report/search_plot.hpp"
#include "sim/truth/answer_key.hpp"

namespace wayward {

using detail::fmt;

const char* const search_caution =
    "Caution: this is a rehearsal. The planned pointings keep the elongation limit from the star, but a real "
    "observatory's own safety rules and scheduling tools take precedence, and real predictions need "
    "cross-checking with the team's own software.";

std::string search_plan_csv(const RehearsalResult& r) {
    std::string s = "night,order,field,lon_deg,lat_deg,probability,observable_hours\n";
    for (const PlanEntry& p : r.plan)
        s += std::to_string(p.night) + "," + std::to_string(p.order) + "," + std::to_string(p.field) + "," + fmt("%.5f,", p.lon / deg) + fmt("%.5f,", p.lat / deg) + fmt("%.6f,", p.probability) +
             fmt("%.2f\n", p.observable_hours);
    return s;
}

std::string search_log_csv(const RehearsalResult& r, double epoch0_year) {
    std::string s = "night,year,field,visit,lon_deg,lat_deg,altitude_deg,airmass,elongation_deg,limit_mag,detections,candidates,confirmed,rejected,open,outcome,exposure\n";
    for (const VisitRecord& v : r.log) {
        s += std::to_string(v.night) + "," + fmt("%.6f,", decimal_year(epoch0_year, v.t_days)) + std::to_string(v.field) + "," +
             std::to_string(v.visit) + ",";
        if (v.outcome == VisitOutcome::cloudy) {
            s += ",,,,,,,,,,,cloudy,\n";
            continue;
        }
        if (v.outcome == VisitOutcome::idle) {  // a clear night that searched nothing, and why
            s += ",,,," + fmt("%.3f", v.elongation / deg) + ",,,,,,,no field: " + to_string(v.idle) + ",\n";
            continue;
        }
        s += fmt("%.5f,", v.lon / deg) + fmt("%.5f,", v.lat / deg) + fmt("%.3f,", v.altitude / deg) + fmt("%.4f,", v.airmass) +
             fmt("%.3f,", v.elongation / deg) + fmt("%.3f,", v.limit_mag) + std::to_string(v.detections) + "," +
             std::to_string(v.candidates) + "," + std::to_string(v.confirmed) + "," + std::to_string(v.rejected) + "," +
             std::to_string(v.open) + "," + to_string(v.outcome) + "," + (v.exposure ? std::to_string(v.exposure) : std::string()) + "\n";
    }
    return s;
}

std::string search_nights_csv(const RehearsalResult& r) {
    std::string s = "night,year,clear,dark_hours,fields,revisits,hours_used,probability_covered,no_field_because\n";
    for (const NightRecord& n : r.nights)
        s += std::to_string(n.night) + "," + fmt("%.6f,", n.start_year) + (n.clear ? "1," : "0,") + fmt("%.2f,", n.dark_hours) +
             std::to_string(n.fields) + "," + std::to_string(n.revisits) + "," + fmt("%.2f,", n.hours_used) +
             fmt("%.5f,", n.probability_covered) + to_string(n.idle) + "\n";
    return s;
}

std::string search_candidates_csv(const RehearsalResult& r) {
    std::string s = "night,field,visit,exposure,lon_deg,lat_deg\n";
    for (const VisitRecord& v : r.log)
        for (const Star& c : v.candidate_places)
            s += std::to_string(v.night) + "," + std::to_string(v.field) + "," + std::to_string(v.visit) + "," + std::to_string(v.exposure) +
                 "," + fmt("%.7f,", c.lon / deg) + fmt("%.7f\n", c.lat / deg);
    return s;
}

std::string search_idle_line(const RehearsalResult& r, double elongation_limit_deg) {
    if (r.found || r.fields_searched > 0 || r.nights.empty()) return "";
    // Count the nights by reason, in the order of NightIdle.
    const NightIdle order[] = {NightIdle::near_star, NightIdle::no_darkness, NightIdle::too_low, NightIdle::too_short,
                               NightIdle::unplanned, NightIdle::cloudy};
    std::string s = "Nothing could be searched on any of the " + std::to_string(r.nights.size()) + " night" +
                    (r.nights.size() == 1 ? "" : "s") + ":";
    bool first = true;
    for (NightIdle why : order) {
        int n = 0;
        double lo = 1e9, hi = -1e9;
        for (const NightRecord& night : r.nights)
            if (night.idle == why) {
                ++n;
                lo = std::min(lo, night.centre_elongation);
                hi = std::max(hi, night.centre_elongation);
            }
        if (n == 0) continue;
        s += std::string(first ? " " : "; ") + std::to_string(n) + (n == 1 ? " night " : " nights ") + to_string(why);
        if (why == NightIdle::near_star || why == NightIdle::too_low)
            s += " (its centre " + fmt("%.1f", lo / deg) + (hi - lo >= 0.05 * deg ? "-" + fmt("%.1f", hi / deg) : std::string()) +
                 " deg from the star" + (why == NightIdle::near_star ? ", limit " + fmt("%.0f", elongation_limit_deg) + " deg" : std::string()) + ")";
        first = false;
    }
    if (std::any_of(r.nights.begin(), r.nights.end(), [](const NightRecord& n) { return n.idle == NightIdle::near_star || n.idle == NightIdle::too_low; }))
        s += ". Try a search epoch when the region is farther from the star and higher in the dark sky (--start YEAR)";
    return s + ".\n";
}

std::string search_folder(const std::string& exercise_dir) {
    const std::string dir = exercise_dir + "/search";
    std::error_code ec;
    // A link planted at search/ would carry every file written there out of the exercise folder.
    if (std::filesystem::is_symlink(dir, ec))
        throw InputError(dir, 0, "DIR", "is a symbolic link; remove it (the search writes its files in a real folder)");
    std::filesystem::create_directories(dir, ec);
    if (ec) throw InputError(dir, 0, "", "cannot create the folder: " + ec.message());
    if (!std::filesystem::is_directory(dir, ec)) throw InputError(dir, 0, "DIR", "is not a folder");
    return dir;
}

namespace {

std::string summary_text(const RehearsalResult& r, const Brief& b, const Telescope& tel, const SearchArgs& args,
                         const std::string& strategy, double start_year) {
    std::ostringstream o;
    o << "Search rehearsal of " << b.scenario_name << ": strategy " << strategy << ", " << args.nights << " night"
      << (args.nights == 1 ? "" : "s") << " from " << fmt("%.3f", start_year) << "\n";
    o << "Telescope: " << fmt("%.2f", tel.field_of_view_deg) << " deg " << (tel.shape == FieldShape::square ? "square" : "circular")
      << " field, limit " << fmt("%.1f", tel.limiting_mag) << " mag at the zenith, " << fmt("%.1f", tel.minutes_per_field())
      << " min per field; site latitude " << fmt("%.1f", tel.site_latitude_deg) << " deg, clear nights "
      << fmt("%.0f", 100.0 * tel.clear_fraction) << " %\n";
    if (r.region.from_virtual_bodies)
        o << "Region: the solve's " << r.region.virtual_bodies << " virtual bodies (effective " << fmt("%.1f", r.region.effective_samples)
          << "; " << r.region.why_virtual_bodies << "), 98.9 % within " << fmt("%.2f", r.region.reach / deg) << " deg; " << r.fields.size() << " field"
          << (r.fields.size() == 1 ? "" : "s") << " tiled\n";
    else
        o << "Region: 1-sigma ellipse " << fmt("%.3f", r.region.sigma_major / deg) << " x " << fmt("%.3f", r.region.sigma_minor / deg)
          << " deg; " << r.fields.size() << " field" << (r.fields.size() == 1 ? "" : "s") << " tiled\n";
    for (const NightRecord& n : r.nights) {
        o << "Night " << n.night << " (" << fmt("%.3f", n.start_year) << "): ";
        if (!n.clear) { o << "cloudy\n"; continue; }
        if (n.idle != NightIdle::none) {
            o << fmt("%.1f", n.dark_hours) << " h dark, no field: " << to_string(n.idle);
            if (n.idle == NightIdle::near_star)
                o << " (its centre " << fmt("%.1f", n.centre_elongation / deg) << " deg from the star, limit "
                  << fmt("%.0f", b.elongation_limit_deg) << " deg)";
            o << "\n";
            continue;
        }
        o << fmt("%.1f", n.dark_hours) << " h dark, " << n.fields << " field" << (n.fields == 1 ? "" : "s") << ", " << n.revisits
          << " revisit" << (n.revisits == 1 ? "" : "s") << ", " << fmt("%.1f", n.hours_used) << " h used, probability covered "
          << fmt("%.1f", 100.0 * n.probability_covered) << " %\n";
    }
    if (r.found)
        o << "Found on night " << r.found_night << " (" << fmt("%.4f", r.found_year) << ") at λ " << fmt("%.4f", r.found_lon / deg)
          << " deg, β " << fmt("%.4f", r.found_lat / deg) << " deg, after " << fmt("%.1f", r.hours_used) << " h of telescope time.\n";
    else
        o << "Not found in " << r.nights.size() << " night" << (r.nights.size() == 1 ? "" : "s") << " (" << fmt("%.1f", r.hours_used)
          << " h of telescope time).\n";
    o << search_idle_line(r, b.elongation_limit_deg);
    if (r.fields_kept_from_star > 0)
        o << "Kept away from the star: " << r.fields_kept_from_star << " field-night" << (r.fields_kept_from_star == 1 ? "" : "s")
          << " nearer than the elongation limit (" << fmt("%.0f", b.elongation_limit_deg) << " deg) never scheduled.\n";
    o << "False candidates chased: " << r.false_candidates << " (" << fmt("%.1f", r.false_candidate_hours)
      << " h of revisits found nothing), " << r.open_candidates << " left open.\n";
    // The truth, now that the search is over.
    double cl = 0.0, cb = 0.0;
    region_centre(r.region, start_year, cl, cb);
    o << "The body (revealed now the search is over): magnitude " << fmt("%.1f", r.body_mag_first_night) << " on night 1, moving "
      << fmt("%.2f", r.body_rate_arcsec_per_hour) << "\"/h, " << fmt("%.3f", separation(cl, cb, r.body_lon_first_night, r.body_lat_first_night) / deg)
      << " deg from the predicted centre.\n";
    o << search_caution << "\n";
    return o.str();
}

}  // namespace

int run_search(const SearchArgs& args, std::ostream& out, std::string* table) {
    // Read and check everything first: nothing is written unless all of it is good.
    const Exercise ex = load_exercise(args.dir);
    const std::string sol_path = args.solution.empty() ? args.dir + "/solution.toml" : args.solution;
    if (!std::filesystem::exists(sol_path))
        throw InputError(sol_path, 0, "", "no solution here: run `wayward solve " + args.dir + "` first, or give --solution");
    const Solution solution = load_solution(sol_path);
    if (solution.exercise_sha256 != ex.brief.identity_sha256())
        throw InputError(sol_path, 0, "solution.exercise_sha256", "this solution belongs to another exercise");
    // A record brought in with `import` has no sealed truth to place among the stars: its fields are listed instead.
    if (ex.brief.imported()) {
        const int status = run_field_list(args, ex, solution, out);
        if (table) *table = args.dir + "/search/fields.csv";
        return status;
    }
    Telescope tel;
    if (!args.telescope_file.empty()) tel = load_telescope(args.telescope_file);
    else if (ex.brief.telescope) tel = *ex.brief.telescope;
    else throw InputError(exercise_paths(args.dir).brief(), 0, "telescope", "the brief has no [telescope]: give --telescope FILE");
    const std::string strategy_name = args.strategy.value_or(args.plan_file.empty() ? "probability" : "plan");
    RehearsalOptions opt;
    opt.strategy = strategy_by_name(strategy_name);
    if (opt.strategy.kind == StrategyKind::plan) {
        if (args.plan_file.empty()) throw InputError("command line", 0, "--plan", "the plan strategy needs --plan FILE (night,lon_deg,lat_deg)");
        opt.plan = parse_plan_csv(detail::read_text_file(args.plan_file), args.plan_file);
        for (const PlanRow& row : opt.plan)
            if (row.night > args.nights) throw InputError(args.plan_file, row.line, "night", "beyond --nights " + std::to_string(args.nights));
    } else if (!args.plan_file.empty()) {
        throw InputError("command line", 0, "--plan", "a plan file goes with --strategy plan");
    }
    if (args.nights < 1 || args.nights > 3660) throw InputError("command line", 0, "--nights", "must be in [1, 3660]");
    opt.nights = args.nights;
    opt.start_year = args.start_year.value_or(solution.prediction.epoch_year);
    opt.seed = args.seed;
    const AnswerKey key = open_answer_key(ex.brief, exercise_paths(args.dir).answer_key());

    const RehearsalResult r = run_rehearsal(ex.brief, solution, tel, key, opt);
    const std::string summary = summary_text(r, ex.brief, tel, args, strategy_name, opt.start_year);

    const std::string dir = search_folder(args.dir);
    const WriterLock lock(dir, "DIR", LockWait::wait);  // one writer at a time; leftovers of killed runs swept
    remove_stale_temporaries(dir);
    write_file_atomic(dir + "/plan.csv", search_plan_csv(r));
    write_file_atomic(dir + "/log.csv", search_log_csv(r, ex.brief.epoch0_year));
    write_file_atomic(dir + "/nights.csv", search_nights_csv(r));
    write_file_atomic(dir + "/candidates.csv", search_candidates_csv(r));
    {   // What the viewer needs to rebuild a field's chart and exposure: the seed and the telescope used.
        toml::table setup;
        setup.insert("search", toml::table{{"seed", std::to_string(args.seed)},  // a string: every 64-bit seed exactly
                                           {"strategy", strategy_name},
                                           {"nights", args.nights},
                                           {"start_year", opt.start_year}});
        setup.insert("telescope", detail::telescope_table(tel));
        std::ostringstream text;
        text << "# The search rehearsal's setup, written by wayward search (read by the viewer's search panel).\n" << setup << "\n";
        write_file_atomic(dir + "/rehearsal.toml", text.str());
    }
    save_search_png(r, tel, ex.brief.epoch0_year, dir + "/search.png");
    write_file_atomic(dir + "/summary.txt", summary);  // last: its presence marks a complete search folder
    out << summary;
    out << "Wrote " << dir << "/plan.csv, log.csv, nights.csv, candidates.csv, rehearsal.toml, search.png, summary.txt\n";
    if (table) *table = dir + "/nights.csv";
    return 0;
}

}  // namespace wayward
