// solution.toml: writing a Solution and reading it back (the fields each command needs), with every value
// checked where it is read; see solve.hpp.
#include "sim/solve/solve.hpp"

#include <cmath>
#include <sstream>
#include <string>
#include <vector>

#include <toml++/toml.h>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"
#include "sim/io/toml_reader.hpp"

namespace wayward {

std::string solution_toml(const Solution& s) {
    toml::table root;
    toml::table head;
    head.insert("exercise_sha256", s.exercise_sha256);
    head.insert("scenario", s.scenario_name);
    head.insert("priors", s.priors);
    head.insert("chi2", s.chi2);
    head.insert("dof", static_cast<int64_t>(s.dof));
    head.insert("covariance_scaled", s.covariance_scaled);
    head.insert("spacing_rule_au", s.spacing_rule_au);
    head.insert("model_runs", static_cast<int64_t>(s.model_runs));
    head.insert("detection_delta_chi2", s.detection.delta_chi2);
    head.insert("detection_threshold", s.detection.threshold);
    head.insert("detection_parameters", static_cast<int64_t>(s.detection.parameters));
    head.insert("detection_trials", static_cast<int64_t>(s.detection.trials));
    // Goodness of fit, where every sigma was recorded (absent otherwise); the fallback to eccentric and tilted
    // starts after a poor fit, where it ran.
    if (s.goodness.applies) head.insert("goodness_p_value", s.goodness.p_value);
    head.insert("covariance_widened", s.covariance_widened);
    head.insert("starts", static_cast<int64_t>(s.starts));
    if (s.shape_screens > 0) {
        head.insert("shape_fallback_chi2", s.shape_fallback_chi2);
        head.insert("shape_screens", static_cast<int64_t>(s.shape_screens));
        head.insert("shape_starts", static_cast<int64_t>(s.shape_starts));
        head.insert("shape_start_won", s.shape_start_won);
    }
    root.insert("solution", head);
    toml::table h;
    const Elements el = s.best.elements();
    h.insert("mass", s.best.mass);
    h.insert("mass_sigma", s.mass_sigma);
    h.insert("a_au", s.best.semi_major_axis);
    h.insert("a_sigma_au", s.distance_sigma_au);
    h.insert("e", el.eccentricity);
    h.insert("varpi_deg", wrap_two_pi(el.ascending_node + el.arg_periapsis) / deg);
    h.insert("mean_longitude_deg", wrap_two_pi(s.best.mean_longitude) / deg);
    h.insert("i_deg", el.inclination / deg);
    h.insert("node_deg", el.ascending_node / deg);
    h.insert("mass_distance_correlation", s.mass_distance_correlation);
    root.insert("hidden", h);
    const Prediction& p = s.prediction;
    toml::table pt;
    pt.insert("epoch_year", p.epoch_year);
    pt.insert("lon_deg", p.lon / deg);
    pt.insert("lat_deg", p.lat / deg);
    pt.insert("distance_au", p.distance_au);
    pt.insert("cov_lon_lon_arcsec2", p.cov_ll);
    pt.insert("cov_lon_lat_arcsec2", p.cov_lb);
    pt.insert("cov_lat_lat_arcsec2", p.cov_bb);
    pt.insert("semi_major_arcmin", p.semi_major_arcsec / 60.0);
    pt.insert("semi_minor_arcmin", p.semi_minor_arcsec / 60.0);
    pt.insert("orientation_deg", p.orientation_deg);
    pt.insert("sampled_semi_major_arcmin", p.sampled_semi_major_arcsec / 60.0);
    pt.insert("sampled_semi_minor_arcmin", p.sampled_semi_minor_arcsec / 60.0);
    pt.insert("radius90_arcmin", p.radius90_arcsec / 60.0);
    pt.insert("samples", static_cast<int64_t>(p.samples_used));
    pt.insert("samples_in_full", static_cast<int64_t>(p.samples_in_full));
    toml::array years, lons, lats;
    for (const TrackPoint& t : p.track) {
        years.push_back(t.year);
        lons.push_back(t.lon / deg);
        lats.push_back(t.lat / deg);
    }
    pt.insert("track_year", years);
    pt.insert("track_lon_deg", lons);
    pt.insert("track_lat_deg", lats);
    // The virtual bodies: each sample's place at the epoch and its weight, so that search, score and the viewer
    // use the solve's own probability map.
    if (!p.sample_lon.empty() && p.sample_lon.size() == p.sample_lat.size() && p.sample_lon.size() == p.sample_weight.size()) {
        toml::array sl, sb, sw;
        for (std::size_t k = 0; k < p.sample_lon.size(); ++k) {
            sl.push_back(p.sample_lon[k] / deg);
            sb.push_back(p.sample_lat[k] / deg);
            sw.push_back(p.sample_weight[k]);
        }
        pt.insert("sample_lon_deg", sl);
        pt.insert("sample_lat_deg", sb);
        pt.insert("sample_weight", sw);
        if (p.sample_group.size() == p.sample_lon.size()) {  // other minima mixed in (solve/mixture.hpp)
            toml::array sg;
            for (int g : p.sample_group) sg.push_back(static_cast<int64_t>(g));
            pt.insert("sample_minimum", sg);
        }
    }
    if (std::isfinite(p.effective_samples)) pt.insert("effective_samples", p.effective_samples);
    root.insert("prediction", pt);
    toml::array mins;
    for (const Minimum& m : s.minima) {
        toml::table t;
        t.insert("a_au", m.orbit.semi_major_axis);
        t.insert("mean_longitude_deg", wrap_two_pi(m.orbit.mean_longitude) / deg);
        t.insert("mass", m.orbit.mass);
        t.insert("e", std::hypot(m.orbit.k, m.orbit.h));
        t.insert("chi2", m.chi2);
        t.insert("converged", m.converged);
        if (std::isfinite(m.probability)) t.insert("probability", m.probability);
        if (m.prediction) {
            t.insert("predicted_lon_deg", m.prediction->lon / deg);
            t.insert("predicted_lat_deg", m.prediction->lat / deg);
            t.insert("semi_major_arcmin", m.prediction->semi_major_arcsec / 60.0);
            t.insert("semi_minor_arcmin", m.prediction->semi_minor_arcsec / 60.0);
        }
        toml::array flags;
        for (const std::string& f : m.flags) flags.push_back(f);
        t.insert("flags", flags);
        mins.push_back(t);
    }
    root.insert("minimum", mins);
    std::ostringstream ss;
    ss << "# Wayward solution: the hidden body inferred from the observations, and its predicted place.\n"
       << detail::toml_text_shortest(root) << "\n";
    return ss.str();
}

void read_virtual_bodies(detail::TableReader& r, Prediction& p, bool stated) {
    const auto ls = r.numbers("sample_lon_deg").value_or(std::vector<double>{});
    const auto bs = r.numbers("sample_lat_deg").value_or(std::vector<double>{});
    auto ws = r.numbers("sample_weight").value_or(std::vector<double>{});
    if (stated && ws.empty() && !ls.empty()) ws.assign(ls.size(), 1.0);  // a stated set without weights: equal
    if (ls.size() != bs.size() || ls.size() != ws.size()) r.fail("sample_lon_deg", "the sample arrays differ in length");
    constexpr std::size_t max_bodies = 100000;
    if (ls.size() > max_bodies) r.fail("sample_lon_deg", "holds more than " + std::to_string(max_bodies) + " samples");
    if (!stated && !ls.empty() && ls.size() != static_cast<std::size_t>(p.samples_used))
        r.fail("sample_lon_deg", "holds " + std::to_string(ls.size()) + " samples but samples = " + std::to_string(p.samples_used));
    double total = 0.0, total_sq = 0.0;
    for (std::size_t k = 0; k < ls.size(); ++k) {
        if (!std::isfinite(ls[k])) r.fail("sample_lon_deg", "entry " + std::to_string(k + 1) + " is not a finite number");
        if (!(bs[k] >= -90.0 && bs[k] <= 90.0)) r.fail("sample_lat_deg", "entry " + std::to_string(k + 1) + " must be in [-90, 90]");
        if (!(ws[k] >= 0.0 && (stated ? std::isfinite(ws[k]) : ws[k] <= 1.0)))
            r.fail("sample_weight", "entry " + std::to_string(k + 1) + (stated ? " must be a finite number >= 0" : " must be in [0, 1]"));
        total += ws[k];
        total_sq += ws[k] * ws[k];
    }
    if (!ls.empty() && !stated && !(std::abs(total - 1.0) <= 1e-6)) r.fail("sample_weight", "the weights must add up to 1");
    if (!ls.empty() && stated && !(total > 0.0)) r.fail("sample_weight", "the weights add up to zero");
    for (std::size_t k = 0; k < ls.size(); ++k) {
        p.sample_lon.push_back(wrap_two_pi(ls[k] * deg));
        p.sample_lat.push_back(bs[k] * deg);
        p.sample_weight.push_back(stated ? ws[k] / total : ws[k]);
    }
    if (!stated && r.has("sample_minimum")) {
        // Which minimum each virtual body belongs to (0: the best, i: the solution's (i+1)-th minimum); whole numbers.
        const auto gs = r.numbers("sample_minimum").value_or(std::vector<double>{});
        if (gs.size() != ls.size()) r.fail("sample_minimum", "holds " + std::to_string(gs.size()) + " entries for " + std::to_string(ls.size()) + " samples");
        for (std::size_t k = 0; k < gs.size(); ++k) {
            if (!(gs[k] >= 0.0 && gs[k] <= 1000.0 && gs[k] == std::floor(gs[k])))
                r.fail("sample_minimum", "entry " + std::to_string(k + 1) + " must be a whole number in [0, 1000]");
            p.sample_group.push_back(static_cast<int>(gs[k]));
        }
        if (!gs.empty() && gs.front() != 0.0) r.fail("sample_minimum", "the best minimum's own samples come first");
    }
    if (stated && !ls.empty()) {
        // A stated set of samples is the region itself (samples_describe_region), as a solve's are where its map
        // is not linear.
        p.samples_used = p.samples_in_full = static_cast<int>(ls.size());
        p.effective_samples = total * total / total_sq;
    }
    if (!stated && r.has("effective_samples")) {
        p.effective_samples = r.number_or("effective_samples", NAN);
        if (!(p.effective_samples >= 0.0 && p.effective_samples <= static_cast<double>(std::max(p.samples_used, 1)) * (1.0 + 1e-9)))
            r.fail("effective_samples", "must be between 0 and the number of samples");
    }
}

Solution load_solution(const std::string& path) {
    const toml::table root_t = detail::parse_toml(detail::read_text_file(path), path);
    detail::TableReader root(root_t, path, "");
    Solution s;
    const toml::table* head = root.table("solution");
    if (!head) throw InputError(path, 1, "solution", "the [solution] table is missing: is this a Wayward solution?");
    {
        detail::TableReader r(*head, path, "solution");
        s.exercise_sha256 = r.required_string("exercise_sha256");
        s.scenario_name = r.string("scenario").value_or("");
        s.priors = r.string("priors").value_or("");
        s.chi2 = r.number_or("chi2", 0.0);
        s.dof = static_cast<std::size_t>(r.integer_in("dof", 0, 1LL << 40).value_or(0));
        s.covariance_scaled = r.boolean("covariance_scaled").value_or(false);
        s.spacing_rule_au = r.number_or("spacing_rule_au", 0.0);
        s.model_runs = static_cast<int>(r.integer_in("model_runs", 0, 1LL << 30).value_or(0));
        // (Absent in files from before the detection test: threshold 0, which counts as detected.)
        s.detection.delta_chi2 = r.number_or("detection_delta_chi2", 0.0);
        s.detection.threshold = r.number_or("detection_threshold", 0.0);
        if (!std::isfinite(s.detection.delta_chi2)) r.fail("detection_delta_chi2", "must be a finite number");
        if (!(s.detection.threshold >= 0.0 && s.detection.threshold < 1e12)) r.fail("detection_threshold", "must be in [0, 1e12)");
        s.detection.parameters = static_cast<int>(r.integer_in("detection_parameters", 0, 64).value_or(0));
        s.detection.trials = static_cast<int>(r.integer_in("detection_trials", 1, 1LL << 30).value_or(1));
        if (const std::optional<double> p = r.number("goodness_p_value")) {
            if (!(*p >= 0.0 && *p <= 1.0)) r.fail("goodness_p_value", "must be a probability in [0, 1]");
            s.goodness.applies = true;
            s.goodness.chi2 = s.chi2;
            s.goodness.dof = s.dof;
            s.goodness.p_value = *p;
        }
        s.covariance_widened = r.boolean("covariance_widened").value_or(false);
        s.starts = static_cast<int>(r.integer_in("starts", 0, 1 << 20).value_or(0));
        s.shape_fallback_chi2 = r.number_or("shape_fallback_chi2", 0.0);
        if (!(std::isfinite(s.shape_fallback_chi2) && s.shape_fallback_chi2 >= 0.0)) r.fail("shape_fallback_chi2", "must be a finite chi2 >= 0");
        s.shape_screens = static_cast<int>(r.integer_in("shape_screens", 0, 1 << 20).value_or(0));
        s.shape_starts = static_cast<int>(r.integer_in("shape_starts", 0, 1 << 20).value_or(0));
        s.shape_start_won = r.boolean("shape_start_won").value_or(false);
        r.finish();
    }
    if (const toml::table* h = root.table("hidden")) {
        detail::TableReader r(*h, path, "hidden");
        s.best.mass = r.number_or("mass", 0.0);
        s.mass_sigma = r.number_or("mass_sigma", 0.0);
        s.best.semi_major_axis = r.number_or("a_au", 0.0);
        s.distance_sigma_au = r.number_or("a_sigma_au", 0.0);
        const double e = r.number_or("e", 0.0), varpi = r.number_or("varpi_deg", 0.0) * deg;
        s.best.k = e * std::cos(varpi);
        s.best.h = e * std::sin(varpi);
        s.best.mean_longitude = r.number_or("mean_longitude_deg", 0.0) * deg;
        s.best.inclination = r.number_or("i_deg", 0.0) * deg;
        s.best.node = r.number_or("node_deg", 0.0) * deg;
        s.mass_distance_correlation = r.number_or("mass_distance_correlation", 0.0);
        r.finish();
    }
    const toml::table* pt = root.table("prediction");
    if (!pt) throw InputError(path, 1, "prediction", "the [prediction] table is missing");
    {
        detail::TableReader r(*pt, path, "prediction");
        Prediction& p = s.prediction;
        p.epoch_year = r.required_number("epoch_year");
        if (!(std::abs(p.epoch_year) <= 1e6)) r.fail("epoch_year", "must be a year within a million years of 0");
        p.lon = r.required_number("lon_deg") * deg;
        p.lat = r.required_number("lat_deg") * deg;
        if (!(p.lat >= -pi / 2 && p.lat <= pi / 2)) r.fail("lat_deg", "must be in [-90, 90]");
        p.distance_au = r.number_or("distance_au", 0.0);
        p.cov_ll = r.number_or("cov_lon_lon_arcsec2", 0.0);
        p.cov_lb = r.number_or("cov_lon_lat_arcsec2", 0.0);
        p.cov_bb = r.number_or("cov_lat_lat_arcsec2", 0.0);
        p.semi_major_arcsec = r.number_or("semi_major_arcmin", 0.0) * 60.0;
        p.semi_minor_arcsec = r.number_or("semi_minor_arcmin", 0.0) * 60.0;
        p.orientation_deg = r.number_or("orientation_deg", 0.0);
        p.sampled_semi_major_arcsec = r.number_or("sampled_semi_major_arcmin", 0.0) * 60.0;
        p.sampled_semi_minor_arcsec = r.number_or("sampled_semi_minor_arcmin", 0.0) * 60.0;
        p.radius90_arcsec = r.number_or("radius90_arcmin", 0.0) * 60.0;
        p.samples_used = static_cast<int>(r.integer_in("samples", 0, 1LL << 30).value_or(0));
        p.samples_in_full = static_cast<int>(r.integer_in("samples_in_full", 0, p.samples_used).value_or(p.samples_used));
        const auto ys = r.numbers("track_year").value_or(std::vector<double>{});
        const auto ls = r.numbers("track_lon_deg").value_or(std::vector<double>{});
        const auto bs = r.numbers("track_lat_deg").value_or(std::vector<double>{});
        if (ys.size() != ls.size() || ys.size() != bs.size()) r.fail("track_year", "the track arrays differ in length");
        // The luck curve steps along the track: years must rise by at least a thousandth of a year (the solver
        // writes quarter years), or scoring would loop without end; the length is bounded for the same reason.
        constexpr std::size_t max_track_points = 100000;
        if (ys.size() > max_track_points) r.fail("track_year", "holds more than " + std::to_string(max_track_points) + " points");
        for (std::size_t k = 1; k < ys.size(); ++k)
            if (!(ys[k] >= ys[k - 1] + 1e-3))
                r.fail("track_year", "the track's years must increase (by at least 0.001 year); entry " + std::to_string(k + 1) +
                                         " does not");
        for (std::size_t k = 0; k < ys.size(); ++k) {
            if (!(std::abs(ys[k]) <= 1e6)) r.fail("track_year", "holds a year more than a million years from 0");
            if (!(bs[k] >= -90.0 && bs[k] <= 90.0)) r.fail("track_lat_deg", "must be in [-90, 90]");
            p.track.push_back({ys[k], ls[k] * deg, bs[k] * deg});
        }
        read_virtual_bodies(r, p, false);
        r.finish();
    }
    for (const toml::table* t : root.tables("minimum")) {
        detail::TableReader r(*t, path, "minimum");
        Minimum m;
        m.orbit.semi_major_axis = r.number_or("a_au", 0.0);
        m.orbit.mean_longitude = r.number_or("mean_longitude_deg", 0.0) * deg;
        m.orbit.mass = r.number_or("mass", 0.0);
        const double e = r.number_or("e", 0.0);
        m.orbit.k = e;
        m.chi2 = r.number_or("chi2", 0.0);
        m.converged = r.boolean("converged").value_or(false);
        m.probability = r.number_or("probability", NAN);
        if (r.has("predicted_lon_deg")) {
            Prediction p;
            p.lon = wrap_two_pi(r.number_or("predicted_lon_deg", 0.0) * deg);
            p.lat = r.number_or("predicted_lat_deg", 0.0) * deg;
            p.semi_major_arcsec = r.number_or("semi_major_arcmin", 0.0) * 60.0;
            p.semi_minor_arcsec = r.number_or("semi_minor_arcmin", 0.0) * 60.0;
            m.prediction = p;
        }
        m.flags = r.strings("flags").value_or(std::vector<std::string>{});
        r.finish();
        s.minima.push_back(m);
    }
    root.finish();
    return s;
}

}  // namespace wayward
