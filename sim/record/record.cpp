#include "sim/record/record.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <map>
#include <sstream>
#include <stdexcept>

#include "sim/base/errors.hpp"
#include "sim/base/format.hpp"
#include "sim/base/units.hpp"
#include "sim/exercise/elements_toml.hpp"
#include "sim/io/fileio.hpp"
#include "sim/io/hash.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/record/sky_frames.hpp"

namespace wayward {

namespace fs = std::filesystem;
using detail::fmt;
using detail::TableReader;

namespace {

const char* const positions_header = "time,target,ra,dec,sigma_ra_arcsec,sigma_dec_arcsec,era";
const char* const observer_header = "time,x_au,y_au,z_au";

// A time field of record.toml: a Julian date (number or text) or an ISO date (text), in the record's scale.
JulianDate read_time(TableReader& r, const std::string& key, TimeScale scale, const toml::node* node) {
    std::string text;
    if (const auto* s = node->as_string()) text = s->get();
    else if (const auto* f = node->as_floating_point()) text = fmt("%.17g", f->get());
    else if (const auto* i = node->as_integer()) text = std::to_string(i->get());
    else r.fail(key, "must be a Julian date or an ISO date (YYYY-MM-DD or YYYY-MM-DDTHH:MM:SS)");
    try {
        return tdb_from_time_text(text, scale);
    } catch (const std::invalid_argument& e) {
        r.fail(key, e.what());
    }
}

std::optional<double> optional_number(const std::string& cell, const std::string& file, long row, const std::string& field) {
    if (cell.empty()) return std::nullopt;
    char* end = nullptr;
    const double v = std::strtod(cell.c_str(), &end);
    if (end == cell.c_str() || *end != '\0' || !std::isfinite(v)) throw InputError(file, row, field, "\"" + cell + "\" is not a finite number");
    return v;
}

std::string read_file_named(const std::string& path) {
    refuse_link_at(path, "record");
    return detail::read_text_file(path);
}

}  // namespace

Eigen::Matrix3d icrs_to_fitting_frame(const Brief& brief) {
    const System known = known_model_system(brief);
    return observer_frame(known, known.observer_index()).rotation * icrs_to_ecliptic_j2000();
}

Exercise read_record(const std::string& record_dir) {
    const RecordPaths paths{record_dir};
    if (!fs::is_directory(record_dir)) throw InputError(record_dir, 0, "record", "is not a folder (a record folder holds record.toml, positions.csv and observer.csv)");
    if (!fs::exists(paths.record())) throw InputError(paths.record(), 0, "", "no record here: record.toml is missing");
    RecordTexts texts;
    texts.record_toml = read_file_named(paths.record());
    texts.positions_csv = read_file_named(paths.positions());
    texts.observer_csv = read_file_named(paths.observer());
    return parse_record(texts, record_dir);
}

Exercise parse_record(const RecordTexts& texts, const std::string& record_dir) {
    const RecordPaths paths{record_dir};
    const std::string& record_text = texts.record_toml;
    const std::string& positions_text = texts.positions_csv;
    const std::string& observer_text = texts.observer_csv;
    const std::string file = paths.record();

    Exercise ex;
    Brief& b = ex.brief;
    b.file = file;
    b.frame = ecliptic_j2000_frame;
    b.record_sha256 = sha256_hex("record.toml\n" + record_text + "positions.csv\n" + positions_text + "observer.csv\n" + observer_text);

    const toml::table root_t = detail::parse_toml(record_text, file);
    TableReader root(root_t, file, "");
    const toml::table* rec = root.table("record");
    if (!rec) throw InputError(file, 1, "record", "the [record] table is missing: is this a Wayward record?");
    TableReader r(*rec, file, "record");
    b.scenario_name = r.required_name("name");
    const std::string scale_text = r.required_string("time_scale");
    const auto scale = time_scale_from(scale_text);
    if (!scale) r.fail("time_scale", "\"" + scale_text + "\" is not a time scale Wayward reads (UTC, TT or TDB)");
    if (!r.has("epoch")) r.fail("epoch", "is required: the time at which the planets' elements hold (the record's time zero)");
    const JulianDate epoch = read_time(r, "epoch", *scale, r.node("epoch"));
    b.epoch0_year = julian_epoch(epoch);
    std::optional<double> end_days;
    if (r.has("end")) end_days = days_between(read_time(r, "end", *scale, r.node("end")), epoch);
    r.finish();

    const detail::StarTable star = detail::read_star_table(root);
    b.star_name = star.name;
    b.star_mass = star.mass;
    const auto planets = root.tables("planet");
    if (planets.empty()) throw InputError(file, 1, "planet", "the record names no planets ([[planet]] tables)");
    for (std::size_t k = 0; k < planets.size(); ++k) {
        TableReader p(*planets[k], file, "planet[" + std::to_string(k + 1) + "]");
        BriefPlanet bp;
        bp.name = p.required_name("name");
        for (const BriefPlanet& other : b.planets)
            if (other.name == bp.name) p.fail("name", "\"" + bp.name + "\" is named twice");
        bp.observer = p.boolean("observer").value_or(false);
        bp.mass = p.required_number("mass");
        if (!(bp.mass > 0.0 && bp.mass < 0.1)) p.fail("mass", "must be positive and below 0.1 solar masses");
        bp.elements = detail::read_elements(p);
        p.finish();
        b.planets.push_back(bp);
    }
    if (std::count_if(b.planets.begin(), b.planets.end(), [](const BriefPlanet& p) { return p.observer; }) != 1)
        throw InputError(file, 1, "planet", "exactly one planet must be the observer (observer = true)");

    const toml::table* search = root.table("search");
    if (!search) throw InputError(file, 1, "search", "the [search] table is missing (epochs, elongation_limit_deg, field_radius_deg)");
    std::vector<double> search_days;
    {
        TableReader s(*search, file, "search");
        const toml::node* epochs = s.node("epochs");
        const toml::array* list = epochs ? epochs->as_array() : nullptr;
        if (!list || list->empty()) s.fail("epochs", "is required: a list of times (Julian or ISO dates) at which to predict");
        for (const toml::node& e : *list) {
            const double d = days_between(read_time(s, "epochs", *scale, &e), epoch);
            if (!(d >= 0.0)) s.fail("epochs", "a search epoch lies before the record's epoch");
            search_days.push_back(d);
        }
        b.elongation_limit_deg = s.required_number("elongation_limit_deg");
        if (!(b.elongation_limit_deg >= 0.0 && b.elongation_limit_deg < 180.0)) s.fail("elongation_limit_deg", "must be in [0, 180) degrees");
        b.field_radius_deg = s.required_number("field_radius_deg");
        if (!(b.field_radius_deg > 0.0 && b.field_radius_deg <= 90.0)) s.fail("field_radius_deg", "must be in (0, 90] degrees");
        s.finish();
    }
    root.finish();

    // The observer's positions, in time order, keyed by their TDB day.
    const std::string ofile = paths.observer();
    struct Row {
        double day;
        Vec3 position;
        long line;
    };
    std::vector<Row> track;
    for (const auto& [line, cells] : read_csv_rows(observer_text, ofile, observer_header, 4)) {
        double day = 0.0;
        try {
            day = days_between(tdb_from_time_text(cells[0], *scale), epoch);
        } catch (const std::invalid_argument& e) {
            throw InputError(ofile, line, "time", e.what());
        }
        Vec3 v;
        static const char* names[] = {"x_au", "y_au", "z_au"};
        for (int c = 0; c < 3; ++c) {
            const auto x = optional_number(cells[c + 1], ofile, line, names[c]);
            if (!x) throw InputError(ofile, line, names[c], "is empty");
            if (!(std::abs(*x) <= 1e5)) throw InputError(ofile, line, names[c], "must be within 1e5 au of the star");
            v[c] = *x;
        }
        if (!track.empty() && !(day > track.back().day))
            throw InputError(ofile, line, "time", "times must increase (line " + std::to_string(track.back().line) + " is not earlier)");
        track.push_back({day, icrs_to_ecliptic_j2000() * v, line});
    }
    if (track.empty()) throw InputError(ofile, 2, "row", "the file holds no positions");

    // The positions, rotated into the fitting frame, each matched to the observer row of its time.
    const std::string pfile = paths.positions();
    const Eigen::Matrix3d to_frame = icrs_to_fitting_frame(b);
    std::vector<bool> used(track.size(), false);
    std::map<std::string, std::pair<double, double>> era_years;  // label -> first and last year
    std::map<std::string, bool> era_sigma;
    for (const auto& [line, cells] : read_csv_rows(positions_text, pfile, positions_header, 7)) {
        Observation o;
        o.line = line;
        double day = 0.0;
        try {
            day = days_between(tdb_from_time_text(cells[0], *scale), epoch);
        } catch (const std::invalid_argument& e) {
            throw InputError(pfile, line, "time", e.what());
        }
        if (day < 0.0) throw InputError(pfile, line, "time", "is before the record's epoch (" + file + ": record.epoch); the elements must hold at or before the first position");
        o.target = cells[1];
        const auto planet = std::find_if(b.planets.begin(), b.planets.end(), [&](const BriefPlanet& p) { return p.name == o.target; });
        if (planet == b.planets.end()) throw InputError(pfile, line, "target", "\"" + o.target + "\" is not a planet of " + file);
        if (planet->observer) throw InputError(pfile, line, "target", "\"" + o.target + "\" is the observer itself");
        planet->observed = true;
        FramedSky icrs;
        try {
            icrs.lon_deg = parse_right_ascension(cells[2]);
        } catch (const std::invalid_argument& e) {
            throw InputError(pfile, line, "ra", e.what());
        }
        try {
            icrs.lat_deg = parse_declination(cells[3]);
        } catch (const std::invalid_argument& e) {
            throw InputError(pfile, line, "dec", e.what());
        }
        icrs.sigma_east_arcsec = optional_number(cells[4], pfile, line, "sigma_ra_arcsec");
        icrs.sigma_north_arcsec = optional_number(cells[5], pfile, line, "sigma_dec_arcsec");
        if (icrs.sigma_east_arcsec.has_value() != icrs.sigma_north_arcsec.has_value())
            throw InputError(pfile, line, icrs.sigma_east_arcsec ? "sigma_dec_arcsec" : "sigma_ra_arcsec",
                             "give both sigmas or neither (neither: the era did not record them)");
        for (const auto& [s, name] : {std::pair{icrs.sigma_east_arcsec, "sigma_ra_arcsec"}, std::pair{icrs.sigma_north_arcsec, "sigma_dec_arcsec"}})
            if (s && !(*s >= 1e-6 && *s <= 1e6)) throw InputError(pfile, line, name, "must be in [1e-6, 1e6] arcsec");
        o.era = cells[6];
        if (!o.era.empty() && !detail::name_problem(o.era).empty()) throw InputError(pfile, line, "era", detail::name_problem(o.era));
        // Match the observer's row by time (to within a tenth of a second: the same instant written twice).
        const auto it = std::lower_bound(track.begin(), track.end(), day - 1e-6, [](const Row& a, double t) { return a.day < t; });
        if (it == track.end() || std::abs(it->day - day) > 1e-6)
            throw InputError(pfile, line, "time", "\"" + cells[0] + "\" has no row in " + ofile + " (the observer's position at each time is needed)");
        used[static_cast<std::size_t>(it - track.begin())] = true;
        o.time_days = it->day;
        const FramedSky framed = rotate_sky(icrs, to_frame);
        o.lon_deg = framed.lon_deg;
        o.lat_deg = framed.lat_deg;
        o.sigma_lon_arcsec = framed.sigma_east_arcsec;
        o.sigma_lat_arcsec = framed.sigma_north_arcsec;
        const double year = decimal_year(b.epoch0_year, o.time_days);
        const auto e = era_years.try_emplace(o.era, year, year).first;
        e->second.first = std::min(e->second.first, year);
        e->second.second = std::max(e->second.second, year);
        era_sigma[o.era] = era_sigma[o.era] || o.sigma_lon_arcsec.has_value();
        ex.observations.push_back(std::move(o));
    }
    if (ex.observations.empty()) throw InputError(pfile, 2, "row", "the record holds no positions");
    std::vector<std::size_t> order(ex.observations.size());
    for (std::size_t k = 0; k < order.size(); ++k) order[k] = k;
    std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t c) {
        const Observation &x = ex.observations[a], &y = ex.observations[c];
        return std::tie(x.target, x.time_days, x.line) < std::tie(y.target, y.time_days, y.line);
    });
    for (std::size_t k = 1; k < order.size(); ++k) {
        const Observation &a = ex.observations[order[k - 1]], &c = ex.observations[order[k]];
        if (a.target == c.target && a.time_days == c.time_days)
            throw InputError(pfile, c.line, "time", "a second position of " + c.target + " at the same time (line " + std::to_string(a.line) + "): a duplicated row?");
    }
    for (std::size_t k = 0; k < track.size(); ++k)
        if (used[k]) ex.observer_track.push_back({track[k].day, track[k].position});

    double last = 0.0;
    for (const Observation& o : ex.observations) last = std::max(last, o.time_days);
    for (double d : search_days) last = std::max(last, d);
    if (end_days) {
        if (!(*end_days >= last)) throw InputError(file, 0, "record.end", "must not come before the last position or search epoch");
        last = *end_days;
    }
    // One day's margin at the end, so that rounding never puts the last search epoch outside the span.
    b.span_years = (last + (end_days ? 0.0 : 1.0)) / julian_year_days;
    if (!(b.span_years > 0.0 && b.span_years <= 5000.0)) throw InputError(file, 0, "record.epoch", "the record must span (0, 5000] years");
    for (double d : search_days) b.search_epochs_year.push_back(decimal_year(b.epoch0_year, d));
    for (const auto& [label, years] : era_years)
        b.eras.push_back({label.empty() ? "unlabelled" : label, years.first, years.second, 1, 0.0, era_sigma[label]});
    return ex;
}

