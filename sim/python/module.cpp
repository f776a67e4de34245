// The `wayward` Python module: the pipeline's commands as functions over plain Python values and NumPy arrays.
// Each function runs exactly what the command of the same job runs (the library functions behind `wayward new`,
// `import`, `residuals`, `solve`, `score`, `search`, `campaign`), so it writes the same files, byte for byte,
// and returns what they hold: the text the command prints, CSV tables as dicts of NumPy arrays (numbers) and
// lists (text), TOML files as dicts. Long work releases the GIL. A bad input raises wayward.InputError (a
// ValueError) carrying the same file, line and field as the command's message.
#include <cmath>
#include <cstdlib>
#include <memory>
#include <sstream>
#include <string>
#include <vector>

#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>
#include <pybind11/stl.h>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"
#include "sim/commands/commands.hpp"
#include "sim/commands/record_command.hpp"
#include "sim/commands/search_command.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/io/fileio.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/predict/predict.hpp"
#include "sim/score/score.hpp"
#include "sim/solve/solve.hpp"

namespace py = pybind11;
using namespace wayward;

namespace {

py::array_t<double> array_of(const std::vector<double>& v) {
    py::array_t<double> a(static_cast<py::ssize_t>(v.size()));
    std::copy(v.begin(), v.end(), a.mutable_data());
    return a;
}

// A CSV table as a dict: a column whose every non-empty cell is a number becomes a float64 array (NaN where
// empty), any other a list of str. Columns keep the file's order.
py::dict csv_table(const std::string& path) {
    const std::string text = detail::read_text_file(path);
    std::istringstream in(text);
    std::string line;
    std::vector<std::string> header;
    std::vector<std::vector<std::string>> columns;
    long row = 0;
    while (std::getline(in, line)) {
        ++row;
        if (!line.empty() && line.back() == '\r') line.pop_back();
        if (line.empty()) continue;
        std::vector<std::string> cells = split_csv_line(line, path, row);
        if (header.empty()) {
            header = cells;
            columns.assign(header.size(), {});
            continue;
        }
        for (std::size_t c = 0; c < columns.size(); ++c) columns[c].push_back(c < cells.size() ? cells[c] : "");
    }
    py::dict out;
    for (std::size_t c = 0; c < header.size(); ++c) {
        std::vector<double> numbers;
        bool numeric = true;
        for (const std::string& cell : columns[c]) {
            if (cell.empty()) {
                numbers.push_back(std::nan(""));
                continue;
            }
            char* end = nullptr;
            const double v = std::strtod(cell.c_str(), &end);
            if (end == cell.c_str() || *end != '\0') {
                numeric = false;
                break;
            }
            numbers.push_back(v);
        }
        if (numeric) out[py::str(header[c])] = array_of(numbers);
        else out[py::str(header[c])] = py::cast(columns[c]);
    }
    return out;
}

// A TOML file as a dict, read by Python's own tomllib.
py::object toml_file(const std::string& path) { return py::module_::import("tomllib").attr("loads")(detail::read_text_file(path)); }

// Runs `work` with the GIL released and returns what it printed.
template <class F>
std::string printed(F&& work) {
    std::ostringstream out;
    {
        py::gil_scoped_release unlocked;
        work(out);
    }
    return out.str();
}

// The solve's result: the solution file as a dict, the printed text, and the fitted model kept in memory so
// that predictions at other epochs need no new solve.
struct PySolution {
    std::shared_ptr<Solution> solution;
    std::string text;
    std::string file;
};

py::dict predictions(const PySolution& s, const std::vector<double>& epochs_year, int samples) {
    if (!s.solution || !s.solution->setup) throw InputError("", 0, "solution", "holds no fitted model (the record demanded no hidden body)");
    SolveOptions o;
    PredictOptions po = prediction_options(o);
    po.samples = samples;
    std::vector<Prediction> ps;
    {
        py::gil_scoped_release unlocked;
        ps = predict(*s.solution->setup, s.solution->fit, epochs_year, po);
    }
    std::vector<double> lon, lat, dist, major, minor, pa, r90;
    for (const Prediction& p : ps) {
        lon.push_back(p.lon / deg);
        lat.push_back(p.lat / deg);
        dist.push_back(p.distance_au);
        major.push_back(p.semi_major_arcsec / 60.0);
        minor.push_back(p.semi_minor_arcsec / 60.0);
        pa.push_back(position_angle_deg(p.orientation_deg));
        r90.push_back(samples > 0 ? p.radius90_arcsec / 60.0 : std::nan(""));
    }
    py::dict d;
    d["epoch_year"] = array_of(epochs_year);
    d["lon_deg"] = array_of(lon);
    d["lat_deg"] = array_of(lat);
    d["distance_au"] = array_of(dist);
    d["sigma_major_arcmin"] = array_of(major);
    d["sigma_minor_arcmin"] = array_of(minor);
    d["position_angle_deg"] = array_of(pa);
    d["radius90_arcmin"] = array_of(r90);
    return d;
}

}  // namespace

