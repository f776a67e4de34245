// Exercise folder I/O: brief, observation log and the sealed answer key. See exercise.hpp.
#include "sim/exercise.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <sstream>

#include <toml++/toml.h>

#include "sim/errors.hpp"
#include "sim/fileio.hpp"
#include "sim/hash.hpp"
#include "sim/toml_reader.hpp"
#include "sim/units.hpp"

namespace wayward {

namespace fs = std::filesystem;
using detail::TableReader;

std::size_t Brief::observer_index() const {
    for (std::size_t i = 0; i < planets.size(); ++i)
        if (planets[i].observer) return i;
    throw InputError(file, 0, "planet", "the brief names no observer");
}

ExercisePaths exercise_paths(const std::string& dir, const std::string& key_dir) {
    return {dir, key_dir.empty() ? dir + "/answer-key" : key_dir};
}

System AnswerKey::system() const { return make_system(star_name, star_mass, bodies); }

std::optional<std::size_t> AnswerKey::hidden_index() const {
    for (std::size_t i = 0; i < bodies.size(); ++i)
        if (bodies[i].role == Role::hidden) return i + 1;
    return std::nullopt;
}

Brief make_brief(const Scenario& sc, const Truth& truth, std::uint64_t seed) {
    Brief b;
    b.scenario_name = sc.name;
    b.seed = seed;
    b.epoch0_year = sc.epoch0_year;
    b.span_years = sc.span_years;
    b.star_name = truth.system.bodies[0].name;
    b.star_mass = truth.star_mass;
    const ObservingPlan& plan = sc.plan;
    Rng rng = make_rng(seed, "brief");
    const double err = plan.brief_orbit_error_deg * deg;
    for (const DrawnBody& d : truth.bodies) {
        if (d.role != Role::known) continue;
        BriefPlanet p;
        p.name = d.name;
        p.observer = d.observer;
        p.observed = !d.observer && (plan.targets.empty() ||
                                     std::find(plan.targets.begin(), plan.targets.end(), d.name) != plan.targets.end());
        // Draw all numbers for every planet so the streams do not depend on which are perturbed.
        const double g_mass = normal(rng), g_m = normal(rng), g_a = normal(rng), g_e = normal(rng);
        p.mass = d.mass * (1.0 + plan.brief_mass_error * g_mass);
        p.elements = d.elements;
        if (p.observed) {
            // The observer's own orbit and those of planets not in the record are given as they are (the team's
            // earlier work settled them); the observed planets' orbits only approximately, to be fitted.
            p.elements.mean_anomaly = wrap_two_pi(d.elements.mean_anomaly + err * g_m);
            p.elements.semi_major_axis = d.elements.semi_major_axis * (1.0 + 0.1 * err * g_a);
            p.elements.eccentricity = std::abs(d.elements.eccentricity + 0.1 * err * g_e);
        }
        b.planets.push_back(p);
    }
    b.elongation_limit_deg = plan.elongation_limit_deg;
    b.search_epochs_year = plan.search_epochs_year;
    b.field_radius_deg = plan.field_radius_deg;
    for (const Era& e : plan.eras) b.eras.push_back({e.label, e.start_year, e.end_year, e.per_season, e.precision_arcsec, e.records_sigma});
    return b;
}

namespace {

std::string fmt(const char* f, double v) {
    char buf[64];
    std::snprintf(buf, sizeof buf, f, v);
    return buf;
}

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

std::string to_text(const toml::table& t) {
    std::ostringstream ss;
    ss << t << "\n";
    return ss.str();
}

// The inverse of elements_table: a bound orbit's elements in degrees, validated.
Elements read_elements(TableReader& r) {
    Elements el;
    el.semi_major_axis = r.required_number("a");
    if (!(el.semi_major_axis > 0.0)) r.fail("a", "must be positive");
    el.eccentricity = r.required_number("e");
    if (!(el.eccentricity >= 0.0 && el.eccentricity < 1.0)) r.fail("e", "must be in [0, 1)");
    el.inclination = r.required_number("i_deg") * deg;
    el.ascending_node = r.required_number("node_deg") * deg;
    el.arg_periapsis = r.required_number("peri_deg") * deg;
    el.mean_anomaly = r.required_number("mean_anomaly_deg") * deg;
    return el;
}

std::string brief_text(const Brief& b) {
    toml::table root;
    toml::table ex;
    ex.insert("scenario", b.scenario_name);
    ex.insert("seed", static_cast<int64_t>(b.seed));
    ex.insert("epoch0_year", b.epoch0_year);
    ex.insert("span_years", b.span_years);
    ex.insert("answer_key_sha256", b.answer_key_sha256);
    root.insert("exercise", ex);
    toml::table star;
    star.insert("name", b.star_name);
    star.insert("mass", b.star_mass);
    root.insert("star", star);
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
    return "# Wayward exercise brief: what the team knows. The answer key is sealed; its SHA-256 is below.\n" + to_text(root);
}

std::string true_positions_csv(const ObservationSet& obs, double epoch0_year) {
    std::string s = "time_days,year,target,true_lon_deg,true_lat_deg,elongation_deg,outlier,systematic_lon_arcsec,systematic_lat_arcsec\n";
    for (std::size_t k = 0; k < obs.records.size(); ++k) {
        const Observation& o = obs.records[k];
        const ObservationTruth& t = obs.truth[k];
        s += fmt("%.8f", o.time_days) + "," + fmt("%.6f", decimal_year(epoch0_year, o.time_days)) + "," + o.target + "," +
             fmt("%.12f", t.true_lon_deg) + "," + fmt("%.12f", t.true_lat_deg) + "," + fmt("%.6f", t.elongation_deg) + "," +
             (t.outlier ? "1" : "0") + "," + fmt("%.6f", t.systematic_lon_arcsec) + "," + fmt("%.6f", t.systematic_lat_arcsec) + "\n";
    }
    return s;
}

std::string answer_key_text(const Scenario& sc, const Truth& truth, const std::string& positions_sha) {
    toml::table root;
    toml::table key;
    key.insert("scenario", sc.name);
    key.insert("seed", static_cast<int64_t>(truth.seed));
    key.insert("draws", static_cast<int64_t>(truth.draws));
    key.insert("true_positions_sha256", positions_sha);
    root.insert("answer_key", key);
    toml::table star;
    star.insert("name", truth.system.bodies[0].name);
    star.insert("mass", truth.star_mass);
    root.insert("star", star);
    toml::array bodies;
    for (const DrawnBody& d : truth.bodies) {
        toml::table t = elements_table(d.elements);
        t.insert("name", d.name);
        t.insert("role", d.role == Role::hidden ? "hidden" : "known");
        t.insert("observer", d.observer);
        t.insert("mass", d.mass);
        t.insert("helio_position_au", vec_array(d.helio.position));
        t.insert("helio_velocity_au_per_day", vec_array(d.helio.velocity));
        bodies.push_back(t);
    }
    root.insert("body", bodies);
    return "# Wayward answer key: the truth. Do not open before the prediction is made.\n" + to_text(root);
}

}  // namespace

std::string format_observations_csv(const std::vector<Observation>& obs, double epoch0_year) {
    std::string s = "time_days,year,target,lon_deg,lat_deg,sigma_lon_arcsec,sigma_lat_arcsec,era\n";
    for (const Observation& o : obs) {
        s += fmt("%.8f", o.time_days) + "," + fmt("%.6f", decimal_year(epoch0_year, o.time_days)) + "," + o.target + "," +
             fmt("%.9f", o.lon_deg) + "," + fmt("%.9f", o.lat_deg) + "," +
             (o.sigma_lon_arcsec ? fmt("%.6g", *o.sigma_lon_arcsec) : "") + "," +
             (o.sigma_lat_arcsec ? fmt("%.6g", *o.sigma_lat_arcsec) : "") + "," + o.era + "\n";
    }
    return s;
}

std::vector<ObserverFix> observer_track_for(const std::vector<Observation>& obs, const Ephemeris& eph, std::size_t observer) {
    std::vector<double> times;
    for (const Observation& o : obs) {
        // The recorded time (6 decimals), so that the track matches the log exactly as a reader parses it.
        times.push_back(std::strtod(fmt("%.8f", o.time_days).c_str(), nullptr));
    }
    std::sort(times.begin(), times.end());
    times.erase(std::unique(times.begin(), times.end()), times.end());
    std::vector<ObserverFix> out;
    for (double t : times) out.push_back({t, eph.position(observer, t) - eph.position(0, t)});
    return out;
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
    std::istringstream in(text);
    std::string line;
    long row = 0;
    while (std::getline(in, line)) {
        ++row;
        if (!line.empty() && line.back() == '\r') line.pop_back();
        if (row == 1) {
            if (line != "time_days,x_au,y_au,z_au") throw InputError(file, 1, "header", "expected the header \"time_days,x_au,y_au,z_au\"");
            continue;
        }
        if (line.empty()) continue;
        double v[4];
        const char* p = line.c_str();
        for (int c = 0; c < 4; ++c) {
            char* end = nullptr;
            v[c] = std::strtod(p, &end);
            static const char* names[] = {"time_days", "x_au", "y_au", "z_au"};
            if (end == p || !std::isfinite(v[c]) || (c < 3 ? *end != ',' : *end != '\0'))
                throw InputError(file, row, names[c], "is not a finite number");
            p = end + 1;
        }
        if (!out.empty() && !(v[0] > out.back().time_days)) throw InputError(file, row, "time_days", "times must increase");
        out.push_back({v[0], Vec3(v[1], v[2], v[3])});
    }
    return out;
}

ExerciseInMemory exercise_in_memory(const Scenario& sc, const Truth& truth, const ObservationSet& obs, const Brief& brief,
                                    const Ephemeris& eph) {
    ExerciseInMemory m;
    m.exercise.dir = "(in memory)";
    m.exercise.brief = brief;
    m.exercise.brief.file = "(in memory)";
    m.exercise.brief.answer_key_sha256 = sha256_hex(answer_key_text(sc, truth, sha256_hex(true_positions_csv(obs, sc.epoch0_year))));
    m.exercise.observations = obs.records;
    for (Observation& o : m.exercise.observations) o.time_days = std::strtod(fmt("%.8f", o.time_days).c_str(), nullptr);
    m.exercise.observer_track = observer_track_for(obs.records, eph, truth.system.observer_index());
    m.key.file = "(in memory)";
    m.key.scenario_name = sc.name;
    m.key.seed = truth.seed;
    m.key.star_name = truth.system.bodies[0].name;
    m.key.star_mass = truth.star_mass;
    m.key.bodies = truth.bodies;
    for (const DrawnBody& d : truth.bodies)
        if (d.role == Role::hidden) m.key.hidden_name = d.name;
    return m;
}

void write_exercise(const ExercisePaths& paths, const Scenario& sc, const Truth& truth, const ObservationSet& obs,
                    const Brief& brief_in, const Ephemeris& eph, bool force) {
    std::error_code ec;
    if (fs::exists(paths.brief()) && !force)
        throw InputError(paths.dir, 0, "--out", "an exercise already exists here; use --force to overwrite it");
    fs::create_directories(paths.dir, ec);
    if (ec) throw InputError(paths.dir, 0, "--out", "cannot create the folder: " + ec.message());
    fs::create_directories(paths.key_dir, ec);
    if (ec) throw InputError(paths.key_dir, 0, "--key-out", "cannot create the folder: " + ec.message());
    // A forced overwrite first removes the old brief, so the folder never pairs an old brief with new data.
    if (force) fs::remove(paths.brief(), ec);

    const std::string positions = true_positions_csv(obs, sc.epoch0_year);
    write_file_atomic(paths.true_positions(), positions);
    const std::string key = answer_key_text(sc, truth, sha256_hex(positions));
    write_file_atomic(paths.answer_key(), key);
    write_file_atomic(paths.observations(), format_observations_csv(obs.records, sc.epoch0_year));
    write_file_atomic(paths.observer_track(), format_observer_csv(observer_track_for(obs.records, eph, truth.system.observer_index())));
    Brief brief = brief_in;
    brief.answer_key_sha256 = sha256_hex(key);
    write_file_atomic(paths.brief(), brief_text(brief));  // last: its presence marks a complete exercise
}

std::vector<Observation> parse_observations_csv(const std::string& text, const std::string& file) {
    std::vector<Observation> out;
    std::istringstream in(text);
    std::string line;
    long row = 0;
    const std::string header = "time_days,year,target,lon_deg,lat_deg,sigma_lon_arcsec,sigma_lat_arcsec,era";
    static const char* names[] = {"time_days", "year", "target", "lon_deg", "lat_deg", "sigma_lon_arcsec", "sigma_lat_arcsec", "era"};
    while (std::getline(in, line)) {
        ++row;
        if (!line.empty() && line.back() == '\r') line.pop_back();
        if (row == 1) {
            if (line != header) throw InputError(file, 1, "header", "expected the header \"" + header + "\"");
            continue;
        }
        if (line.empty()) continue;
        const std::vector<std::string> cells = split_csv_line(line);
        if (cells.size() != 8)
            throw InputError(file, row, "row", "expected 8 columns, found " + std::to_string(cells.size()));
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
            if (s && !(*s > 0.0)) throw InputError(file, row, names[c], "must be positive");
        }
        o.era = cells[7];
        out.push_back(std::move(o));
    }
    if (row == 0) throw InputError(file, 1, "header", "the file is empty");
    return out;
}