void write_imported_exercise(const Exercise& ex, const std::string& out_dir, bool force) {
    const ExercisePaths paths = exercise_paths(out_dir);
    std::error_code ec;
    if (fs::is_symlink(out_dir, ec)) throw InputError(out_dir, 0, "--out", "is a symbolic link; give the real folder");
    const bool made_dir = fs::create_directories(out_dir, ec);
    if (ec) throw InputError(out_dir, 0, "--out", "cannot create the folder: " + ec.message());
    try {
        const WriterLock lock(out_dir, "--out");
        refuse_link_at(paths.brief(), "--out");
        if (fs::exists(paths.brief()) && !force) throw InputError(out_dir, 0, "--out", "an exercise already exists here; use --force to overwrite it");
        for (const std::string& f : {paths.observations(), paths.observer_track(), paths.brief()}) refuse_link_at(f, "--out");
        remove_stale_temporaries(out_dir);
        if (force) fs::remove(paths.brief(), ec);  // never an old brief beside new data
        write_file_atomic(paths.observations(), format_observations_csv(ex.observations, ex.brief.epoch0_year));
        write_file_atomic(paths.observer_track(), format_observer_csv(ex.observer_track));
        write_file_atomic(paths.brief(), format_brief(ex.brief));  // last: its presence marks a complete exercise
    } catch (...) {
        if (made_dir) {
            for (const std::string& f : {paths.observations(), paths.observer_track(), out_dir + "/.wayward.lock"}) fs::remove(f, ec);
            fs::remove(out_dir, ec);
        }
        throw;
    }
}

