// The campaign table (cases.csv): one row per case, written and read back with every field checked. See campaign.hpp.
#include "sim/campaign/campaign_detail.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <functional>
#include <future>
#include <map>
#include <memory>
#include <mutex>
#include <set>
#include <sstream>

#include <boost/random/uniform_int_distribution.hpp>
#include <fcntl.h>
#include <sys/file.h>
#include <sys/resource.h>
#include <unistd.h>

#include <toml++/toml.h>

#include "sim/base/errors.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/io/fileio.hpp"
#include "sim/fit/known_fit.hpp"
#include "sim/truth/generate.hpp"
#include "sim/io/hash.hpp"
#include "sim/truth/observe.hpp"
#include "sim/base/parallel.hpp"
#include "sim/base/progress.hpp"
#include "sim/base/random.hpp"
#include "sim/score/score.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/base/units.hpp"


namespace wayward {

namespace fs = std::filesystem;

const std::string& campaign_csv_header() {
    static const std::string h =
        "case,scenario,seed,settings,epoch_year,epoch_offset_years,status,separation_arcmin,field_radius_arcmin,hit,"
        "mahalanobis,inside_1sigma,inside_2sigma,radius90_arcmin,radius90_holds,map_rank,luck_fraction,closest_year,closest_arcmin,"
        "data_centre_year,closest_minus_centre_years,fitted_a_au,true_a_au,fitted_mass,true_mass,search_found,search_night,"
        "search_hours,note,unit_seconds";
    return h;
}

namespace {
constexpr std::size_t kColumns = 30;

// A failure's note, cut to 200 bytes (not inside a UTF-8 sequence) so a row stays short; csv_cell quotes it.
std::string short_note(std::string s) {
    if (s.size() > 200) {
        std::size_t n = 200;
        while (n > 0 && (static_cast<unsigned char>(s[n]) & 0xC0) == 0x80) --n;
        s.resize(n);
    }
    return s;
}
}  // namespace

std::string format_case_row(const CaseRow& r) {
    std::string s;
    s.reserve(320);
    auto add = [&](const std::string& v) { s += v; s += ','; };
    add(std::to_string(r.index));
    add(csv_cell(r.scenario));
    add(std::to_string(r.seed));
    add(csv_cell(r.settings));
    add(cell_or_empty("%.4f", r.epoch_year));
    add(cell_or_empty("%.4f", r.epoch_offset_years));
    add(!r.ok ? "failed" : r.detected ? "ok" : "undetected");
    add(cell_or_empty("%.6f", r.separation_arcmin));
    add(cell_or_empty("%.4f", r.field_radius_arcmin));
    add(r.hit ? "1" : "0");
    add(r.mahalanobis ? cell_or_empty("%.6f", *r.mahalanobis) : "");
    add(r.mahalanobis ? (r.inside_sigma(1.0) ? "1" : "0") : "");
    add(r.mahalanobis ? (r.inside_sigma(2.0) ? "1" : "0") : "");
    add(cell_or_empty("%.6f", r.radius90_arcmin));
    add(std::isfinite(r.radius90_arcmin) && r.ok ? (r.radius90_holds() ? "1" : "0") : "");
    add(cell_or_empty("%.4f", r.map_rank));
    add(cell_or_empty("%.6f", r.luck_fraction));
    add(cell_or_empty("%.4f", r.closest_year));
    add(cell_or_empty("%.6f", r.closest_arcmin));
    add(cell_or_empty("%.4f", r.data_centre_year));
    add(cell_or_empty("%.4f", r.closest_minus_centre_years()));
    add(cell_or_empty("%.6f", r.fitted_a_au));
    add(cell_or_empty("%.6f", r.true_a_au));
    add(cell_or_empty("%.6e", r.fitted_mass));
    add(cell_or_empty("%.6e", r.true_mass));
    add(r.searched ? (r.search_found ? "1" : "0") : "");
    add(r.searched && r.search_found ? std::to_string(r.search_night) : "");
    add(r.searched ? cell_or_empty("%.2f", r.search_hours) : "");
    add(csv_cell(short_note(r.note)));
    s += cell_or_empty("%.3f", r.unit_seconds);
    s += '\n';
    return s;
}

CaseRow parse_case_row(const std::string& line, const std::string& file, long n) {
    const std::vector<std::string> c = split_csv_line(line, file, n);
    if (c.size() != kColumns)
        throw InputError(file, n, "", "a damaged row: " + std::to_string(c.size()) + " cells where " + std::to_string(kColumns) +
                                          " belong (delete the line to have that case run again)");
    static const std::vector<std::string> names = split_csv_line(campaign_csv_header());
    auto number = [&](std::size_t k, bool required) {
        if (c[k].empty()) {
            if (required) throw InputError(file, n, names[k], "is empty");
            return static_cast<double>(NAN);
        }
        char* end = nullptr;
        const double v = std::strtod(c[k].c_str(), &end);
        if (*end != '\0' || !std::isfinite(v)) throw InputError(file, n, names[k], "\"" + c[k] + "\" is not a number");
        return v;
    };
    auto whole = [&](std::size_t k) {
        if (c[k].empty() || c[k].find_first_not_of("0123456789") != std::string::npos || c[k].size() > 19)
            throw InputError(file, n, names[k], "\"" + c[k] + "\" is not a non-negative integer");
        return static_cast<std::uint64_t>(std::stoull(c[k]));
    };
    auto flag = [&](std::size_t k) {
        if (c[k] != "0" && c[k] != "1") throw InputError(file, n, names[k], "\"" + c[k] + "\" is not 0 or 1");
        return c[k] == "1";
    };
    CaseRow r;
    r.index = static_cast<std::size_t>(whole(0));
    r.scenario = c[1];
    r.seed = whole(2);
    r.settings = c[3];
    r.epoch_year = number(4, true);
    r.epoch_offset_years = number(5, true);
    if (c[6] != "ok" && c[6] != "failed" && c[6] != "undetected")
        throw InputError(file, n, names[6], "\"" + c[6] + "\" is none of ok, undetected, failed");
    r.ok = c[6] != "failed";
    r.detected = c[6] != "undetected";
    r.separation_arcmin = number(7, r.ok);
    r.field_radius_arcmin = number(8, true);
    r.hit = flag(9);
    if (!c[10].empty()) r.mahalanobis = number(10, true);
    r.radius90_arcmin = number(13, false);
    r.map_rank = number(15, false);
    if (std::isfinite(r.map_rank) && !(r.map_rank >= 0.0 && r.map_rank <= 1.0)) throw InputError(file, n, names[15], "must be in [0, 1]");
    r.luck_fraction = number(16, false);
    r.closest_year = number(17, false);
    r.closest_arcmin = number(18, false);
    r.data_centre_year = number(19, false);
    r.fitted_a_au = number(21, false);
    r.true_a_au = number(22, false);
    r.fitted_mass = number(23, false);
    r.true_mass = number(24, false);
    if (!c[25].empty()) {
        r.searched = true;
        r.search_found = flag(25);
        if (r.search_found) {
            const std::uint64_t night = whole(26);
            if (night < 1 || night > 100000) throw InputError(file, n, names[26], "\"" + c[26] + "\" is not a night number");
            r.search_night = static_cast<int>(night);
        } else if (!c[26].empty()) {
            throw InputError(file, n, names[26], "must be empty when the body was not found");
        }
        r.search_hours = number(27, true);
    } else if (!c[26].empty() || !c[27].empty()) {
        throw InputError(file, n, names[25], "is empty but the search's other cells are not");
    }
    r.note = c[28];
    r.unit_seconds = number(29, false);
    if (!std::isfinite(r.unit_seconds)) r.unit_seconds = 0.0;
    return r;
}

// Reads a cases.csv. `complete_end` receives the byte length of the whole lines (a torn last line is not
// returned); `torn` whether one was found.
std::vector<RawRow> read_raw_rows(const std::string& path, std::size_t* complete_end, bool* torn) {
    const std::string text = detail::read_text_file(path);
    const std::size_t last_newline = text.rfind('\n');
    const std::size_t end = last_newline == std::string::npos ? 0 : last_newline + 1;
    if (complete_end) *complete_end = end;
    if (torn) *torn = end != text.size();
    std::vector<RawRow> rows;
    std::size_t pos = 0;
    long n = 0;
    while (pos < end) {
        const std::size_t nl = text.find('\n', pos);
        std::string line = text.substr(pos, nl - pos);
        pos = nl + 1;
        ++n;
        if (!line.empty() && line.back() == '\r') line.pop_back();
        if (n == 1) {
            if (line != campaign_csv_header())
                throw InputError(path, 1, "header", "is not the header of a Wayward campaign table (was it written by another version?)");
            continue;
        }
        if (line.empty()) continue;
        RawRow r;
        r.row = parse_case_row(line, path, n);
        r.line = std::move(line);
        r.line_number = n;
        rows.push_back(std::move(r));
    }
    return rows;
}

std::vector<CaseRow> read_case_rows(const std::string& path) {
    std::vector<CaseRow> out;
    for (RawRow& r : read_raw_rows(path)) out.push_back(std::move(r.row));
    return out;
}

}  // namespace wayward