PYBIND11_MODULE(wayward, m) {
    m.doc() = "Wayward: rehearse the search for an unseen planet on invented systems (the pipeline from Python).";
    static py::exception<InputError> input_error(m, "InputError", PyExc_ValueError);
    py::register_exception_translator([](std::exception_ptr p) {
        try {
            if (p) std::rethrow_exception(p);
        } catch (const InputError& e) {
            py::object err = py::reinterpret_borrow<py::object>(input_error.ptr())(e.what());
            err.attr("file") = e.file();
            err.attr("line") = e.line();
            err.attr("field") = e.field();
            PyErr_SetObject(input_error.ptr(), err.ptr());
        }
    });

    m.def(
        "new_exercise",
        [](const std::string& scenario, const std::string& out, std::optional<std::uint64_t> seed, const std::string& key_out,
           const std::string& record, bool force) {
            NewArgs a;
            a.scenario = scenario;
            a.seed = seed;
            a.out_dir = out;
            a.key_dir = key_out;
            a.record_dir = record;
            a.force = force;
            return printed([&](std::ostream& o) { run_new(a, o); });
        },
        py::arg("scenario"), py::arg("out"), py::arg("seed") = py::none(), py::arg("key_out") = "", py::arg("record") = "",
        py::arg("force") = false, "Makes an exercise folder from a scenario (as `wayward new`); returns the printed summary.");

    m.def(
        "import_record",
        [](const std::string& record, const std::string& out, bool force) {
            ImportArgs a{record, out, force};
            return printed([&](std::ostream& o) { run_import(a, o); });
        },
        py::arg("record"), py::arg("out"), py::arg("force") = false,
        "Makes an exercise folder from a survey record folder (as `wayward import`); returns the printed summary.");

    m.def(
        "read_exercise",
        [](const std::string& dir) {
            Exercise ex;
            {
                py::gil_scoped_release unlocked;
                ex = load_exercise(dir);
            }
            const Brief& b = ex.brief;
            py::dict brief;
            brief["scenario"] = b.scenario_name;
            brief["epoch0_year"] = b.epoch0_year;
            brief["span_years"] = b.span_years;
            brief["star"] = py::dict(py::arg("name") = b.star_name, py::arg("mass") = b.star_mass);
            py::list planets;
            for (const BriefPlanet& p : b.planets)
                planets.append(py::dict(py::arg("name") = p.name, py::arg("mass") = p.mass, py::arg("observer") = p.observer,
                                        py::arg("observed") = p.observed, py::arg("a") = p.elements.semi_major_axis,
                                        py::arg("e") = p.elements.eccentricity, py::arg("i_deg") = p.elements.inclination / deg,
                                        py::arg("node_deg") = p.elements.ascending_node / deg, py::arg("peri_deg") = p.elements.arg_periapsis / deg,
                                        py::arg("mean_anomaly_deg") = p.elements.mean_anomaly / deg));
            brief["planets"] = planets;
            brief["search_epochs_year"] = b.search_epochs_year;
            brief["field_radius_deg"] = b.field_radius_deg;
            brief["elongation_limit_deg"] = b.elongation_limit_deg;
            brief["imported"] = b.imported();
            std::vector<double> t, lon, lat, sl, sb;
            std::vector<std::string> target, era;
            for (const Observation& o : ex.observations) {
                t.push_back(o.time_days);
                lon.push_back(o.lon_deg);
                lat.push_back(o.lat_deg);
                sl.push_back(o.sigma_lon_arcsec.value_or(std::nan("")));
                sb.push_back(o.sigma_lat_arcsec.value_or(std::nan("")));
                target.push_back(o.target);
                era.push_back(o.era);
            }
            py::dict obs;
            obs["time_days"] = array_of(t);
            obs["target"] = target;
            obs["lon_deg"] = array_of(lon);
            obs["lat_deg"] = array_of(lat);
            obs["sigma_lon_arcsec"] = array_of(sl);
            obs["sigma_lat_arcsec"] = array_of(sb);
            obs["era"] = era;
            py::array_t<double> xyz({static_cast<py::ssize_t>(ex.observer_track.size()), py::ssize_t{3}});
            std::vector<double> ot;
            auto w = xyz.mutable_unchecked<2>();
            for (std::size_t k = 0; k < ex.observer_track.size(); ++k) {
                ot.push_back(ex.observer_track[k].time_days);
                for (int c = 0; c < 3; ++c) w(static_cast<py::ssize_t>(k), c) = ex.observer_track[k].position[c];
            }
            py::dict track;
            track["time_days"] = array_of(ot);
            track["position_au"] = xyz;
            return py::dict(py::arg("brief") = brief, py::arg("observations") = obs, py::arg("observer") = track);
        },
        py::arg("dir"), "Reads an exercise folder: the brief as a dict, the observations and the observer's track as arrays.");

    m.def(
        "fit_residuals",
        [](const std::string& dir, bool neglect_light_time) {
            ResidualsArgs a{dir, neglect_light_time, true};
            std::ostringstream none;
            const std::string text = printed([&](std::ostream& o) { run_residuals(a, o, none); });
            py::dict d = csv_table(dir + "/residuals.csv");
            d["text"] = text;
            return d;
        },
        py::arg("dir"), py::arg("neglect_light_time") = false,
        "Fits the known planets alone (as `wayward residuals`): the O-C residuals as arrays, and the printed text.");

    py::class_<PySolution>(m, "Solution", "A solve's result: the solution file as a dict, the printed text, and the fitted model.")
        .def_readonly("text", &PySolution::text, "what `wayward solve` printed")
        .def_readonly("file", &PySolution::file, "the solution file written")
        .def("to_dict", [](const PySolution& s) { return toml_file(s.file); }, "the solution file as a dict")
        .def("predict", &predictions, py::arg("epochs_year"), py::arg("samples") = 0,
             "Positions and linear 1-sigma ellipses at each epoch (years), from the fitted model; with samples > 0, "
             "also the 90 % radius of that many covariance samples.");

    m.def(
        "solve",
        [](const std::string& dir, unsigned threads, int samples, int starts, const std::string& distance, bool circular, bool coplanar,
           std::optional<double> epoch_year, const std::string& era_systematics, bool point_anyway, bool sky_map, const std::string& sky_map_form,
           const std::string& out) {
            SolveArgs a;
            a.dir = dir;
            a.threads = threads;
            a.samples = samples;
            a.starts = starts;
            a.distance = distance;
            a.circular = circular;
            a.coplanar = coplanar;
            a.epoch_year = epoch_year;
            a.era_systematics = era_systematics;
            a.point_anyway = point_anyway;
            a.sky_map = sky_map;
            a.sky_map_form = sky_map_form;
            a.out_file = out;
            a.quiet = true;
            PySolution s;
            s.solution = std::make_shared<Solution>();
            std::ostringstream none;
            s.text = printed([&](std::ostream& o) { run_solve(a, o, none, s.solution.get()); });
            s.file = out.empty() ? dir + "/solution.toml" : out;
            if (!s.solution->setup) s.file.clear();  // no detection: nothing written
            return s;
        },
        py::arg("dir"), py::arg("threads") = 0, py::arg("samples") = 300, py::arg("starts") = 4, py::arg("distance") = "free",
        py::arg("circular") = false, py::arg("coplanar") = false, py::arg("epoch_year") = py::none(), py::arg("era_systematics") = "none",
        py::arg("point_anyway") = false, py::arg("sky_map") = false, py::arg("sky_map_form") = "flat", py::arg("out") = "",
        "Solves the inverse problem (as `wayward solve`, same option names); returns a Solution.");

    m.def(
        "score",
        [](const std::string& dir, const std::string& solution, std::optional<double> lon_deg, std::optional<double> lat_deg,
           std::optional<double> epoch_year, std::optional<double> radius_arcmin, const std::string& key) {
            ScoreArgs a;
            a.dir = dir;
            a.solution = solution;
            a.lon_deg = lon_deg;
            a.lat_deg = lat_deg;
            a.epoch_year = epoch_year;
            a.radius_arcmin = radius_arcmin;
            a.key = key;
            Score sc;
            const std::string text = printed([&](std::ostream& o) { run_score(a, o, &sc); });
            py::dict d;
            d["text"] = text;
            d["epoch_year"] = sc.epoch_year;
            d["separation_arcmin"] = sc.separation_arcmin;
            d["hit"] = sc.hit;
            d["field_radius_deg"] = sc.field_radius_deg;
            d["true_lon_deg"] = sc.true_lon / deg;
            d["true_lat_deg"] = sc.true_lat / deg;
            d["mahalanobis"] = sc.mahalanobis ? py::cast(*sc.mahalanobis) : py::none();
            d["truth_rank"] = sc.truth_rank ? py::cast(*sc.truth_rank) : py::none();
            d["field_probability"] = sc.field_probability ? py::cast(*sc.field_probability) : py::none();
            d["luck_fraction_inside"] = sc.luck_fraction_inside;
            std::vector<double> years, sep;
            for (const LuckPoint& p : sc.luck) {
                years.push_back(p.year);
                sep.push_back(p.separation_arcmin);
            }
            d["luck_year"] = array_of(years);
            d["luck_separation_arcmin"] = array_of(sep);
            return d;
        },
        py::arg("dir"), py::arg("solution") = "", py::arg("lon_deg") = py::none(), py::arg("lat_deg") = py::none(),
        py::arg("epoch_year") = py::none(), py::arg("radius_arcmin") = py::none(), py::arg("key") = "",
        "Scores the solution (or a prediction of your own: lon_deg, lat_deg, epoch_year) against the answer key (as `wayward score`).");

    m.def(
        "search",
        [](const std::string& dir, int nights, std::uint64_t seed, const std::string& strategy) {
            SearchArgs a;
            a.dir = dir;
            a.nights = nights;
            a.seed = seed;
            if (!strategy.empty()) a.strategy = strategy;
            py::dict d;
            std::string table;  // the command says which table it wrote (fields for an imported record)
            d["text"] = printed([&](std::ostream& o) { run_search(a, o, &table); });
            d[table.ends_with("/fields.csv") ? "fields" : "nights"] = csv_table(table);
            return d;
        },
        py::arg("dir"), py::arg("nights") = 30, py::arg("seed") = 1, py::arg("strategy") = "",
        "Rehearses the telescope search night by night (as `wayward search`); returns the text and the nights' table "
        "(for a folder imported from a record, which has no truth to rehearse against, the table of fields to point at).");

    m.def(
        "campaign",
        [](const std::string& spec, const std::string& out, unsigned threads) {
            CampaignArgs a;
            a.spec = spec;
            a.out_dir = out;
            a.threads = threads;
            a.quiet = true;
            std::ostringstream none;
            py::dict d;
            d["text"] = printed([&](std::ostream& o) { run_campaign_command(a, o, none); });
            d["cases"] = csv_table(out + "/cases.csv");
            return d;
        },
        py::arg("spec"), py::arg("out"), py::arg("threads") = 0,
        "Runs (or resumes) a campaign (as `wayward campaign`); returns the text and cases.csv as arrays.");
}
