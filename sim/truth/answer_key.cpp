// The sealed answer key: the true bodies at epoch 0 and the true positions behind every observation. The brief
// carries the SHA-256 of the key file, the key that of its true-positions table. See answer_key.hpp.
#include "sim/truth/answer_key.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <cerrno>
#include <cstring>
#include <limits>
#include <sstream>
#include <stdexcept>

#include <sys/random.h>

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
        s += fmt("%.8f", o.time_days) + "," + fmt("%.6f", decimal_year(epoch0_year, o.time_days)) + "," + csv_cell(o.target) + "," +
             fmt("%.12f", t.true_lon_deg) + "," + fmt("%.12f", t.true_lat_deg) + "," + fmt("%.6f", t.elongation_deg) + "," +
             (t.outlier ? "1" : "0") + "," + fmt("%.6f", t.systematic_lon_arcsec) + "," + fmt("%.6f", t.systematic_lat_arcsec) + "\n";
    }
    return s;
}

std::string secret_hex(std::size_t bytes) {
    std::vector<unsigned char> buf(bytes);
    std::size_t done = 0;
    while (done < bytes) {
        const ssize_t n = ::getrandom(buf.data() + done, bytes - done, 0);
        if (n < 0) {
            if (errno == EINTR) continue;
            throw std::runtime_error(std::string("cannot read the system's random source: ") + std::strerror(errno));
        }
        done += static_cast<std::size_t>(n);
    }
    static const char digits[] = "0123456789abcdef";
    std::string hex;
    for (unsigned char c : buf) {
        hex += digits[c >> 4];
        hex += digits[c & 15];
    }
    return hex;
}

std::uint64_t secret_seed() {
    return std::strtoull(secret_hex(8).c_str(), nullptr, 16) >> 1;
}

std::string answer_key_text(const Scenario& sc, const Truth& truth, const std::string& positions_sha, const std::string& salt) {
    toml::table root;
    toml::table key;
    key.insert("scenario", sc.name);
    if (!salt.empty()) key.insert("salt", salt);
    key.insert("seed", static_cast<int64_t>(truth.seed));
    key.insert("draws", static_cast<int64_t>(truth.draws));
    key.insert("true_positions_sha256", positions_sha);
    root.insert("answer_key", key);
    root.insert("star", detail::star_table(truth.system.bodies[0].name, truth.star_mass));
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

std::string find_answer_key(const std::string& dir) {
    const std::string beside = exercise_paths(dir).answer_key(), inside = dir + "/answer-key/answer_key.toml";
    std::error_code ec;
    return !fs::exists(beside, ec) && fs::exists(inside, ec) ? inside : beside;
}

AnswerKey open_answer_key(const Brief& brief, const std::string& key_path) {
    const std::string text = detail::read_text_file(key_path);
    if (sha256_hex(text) != brief.answer_key_sha256)
        throw InputError(key_path, 0, "answer_key_sha256",
                         "the answer key does not match the SHA-256 sealed in the brief (" + brief.file +
                             "): the key or the brief was changed, or the key belongs to another exercise");
    return parse_answer_key(text, key_path);
}

AnswerKey parse_answer_key(const std::string& text, const std::string& key_path) {
    const toml::table root_t = detail::parse_toml(text, key_path);
    TableReader root(root_t, key_path, "");
    AnswerKey k;
    k.file = key_path;
    // The digest matched, but a key written by hand (or by another tool) may still lack a table: check, never assume.
    const toml::table* head = root.table("answer_key");
    if (!head) throw InputError(key_path, 1, "answer_key", "the [answer_key] table is missing: is this a Wayward answer key?");
    {
        TableReader r(*head, key_path, "answer_key");
        k.scenario_name = r.required_string("scenario");
        r.string("salt");  // only there to make the digest a hiding commitment
        k.seed = static_cast<std::uint64_t>(r.integer_in("seed", 0, std::numeric_limits<std::int64_t>::max()).value_or(0));
        r.integer("draws");
        k.true_positions_sha256 = r.required_string("true_positions_sha256");
        r.finish();
    }
    const detail::StarTable star = detail::read_star_table(root);
    k.star_name = star.name;
    k.star_mass = star.mass;
    const auto bodies = root.tables("body");
    for (std::size_t i = 0; i < bodies.size(); ++i) {
        TableReader r(*bodies[i], key_path, "body[" + std::to_string(i + 1) + "]");
        DrawnBody d;
        d.name = r.required_string("name");
        const std::string role = r.required_string("role");
        if (role != "hidden" && role != "known") r.fail("role", "must be \"hidden\" or \"known\"");
        d.role = role == "hidden" ? Role::hidden : Role::known;
        d.observer = r.boolean("observer").value_or(false);
        d.mass = r.required_number("mass");
        if (!(d.mass > 0.0)) r.fail("mass", "must be positive");
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
        if (d.role == Role::hidden) {
            if (!k.hidden_name.empty()) r.fail("role", "a second hidden body (the key holds exactly one)");
            k.hidden_name = d.name;
        }
        k.bodies.push_back(d);
    }
    root.finish();
    int observers = 0;
    for (const DrawnBody& d : k.bodies) observers += d.observer ? 1 : 0;
    if (observers != 1) throw InputError(key_path, 1, "body", "the key must name exactly one observer planet");
    return k;
}

}  // namespace wayward
