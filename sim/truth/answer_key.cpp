// The sealed answer key: the true bodies at epoch 0 and the true positions behind every observation. The brief
// carries the SHA-256 of the key file, the key that of its true-positions table. See answer_key.hpp.
#include "sim/truth/answer_key.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <sstream>

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
using detail::elements_table;
using detail::read_elements;
using detail::toml_text;
using detail::vec_array;

using detail::fmt;

System AnswerKey::system() const { return make_system(star_name, star_mass, bodies); }

std::optional<std::size_t> AnswerKey::hidden_index() const {
    for (std::size_t i = 0; i < bodies.size(); ++i)
        if (bodies[i].role == Role::hidden) return i + 1;
    return std::nullopt;
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
        if (d.radius_km > 0.0) {
            t.insert("radius_km", d.radius_km);
            t.insert("geometric_albedo", d.geometric_albedo);
        }
        bodies.push_back(t);
    }
    root.insert("body", bodies);
    return "# Wayward answer key: the truth. Do not open before the prediction is made.\n" + toml_text(root);
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
        d.radius_km = r.number_or("radius_km", 0.0);
        if (!(d.radius_km >= 0.0)) r.fail("radius_km", "must not be negative");
        d.geometric_albedo = r.number_or("geometric_albedo", 0.0);
        if (!(d.geometric_albedo >= 0.0)) r.fail("geometric_albedo", "must not be negative");
        r.finish();
        if (d.role == Role::hidden) k.hidden_name = d.name;
        k.bodies.push_back(d);
    }
    root.finish();
    return k;
}

}  // namespace wayward
