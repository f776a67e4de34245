// Exercise folder I/O on the team's side: the brief, the observation log and the observer ephemeris.
// Nothing here sees the truth generator; the sealed key is opened in truth/answer_key.cpp. See exercise.hpp.
#include "sim/exercise/exercise.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <sstream>
#include <tuple>

#include <toml++/toml.h>

#include "sim/base/errors.hpp"
#include "sim/base/format.hpp"
#include "sim/base/units.hpp"
#include "sim/io/fileio.hpp"
#include "sim/io/hash.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/exercise/elements_toml.hpp"

namespace wayward {

namespace fs = std::filesystem;
using detail::TableReader;

std::size_t Brief::observer_index() const {
    for (std::size_t i = 0; i < planets.size(); ++i)
        if (planets[i].observer) return i;
    throw InputError(file, 0, "planet", "the brief names no observer");
}

std::string default_key_dir(const std::string& dir) {
    // Beside the exercise, never inside it: the folder handed to a trainee must not carry the truth.
    fs::path p = fs::path(dir).lexically_normal();
    if (!p.has_filename()) p = p.parent_path();  // "ex/" -> "ex"
    if (p.empty() || p.filename() == "." || p.filename() == "..") p = fs::absolute(p).lexically_normal();
    if (!p.has_filename()) p = p.parent_path();
    if (!p.has_filename()) return "wayward-answer-key";  // the root folder: beside it is nowhere; use the working folder
    return (p.parent_path() / (p.filename().string() + "-answer-key")).string();
}

ExercisePaths exercise_paths(const std::string& dir, const std::string& key_dir) {
    return {dir, key_dir.empty() ? default_key_dir(dir) : key_dir};
}

using detail::fmt;

namespace detail {

toml::array vec_array(const Vec3& v) {
    toml::array a;
    for (int k = 0; k < 3; ++k) a.push_back(v[k]);
    return a;
}

toml::table elements_table(const Elements& el) {
    toml::table t;
    t.insert("a", el.semi_major_axis);
    t.insert("e", el.eccentricity);
    t.insert("i_deg", el.inclination / deg);
    t.insert("node_deg", el.ascending_node / deg);
    t.insert("peri_deg", el.arg_periapsis / deg);
    t.insert("mean_anomaly_deg", el.mean_anomaly / deg);
    return t;
}

std::string toml_text(const toml::table& t) {
    return toml_text_shortest(t) + "\n";
}

// The inverse of elements_table: a bound orbit's elements in degrees, validated.
Elements read_elements(TableReader& r) {
    Elements el;
    el.semi_major_axis = r.required_number("a");
    if (!(el.semi_major_axis > 0.0 && el.semi_major_axis <= 1e5)) r.fail("a", "must be in (0, 1e5] au");
    el.eccentricity = r.required_number("e");
    if (!(el.eccentricity >= 0.0 && el.eccentricity < 1.0)) r.fail("e", "must be in [0, 1)");
    el.inclination = r.required_number("i_deg") * deg;
    el.ascending_node = r.required_number("node_deg") * deg;
    el.arg_periapsis = r.required_number("peri_deg") * deg;
    el.mean_anomaly = r.required_number("mean_anomaly_deg") * deg;
    return el;
}

toml::table star_table(const std::string& name, double mass) {
    toml::table t;
    t.insert("name", name);
    t.insert("mass", mass);
    return t;
}

StarTable read_star_table(TableReader& root) {
    const toml::table* star = root.table("star");
    if (!star) throw InputError(root.file(), 1, "star", "the [star] table is missing");
    TableReader r(*star, root.file(), "star");
    StarTable out;
    out.name = r.required_name("name");
    out.mass = r.required_number("mass");
    if (!(out.mass > 0.0)) r.fail("mass", "must be positive (solar masses)");
    r.finish();
    return out;
}

}  // namespace detail

using detail::elements_table;
using detail::read_elements;
using detail::toml_text;
using detail::vec_array;

std::string format_brief(const Brief& b) {
    toml::table root;
    toml::table ex;
    ex.insert("scenario", b.scenario_name);
    ex.insert("epoch0_year", b.epoch0_year);
    ex.insert("span_years", b.span_years);
    if (b.imported()) {
        ex.insert("record_sha256", b.record_sha256);
        ex.insert("frame", b.frame);
    } else {
        ex.insert("answer_key_sha256", b.answer_key_sha256);
    }
    root.insert("exercise", ex);
    root.insert("star", detail::star_table(b.star_name, b.star_mass));
    toml::array planets;
    for (const BriefPlanet& p : b.planets) {
        toml::table t = elements_table(p.elements);
        t.insert("name", p.name);
        t.insert("observer", p.observer);
        t.insert("observed", p.observed);
        t.insert("mass", p.mass);
        planets.push_back(t);
    }
    root.insert("planet", planets);
    toml::table obs;
    obs.insert("elongation_limit_deg", b.elongation_limit_deg);
    toml::array epochs;
    for (double y : b.search_epochs_year) epochs.push_back(y);
    obs.insert("search_epochs_year", epochs);
    obs.insert("field_radius_deg", b.field_radius_deg);
    toml::array eras;
    for (const BriefEra& e : b.eras) {
        toml::table t;
        t.insert("label", e.label);
        t.insert("start_year", e.start_year);
        t.insert("end_year", e.end_year);
        t.insert("per_season", static_cast<int64_t>(e.per_season));
        t.insert("precision_arcsec", e.precision_arcsec);
        t.insert("records_sigma", e.records_sigma);
        eras.push_back(t);
    }
    obs.insert("era", eras);
    root.insert("observing", obs);
    if (b.telescope) root.insert("telescope", detail::telescope_table(*b.telescope));
    if (b.imported())
        return "# Wayward exercise brief, imported from a survey record: what the team knows. There is no answer key.\n"
               "# Reference frame: the ecliptic and equinox of J2000.0 (from ICRS); times are TDB; the record's SHA-256 is below.\n" +
               toml_text(root);
    return "# Wayward exercise brief: what the team knows. The answer key is sealed; its SHA-256 is below.\n" + toml_text(root);
}

std::string format_observations_csv(const std::vector<Observation>& obs, double epoch0_year) {
    std::string s = "time_days,year,target,lon_deg,lat_deg,sigma_lon_arcsec,sigma_lat_arcsec,era\n";
    for (const Observation& o : obs) {
        s += fmt("%.8f", o.time_days) + "," + fmt("%.6f", decimal_year(epoch0_year, o.time_days)) + "," + csv_cell(o.target) + "," +
             fmt("%.9f", o.lon_deg) + "," + fmt("%.9f", o.lat_deg) + "," +
             (o.sigma_lon_arcsec ? fmt("%.6g", *o.sigma_lon_arcsec) : "") + "," +
             (o.sigma_lat_arcsec ? fmt("%.6g", *o.sigma_lat_arcsec) : "") + "," + csv_cell(o.era) + "\n";
    }
    return s;
}

std::string format_observer_csv(const std::vector<ObserverFix>& track) {
    std::string s = "time_days,x_au,y_au,z_au\n";
    for (const ObserverFix& f : track)
        s += fmt("%.8f", f.time_days) + "," + fmt("%.13f", f.position.x()) + "," + fmt("%.13f", f.position.y()) + "," +
             fmt("%.13f", f.position.z()) + "\n";
    return s;
}

std::vector<ObserverFix> parse_observer_csv(const std::string& text, const std::string& file) {
    std::vector<ObserverFix> out;
    static const char* names[] = {"time_days", "x_au", "y_au", "z_au"};
    for (const auto& [row, cells] : read_csv_rows(text, file, "time_days,x_au,y_au,z_au", 4)) {
        double v[4];
        for (int c = 0; c < 4; ++c) {
            char* end = nullptr;
            v[c] = std::strtod(cells[c].c_str(), &end);
            if (end == cells[c].c_str() || !std::isfinite(v[c]) || *end != '\0') throw InputError(file, row, names[c], "is not a finite number");
        }
        if (!out.empty() && !(v[0] > out.back().time_days)) throw InputError(file, row, "time_days", "times must increase");
        out.push_back({v[0], Vec3(v[1], v[2], v[3])});
    }
    return out;
}

std::vector<Observation> parse_observations_csv(const std::string& text, const std::string& file) {
    std::vector<Observation> out;
    const std::string header = "time_days,year,target,lon_deg,lat_deg,sigma_lon_arcsec,sigma_lat_arcsec,era";
    static const char* names[] = {"time_days", "year", "target", "lon_deg", "lat_deg", "sigma_lon_arcsec", "sigma_lat_arcsec", "era"};
    for (const CsvRow& csv_row : read_csv_rows(text, file, header, 8)) {
        // Named copies, not structured bindings: a lambda below captures them.
        const long row = csv_row.line;
        const std::vector<std::string>& cells = csv_row.cells;
        auto number = [&](std::size_t c, bool optional) -> std::optional<double> {
            if (cells[c].empty()) {
                if (optional) return std::nullopt;
                throw InputError(file, row, names[c], "is empty");
            }
            char* end = nullptr;
            const double v = std::strtod(cells[c].c_str(), &end);
            if (end == cells[c].c_str() || *end != '\0' || !std::isfinite(v))
                throw InputError(file, row, names[c], "\"" + cells[c] + "\" is not a finite number");
            return v;
        };
        Observation o;
        o.time_days = *number(0, false);
        number(1, false);
        o.target = cells[2];
        if (o.target.empty()) throw InputError(file, row, "target", "is empty");
        o.lon_deg = *number(3, false);
        o.lat_deg = *number(4, false);
        if (!(o.lon_deg >= 0.0 && o.lon_deg < 360.0)) throw InputError(file, row, "lon_deg", "must be in [0, 360)");
        if (!(o.lat_deg >= -90.0 && o.lat_deg <= 90.0)) throw InputError(file, row, "lat_deg", "must be in [-90, 90]");
        o.sigma_lon_arcsec = number(5, true);
        o.sigma_lat_arcsec = number(6, true);
        for (std::size_t c : {std::size_t{5}, std::size_t{6}}) {
            const auto& s = c == 5 ? o.sigma_lon_arcsec : o.sigma_lat_arcsec;
            // Below a micro-arcsecond the weight 1/sigma^2 overflows; no record is that good.
            if (s && !(*s >= 1e-6 && *s <= 1e6)) throw InputError(file, row, names[c], "must be in [1e-6, 1e6] arcsec");
        }
        o.era = cells[7];
        if (!o.era.empty() && !detail::name_problem(o.era).empty())
            throw InputError(file, row, "era", detail::name_problem(o.era));
        o.line = row;
        out.push_back(std::move(o));
    }
    if (out.empty()) throw InputError(file, 2, "row", "the log holds no observations");
    // The same target recorded twice at the same time is a copied row, not a second measurement.
    std::vector<std::size_t> order(out.size());
    for (std::size_t k = 0; k < order.size(); ++k) order[k] = k;
    std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
        return std::tie(out[a].target, out[a].time_days, out[a].line) < std::tie(out[b].target, out[b].time_days, out[b].line);
    });
    for (std::size_t k = 1; k < order.size(); ++k) {
        const Observation& a = out[order[k - 1]];
        const Observation& b = out[order[k]];
        if (a.target == b.target && a.time_days == b.time_days)
            throw InputError(file, b.line, "time_days", "a second observation of " + b.target + " at the same time (line " +
                                                            std::to_string(a.line) + "): a duplicated row?");
    }
    return out;
}