Brief load_brief(const std::string& path) {
    const toml::table root_t = detail::parse_toml(detail::read_text_file(path), path);
    TableReader root(root_t, path, "");
    Brief b;
    b.file = path;
    const toml::table* ex = root.table("exercise");
    if (!ex) throw InputError(path, 1, "exercise", "the [exercise] table is missing: is this a Wayward brief?");
    {
        TableReader r(*ex, path, "exercise");
        b.scenario_name = r.required_string("scenario");
        b.seed = static_cast<std::uint64_t>(r.integer("seed").value_or(0));
        b.epoch0_year = r.required_number("epoch0_year");
        b.span_years = r.required_number("span_years");
        b.answer_key_sha256 = r.required_string("answer_key_sha256");
        r.finish();
    }
    const toml::table* star = root.table("star");
    if (!star) throw InputError(path, 1, "star", "the [star] table is missing");
    {
        TableReader r(*star, path, "star");
        b.star_name = r.required_string("name");
        b.star_mass = r.required_number("mass");
        if (!(b.star_mass > 0.0)) r.fail("mass", "must be positive");
        r.finish();
    }
    const auto planets = root.tables("planet");
    for (std::size_t k = 0; k < planets.size(); ++k) {
        TableReader r(*planets[k], path, "planet[" + std::to_string(k + 1) + "]");
        BriefPlanet p;
        p.name = r.required_string("name");
        p.observer = r.boolean("observer").value_or(false);
        p.observed = r.boolean("observed").value_or(false);
        p.mass = r.required_number("mass");
        if (!(p.mass > 0.0)) r.fail("mass", "must be positive");
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
        b.field_radius_deg = r.required_number("field_radius_deg");
        if (!(b.field_radius_deg > 0.0)) r.fail("field_radius_deg", "must be positive");
        const auto eras = r.tables("era");
        for (std::size_t k = 0; k < eras.size(); ++k) {
            TableReader e(*eras[k], path, "observing.era[" + std::to_string(k + 1) + "]");
            BriefEra era;
            era.label = e.required_string("label");
            era.start_year = e.required_number("start_year");
            era.end_year = e.required_number("end_year");
            era.per_season = static_cast<int>(e.integer("per_season").value_or(1));
            era.precision_arcsec = e.number_or("precision_arcsec", 0.0);
            era.records_sigma = e.boolean("records_sigma").value_or(true);
            e.finish();
            b.eras.push_back(era);
        }
        r.finish();
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
    // Every target must be a known planet of the brief, and not the observer.
    for (std::size_t k = 0; k < ex.observations.size(); ++k) {
        const std::string& t = ex.observations[k].target;
        bool ok = false;
        for (const BriefPlanet& bp : ex.brief.planets) ok |= bp.name == t && !bp.observer;
        if (!ok) throw InputError(p.observations(), static_cast<long>(k + 2), "target", "\"" + t + "\" is not a known planet of the brief");
    }
    return ex;
}

AnswerKey open_answer_key(const Brief& brief, const std::string& key_path) {
    const std::string text = detail::read_text_file(key_path);
    if (sha256_hex(text) != brief.answer_key_sha256)
        throw InputError(key_path, 0, "answer_key_sha256",
                         "the answer key does not match the SHA-256 sealed in the brief: it was changed, or it belongs to another exercise");
    const toml::table root_t = detail::parse_toml(text, key_path);
    TableReader root(root_t, key_path, "");
    AnswerKey k;
    k.file = key_path;
    {
        TableReader r(*root.table("answer_key"), key_path, "answer_key");
        k.scenario_name = r.required_string("scenario");
        k.seed = static_cast<std::uint64_t>(r.integer("seed").value_or(0));
        r.integer("draws");
        k.true_positions_sha256 = r.required_string("true_positions_sha256");
        r.finish();
    }
    {
        TableReader r(*root.table("star"), key_path, "star");
        k.star_name = r.required_string("name");
        k.star_mass = r.required_number("mass");
        r.finish();
    }
    const auto bodies = root.tables("body");
    for (std::size_t i = 0; i < bodies.size(); ++i) {
        TableReader r(*bodies[i], key_path, "body[" + std::to_string(i + 1) + "]");
        DrawnBody d;
        d.name = r.required_string("name");
        d.role = r.required_string("role") == "hidden" ? Role::hidden : Role::known;
        d.observer = r.boolean("observer").value_or(false);
        d.mass = r.required_number("mass");
        d.elements = read_elements(r);
        const auto pos = r.numbers("helio_position_au"), vel = r.numbers("helio_velocity_au_per_day");
        if (!pos || pos->size() != 3) r.fail("helio_position_au", "needs three numbers");
        if (!vel || vel->size() != 3) r.fail("helio_velocity_au_per_day", "needs three numbers");
        d.helio.position = Vec3((*pos)[0], (*pos)[1], (*pos)[2]);
        d.helio.velocity = Vec3((*vel)[0], (*vel)[1], (*vel)[2]);
        r.finish();
        if (d.role == Role::hidden) k.hidden_name = d.name;
        k.bodies.push_back(d);
    }
    root.finish();
    return k;
}

System known_model_system(const Brief& brief) {
    std::vector<DrawnBody> bodies;
    const double gm_star = gm_from_mass(brief.star_mass);
    for (const BriefPlanet& p : brief.planets) {
        DrawnBody d{p.name, Role::known, p.observer, p.mass, p.elements, {}};
        d.helio = elements_to_state(p.elements, gm_star + gm_from_mass(p.mass));
        bodies.push_back(d);
    }
    return make_system(brief.star_name, brief.star_mass, bodies);
}

}  // namespace wayward