RecordTexts format_record(const Exercise& ex) {
    const Brief& b = ex.brief;
    const JulianDate epoch = jd_from_julian_epoch(b.epoch0_year);
    auto jd = [&](double days) { return epoch.whole + (epoch.fraction + days); };
    auto jd_text = [&](double days) { return fmt("%.9f", jd(days)); };
    RecordTexts out;
    toml::table root;
    toml::table rec;
    rec.insert("name", b.scenario_name);
    rec.insert("time_scale", "TDB");
    rec.insert("epoch", jd(0.0));
    rec.insert("end", jd(b.span_years * julian_year_days));
    root.insert("record", rec);
    root.insert("star", detail::star_table(b.star_name, b.star_mass));
    toml::array planets;
    for (const BriefPlanet& p : b.planets) {
        toml::table t = detail::elements_table(p.elements);
        t.insert("name", p.name);
        if (p.observer) t.insert("observer", true);
        t.insert("mass", p.mass);
        planets.push_back(t);
    }
    root.insert("planet", planets);
    toml::table search;
    toml::array epochs;
    for (double y : b.search_epochs_year) epochs.push_back(jd(days_from_year(b.epoch0_year, y)));
    search.insert("epochs", epochs);
    search.insert("elongation_limit_deg", b.elongation_limit_deg);
    search.insert("field_radius_deg", b.field_radius_deg);
    root.insert("search", search);
    out.record_toml = std::string("# A survey record (Wayward's record form; `wayward import` reads it).\n") +
                      (b.imported() ? "" : "# Written from an invented exercise: its reference plane is written as if it were the ecliptic of J2000.0,\n"
                                           "# and its years as Julian epochs of TDB.\n") +
                      "# Elements: heliocentric osculating at the epoch, on the ecliptic and equinox of J2000.0; a in au, angles in degrees.\n" +
                      detail::toml_text(root);

    const Eigen::Matrix3d from_frame = icrs_to_fitting_frame(b).transpose();
    out.positions_csv = std::string(positions_header) + "\n";
    for (const Observation& o : ex.observations) {
        const FramedSky icrs = rotate_sky({o.lon_deg, o.lat_deg, o.sigma_lon_arcsec, o.sigma_lat_arcsec}, from_frame);
        out.positions_csv += jd_text(o.time_days) + "," + csv_cell(o.target) + "," + fmt("%.10f", icrs.lon_deg) + "," + fmt("%.10f", icrs.lat_deg) +
                             "," + (icrs.sigma_east_arcsec ? fmt("%.9g", *icrs.sigma_east_arcsec) : "") + "," +
                             (icrs.sigma_north_arcsec ? fmt("%.9g", *icrs.sigma_north_arcsec) : "") + "," + csv_cell(o.era) + "\n";
    }
    out.observer_csv = std::string(observer_header) + "\n";
    const Eigen::Matrix3d to_icrs = icrs_to_ecliptic_j2000().transpose();
    for (const ObserverFix& f : ex.observer_track) {
        const Vec3 v = to_icrs * f.position;
        out.observer_csv += jd_text(f.time_days) + "," + fmt("%.13f", v.x()) + "," + fmt("%.13f", v.y()) + "," + fmt("%.13f", v.z()) + "\n";
    }
    return out;
}

void write_record_folder(const RecordTexts& texts, const std::string& dir) {
    std::error_code ec;
    if (fs::is_symlink(dir, ec)) throw InputError(dir, 0, "record", "is a symbolic link; give the real folder");
    fs::create_directories(dir, ec);
    if (ec) throw InputError(dir, 0, "record", "cannot create the folder: " + ec.message());
    const RecordPaths p{dir};
    for (const std::string& f : {p.record(), p.positions(), p.observer()}) refuse_link_at(f, "record");
    write_file_atomic(p.positions(), texts.positions_csv);
    write_file_atomic(p.observer(), texts.observer_csv);
    write_file_atomic(p.record(), texts.record_toml);
}

}  // namespace wayward