Brief load_brief(const std::string& path) { return parse_brief(detail::read_text_file(path), path); }

Brief parse_brief(const std::string& text, const std::string& path) {
    const toml::table root_t = detail::parse_toml(text, path);
    TableReader root(root_t, path, "");
    Brief b;
    b.file = path;
    const toml::table* ex = root.table("exercise");
    if (!ex) throw InputError(path, 1, "exercise", "the [exercise] table is missing: is this a Wayward brief?");
    {
        TableReader r(*ex, path, "exercise");
        b.scenario_name = r.required_string("scenario");
        // Briefs written before the seal carried the seed; it is read past, never kept (the brief must not hold
        // what regenerates the truth).
        r.integer("seed");
        b.epoch0_year = r.required_number("epoch0_year");
        if (!(std::abs(b.epoch0_year) <= 1e6)) r.fail("epoch0_year", "must be a year within a million years of 0");
        b.span_years = r.required_number("span_years");
        if (!(b.span_years > 0.0 && b.span_years <= 5000.0)) r.fail("span_years", "must be in (0, 5000] years");
        // An invented exercise names its sealed answer key; an imported record has none, and names its files.
        if (r.has("record_sha256")) {
            if (r.has("answer_key_sha256")) r.fail("record_sha256", "a brief names an answer key or a record, not both");
            b.record_sha256 = r.required_string("record_sha256");
            b.frame = r.required_string("frame");
            if (b.frame != ecliptic_j2000_frame) r.fail("frame", std::string("must be \"") + ecliptic_j2000_frame + "\"");
        } else {
            b.answer_key_sha256 = r.required_string("answer_key_sha256");
        }
        r.finish();
    }
    const detail::StarTable star = detail::read_star_table(root);
    b.star_name = star.name;
    b.star_mass = star.mass;
    const auto planets = root.tables("planet");
    for (std::size_t k = 0; k < planets.size(); ++k) {
        TableReader r(*planets[k], path, "planet[" + std::to_string(k + 1) + "]");
        BriefPlanet p;
        p.name = r.required_name("name");
        p.observer = r.boolean("observer").value_or(false);
        p.observed = r.boolean("observed").value_or(false);
        p.mass = r.required_number("mass");
        if (!(p.mass > 0.0 && p.mass < 0.1)) r.fail("mass", "must be positive and below 0.1 solar masses");
        p.elements = read_elements(r);
        r.finish();
        b.planets.push_back(p);
    }
    const toml::table* obs = root.table("observing");
    if (!obs) throw InputError(path, 1, "observing", "the [observing] table is missing");
    {
        TableReader r(*obs, path, "observing");
        b.elongation_limit_deg = r.required_number("elongation_limit_deg");
        b.search_epochs_year = r.numbers("search_epochs_year").value_or(std::vector<double>{});
        if (b.search_epochs_year.empty()) r.fail("search_epochs_year", "is required");
        for (double y : b.search_epochs_year)
            if (!(y >= b.epoch0_year && y <= b.epoch0_year + b.span_years))
                r.fail("search_epochs_year", "must lie within the exercise's span");
        b.field_radius_deg = r.required_number("field_radius_deg");
        if (!(b.field_radius_deg > 0.0 && b.field_radius_deg <= 90.0)) r.fail("field_radius_deg", "must be in (0, 90] degrees");
        const auto eras = r.tables("era");
        for (std::size_t k = 0; k < eras.size(); ++k) {
            TableReader e(*eras[k], path, "observing.era[" + std::to_string(k + 1) + "]");
            BriefEra era;
            era.label = e.required_name("label");
            era.start_year = e.required_number("start_year");
            era.end_year = e.required_number("end_year");
            era.per_season = static_cast<int>(e.integer_in("per_season", 1, 1000).value_or(1));
            era.precision_arcsec = e.number_or("precision_arcsec", 0.0);
            era.records_sigma = e.boolean("records_sigma").value_or(true);
            e.finish();
            b.eras.push_back(era);
        }
        r.finish();
    }
    if (const toml::table* tel = root.table("telescope")) {
        TableReader r(*tel, path, "telescope");
        b.telescope = detail::read_telescope(r);
    }
    root.finish();
    int observers = 0;
    for (const BriefPlanet& p : b.planets) observers += p.observer ? 1 : 0;
    if (observers != 1) throw InputError(path, 1, "planet", "the brief must name exactly one observer planet");
    return b;
}

Exercise load_exercise(const std::string& dir) {
    const ExercisePaths p = exercise_paths(dir);
    if (!fs::exists(p.brief()))
        throw InputError(p.brief(), 0, "", "no exercise here (brief.toml is missing; make one with `wayward new`)");
    Exercise ex;
    ex.dir = dir;
    ex.brief = load_brief(p.brief());
    ex.observations = parse_observations_csv(detail::read_text_file(p.observations()), p.observations());
    ex.observer_track = parse_observer_csv(detail::read_text_file(p.observer_track()), p.observer_track());
    // Every target must be a known planet of the brief, and not the observer; every time inside the brief's span
    // (a time far outside would make the model integrate, and allocate, for centuries that are not there).
    const double span_days = ex.brief.span_years * julian_year_days;
    for (const Observation& o : ex.observations) {
        const std::string& t = o.target;
        bool ok = false;
        for (const BriefPlanet& bp : ex.brief.planets) ok |= bp.name == t && !bp.observer;
        if (!ok) throw InputError(p.observations(), o.line, "target", "\"" + t + "\" is not a known planet of the brief");
        if (!(o.time_days >= 0.0 && o.time_days <= span_days))
            throw InputError(p.observations(), o.line, "time_days",
                             fmt("%.8g", o.time_days) + " is outside the brief's span [0, " + fmt("%.8g", span_days) + "] days (" +
                                 p.brief() + ": span_years)");
    }
    for (const ObserverFix& f : ex.observer_track)
        if (!(f.time_days >= 0.0 && f.time_days <= span_days))
            throw InputError(p.observer_track(), 0, "time_days",
                             fmt("%.8g", f.time_days) + " is outside the brief's span [0, " + fmt("%.8g", span_days) + "] days");
    return ex;
}

System known_model_system(const Brief& brief) {
    std::vector<HelioBody> bodies;
    const double gm_star = gm_from_mass(brief.star_mass);
    for (const BriefPlanet& p : brief.planets)
        bodies.push_back({p.name, Role::known, p.observer, p.mass, elements_to_state(p.elements, gm_star + gm_from_mass(p.mass))});
    return system_from_helio(brief.star_name, brief.star_mass, bodies);
}

}  // namespace wayward
