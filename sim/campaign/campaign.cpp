// Campaigns: spec, case numbering, predictions at several epochs, the resumable runner, merge, and the report
// (summary and plots). See campaign.hpp.
#include "sim/campaign/campaign.hpp"

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

#include "sim/commands/commands.hpp"
#include "sim/base/errors.hpp"
#include "sim/truth/exercise_writer.hpp"
#include "sim/io/fileio.hpp"
#include "sim/fit/known_fit.hpp"
#include "sim/truth/generate.hpp"
#include "sim/io/hash.hpp"
#include "sim/truth/observe.hpp"
#include "sim/base/parallel.hpp"
#include "sim/report/plot.hpp"
#include "sim/base/progress.hpp"
#include "sim/base/random.hpp"
#include "sim/score/score.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/base/units.hpp"

namespace wayward {

namespace fs = std::filesystem;
using detail::TableReader;

namespace {

bool valid_label(const std::string& s) {
    if (s.empty() || s.size() > 64) return false;
    for (char c : s)
        if (!(std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '_' || c == '.')) return false;
    return true;
}

std::string label_rule() { return "must be 1 to 64 letters, digits, '-', '_' or '.' (it becomes a CSV cell)"; }

// The message of an InputError raised without a file (solve_options' "--distance" errors), without its prefix.
std::string bare_message(const InputError& e) {
    const std::string w = e.what();
    const std::string prefix = ": field '" + e.field() + "': ";
    return w.rfind(prefix, 0) == 0 ? w.substr(prefix.size()) : w;
}

std::string fmt(const char* f, double v) {
    if (!std::isfinite(v)) return "";
    char buf[64];
    std::snprintf(buf, sizeof buf, f, v);
    return buf;
}

// Whether the scenario has at least two known planets whatever it draws (the spacing rule needs two).
bool has_two_known(const Scenario& sc) {
    int known = 0;
    for (const BodySpec& b : sc.bodies) known += b.role == Role::known ? 1 : 0;
    if (sc.family.present) known += sc.family.count_min;
    return known >= 2;
}

}  // namespace

// ------------------------------------------------------------------------------------------------ the spec

CampaignSpec load_campaign_spec(const std::string& path) {
    const std::string text = detail::read_text_file(path);
    std::string base = fs::path(path).parent_path().string();
    if (base.empty()) base = ".";
    return parse_campaign_spec(text, path, base);
}

CampaignSpec parse_campaign_spec(const std::string& text, const std::string& file, const std::string& base_dir) {
    const toml::table root_t = detail::parse_toml(text, file);
    TableReader root(root_t, file, "");
    CampaignSpec spec;
    spec.file = file;
    spec.text = text;

    const toml::table* ct = root.table("campaign");
    if (!ct) throw InputError(file, 1, "campaign", "the [campaign] table is missing: is this a campaign spec?");
    {
        TableReader r(*ct, file, "campaign");
        spec.name = r.string("name").value_or(fs::path(file).stem().string());
        if (!valid_label(spec.name)) r.fail("name", label_rule());
        const auto seed = r.integer("seed");
        if (!seed) r.fail("seed", "is required (the campaign seed, a non-negative integer)");
        if (*seed < 0) r.fail("seed", "must be a non-negative integer");
        spec.seed = static_cast<std::uint64_t>(*seed);
        const auto seeds = r.integer("seeds");
        if (!seeds) r.fail("seeds", "is required (how many systems to draw from each scenario)");
        if (*seeds < 1) r.fail("seeds", "must be at least 1 (got " + std::to_string(*seeds) + ")");
        if (*seeds > 1000000) r.fail("seeds", "must be at most 1000000");
        spec.seeds = static_cast<std::size_t>(*seeds);
        spec.window_years = r.number_or("window_years", 60.0);
        if (!(spec.window_years > 0.0 && spec.window_years <= 1000.0)) r.fail("window_years", "must be in (0, 1000] years");
        r.finish();
    }

    const auto scenario_tables = root.tables("scenario");
    if (scenario_tables.empty()) throw InputError(file, 1, "scenario", "at least one [[scenario]] with a file is required");
    std::string identity = text;
    for (const toml::table* t : scenario_tables) {
        TableReader r(*t, file, "scenario");
        CampaignScenario cs;
        cs.line = r.line();
        const std::string rel = r.required_string("file");
        const fs::path p = fs::path(rel).is_absolute() ? fs::path(rel) : fs::path(base_dir) / rel;
        cs.path = p.lexically_normal().string();
        std::error_code ec;
        if (!fs::is_regular_file(p, ec)) r.fail("file", "no scenario file at " + cs.path);
        cs.name = r.string("name").value_or(p.stem().string());
        if (!valid_label(cs.name)) r.fail("name", label_rule());
        for (const CampaignScenario& other : spec.scenarios)
            if (other.name == cs.name) r.fail("name", "two scenarios are named \"" + cs.name + "\" (give each its own name)");
        r.finish();
        cs.scenario = load_scenario(cs.path);  // InputError naming the scenario file, line and field
        if (!cs.scenario.plan.present)
            throw InputError(file, r.line_of("file"), "scenario.file", cs.path + " has no [observing] plan, so there is nothing to observe");
        const std::string scenario_text = detail::read_text_file(cs.path);
        cs.sha256 = sha256_hex(scenario_text);
        cs.search_epoch_year = cs.scenario.plan.search_epochs_year.front();
        identity += "\n--- scenario " + cs.name + "\n" + scenario_text;
        spec.scenarios.push_back(std::move(cs));
    }

    const toml::table* et = root.table("epochs");
    if (!et) throw InputError(file, 1, "epochs", "the [epochs] table is missing (offsets_years = [...] or years = [...])");
    {
        TableReader r(*et, file, "epochs");
        const auto offsets = r.numbers("offsets_years");
        const auto years = r.numbers("years");
        if (offsets && years) r.fail("years", "give offsets_years or years, not both");
        if (!offsets && !years) r.fail("offsets_years", "is required (or years): the search epochs to score");
        spec.epochs_are_offsets = offsets.has_value();
        const std::string key = offsets ? "offsets_years" : "years";
        spec.epochs = offsets ? *offsets : *years;
        if (spec.epochs.empty()) r.fail(key, "must hold at least one epoch");
        if (spec.epochs.size() > 1000) r.fail(key, "must hold at most 1000 epochs");
        for (std::size_t i = 0; i < spec.epochs.size(); ++i)
            for (std::size_t j = 0; j < i; ++j)
                if (spec.epochs[i] == spec.epochs[j]) r.fail(key, "the epoch " + fmt("%g", spec.epochs[i]) + " is listed twice");
        for (CampaignScenario& cs : spec.scenarios) {
            const double lo = cs.scenario.epoch0_year, hi = cs.scenario.epoch0_year + cs.scenario.span_years;
            for (double e : spec.epochs) {
                const double y = spec.epochs_are_offsets ? cs.search_epoch_year + e : e;
                if (!(y >= lo && y <= hi)) {
                    const std::string what = spec.epochs_are_offsets
                                                 ? "the offset " + fmt("%+g", e) + " puts the epoch at " + fmt("%g", y) + " (from " + cs.name +
                                                       "'s search epoch " + fmt("%g", cs.search_epoch_year) + "), which"
                                                 : "the epoch " + fmt("%g", y);
                    r.fail(key, what + " lies outside " + cs.name + "'s span " + fmt("%g", lo) + " to " + fmt("%g", hi));
                }
                cs.epochs_year.push_back(y);
            }
        }
        r.finish();
    }

    const auto settings_tables = root.tables("settings");
    if (settings_tables.empty()) throw InputError(file, 1, "settings", "at least one [[settings]] table (a named way to solve) is required");
    for (const toml::table* t : settings_tables) {
        TableReader r(*t, file, "settings");
        CampaignSettings s;
        s.line = r.line();
        s.name = r.required_string("name");
        if (!valid_label(s.name)) r.fail("name", label_rule());
        for (const CampaignSettings& other : spec.settings)
            if (other.name == s.name) r.fail("name", "two settings are named \"" + s.name + "\"");
        SolveArgs a;
        a.distance = r.string("distance").value_or("free");
        a.circular = r.boolean("circular").value_or(false);
        a.coplanar = r.boolean("coplanar").value_or(false);
        a.ecc_sigma = r.number_or("ecc_sigma", a.ecc_sigma);
        a.tilt_sigma_deg = r.number_or("tilt_sigma_deg", a.tilt_sigma_deg);
        const long long samples = r.integer("samples").value_or(a.samples);
        const long long starts = r.integer("starts").value_or(a.starts);
        if (samples < 20 || samples > 100000) r.fail("samples", "must be in [20, 100000]");
        if (starts < 1 || starts > 64) r.fail("starts", "must be in [1, 64]");
        a.samples = static_cast<int>(samples);
        a.starts = static_cast<int>(starts);
        a.neglect_light_time = r.boolean("neglect_light_time").value_or(false);
        try {
            s.options = solve_options(a);
        } catch (const InputError& e) {
            static const std::map<std::string, std::string> keys = {
                {"--distance", "distance"}, {"--ecc-sigma", "ecc_sigma"}, {"--tilt-sigma", "tilt_sigma_deg"},
                {"--samples", "samples"}, {"--starts", "starts"}};
            const auto it = keys.find(e.field());
            r.fail(it != keys.end() ? it->second : "distance", bare_message(e));
        }
        const long long gd = r.integer("grid_distances").value_or(s.options.grid_distances);
        const long long gl = r.integer("grid_longitudes").value_or(s.options.grid_longitudes);
        if (gd < 2 || gd > 100) r.fail("grid_distances", "must be in [2, 100]");
        if (gl < 4 || gl > 360) r.fail("grid_longitudes", "must be in [4, 360]");
        s.options.grid_distances = static_cast<int>(gd);
        s.options.grid_longitudes = static_cast<int>(gl);
        s.options.track_years = spec.window_years;
        if (s.options.distance == DistancePrior::spacing)
            for (const CampaignScenario& cs : spec.scenarios)
                if (!has_two_known(cs.scenario))
                    r.fail("distance", "the spacing rule needs at least two known planets, and " + cs.name + " may have fewer");
        r.finish();
        spec.settings.push_back(std::move(s));
    }
    root.finish();
    spec.id = sha256_hex(identity);
    return spec;
}

CaseKey case_key(const CampaignSpec& spec, std::size_t c) {
    CaseKey k;
    k.epoch = c % spec.epochs.size();
    std::size_t u = c / spec.epochs.size();
    k.settings = u % spec.settings.size();
    const std::size_t sys = u / spec.settings.size();
    k.seed_index = sys % spec.seeds;
    k.scenario = sys / spec.seeds;
    return k;
}

std::size_t case_index(const CampaignSpec& spec, const CaseKey& k) {
    return ((k.scenario * spec.seeds + k.seed_index) * spec.settings.size() + k.settings) * spec.epochs.size() + k.epoch;
}

std::uint64_t campaign_system_seed(const CampaignSpec& spec, std::size_t scenario, std::size_t seed_index) {
    // 53 bits: exact in a double, and positive in the brief's signed 64-bit field.
    return derive_seed(spec.seed, "campaign-system:" + spec.scenarios[scenario].name, seed_index) >> 11;
}

Shard parse_shard(const std::string& text) {
    const auto slash = text.find('/');
    auto number = [&](const std::string& s, std::size_t& out) {
        if (s.empty() || s.size() > 9 || s.find_first_not_of("0123456789") != std::string::npos) return false;
        out = static_cast<std::size_t>(std::stoul(s));
        return true;
    };
    Shard sh;
    if (slash == std::string::npos || !number(text.substr(0, slash), sh.index) || !number(text.substr(slash + 1), sh.count) ||
        sh.count < 1 || sh.index < 1 || sh.index > sh.count)
        throw InputError("", 0, "--shard", "\"" + text + "\" is not K/N with 1 <= K <= N (e.g. --shard 2/8)");
    return sh;
}

// ------------------------------------------------------------------------------------------------ rows

const std::string& campaign_csv_header() {
    static const std::string h =
        "case,scenario,seed,settings,epoch_year,epoch_offset_years,status,separation_arcmin,field_radius_arcmin,hit,"
        "mahalanobis,inside_1sigma,inside_2sigma,radius90_arcmin,radius90_holds,luck_fraction,closest_year,closest_arcmin,"
        "data_centre_year,closest_minus_centre_years,fitted_a_au,true_a_au,fitted_mass,true_mass,note,unit_seconds";
    return h;
}

namespace {
constexpr std::size_t kColumns = 26;

std::string clean_note(std::string s) {
    for (char& c : s)
        if (c == ',' || c == '"' || c == '\n' || c == '\r') c = ';';
    if (s.size() > 200) s.resize(200);
    return s;
}
}  // namespace

std::string format_case_row(const CaseRow& r) {
    std::string s;
    s.reserve(320);
    auto add = [&](const std::string& v) { s += v; s += ','; };
    add(std::to_string(r.index));
    add(r.scenario);
    add(std::to_string(r.seed));
    add(r.settings);
    add(fmt("%.4f", r.epoch_year));
    add(fmt("%.4f", r.epoch_offset_years));
    add(r.ok ? "ok" : "failed");
    add(fmt("%.6f", r.separation_arcmin));
    add(fmt("%.4f", r.field_radius_arcmin));
    add(r.hit ? "1" : "0");
    add(r.mahalanobis ? fmt("%.6f", *r.mahalanobis) : "");
    add(r.mahalanobis ? (r.inside_sigma(1.0) ? "1" : "0") : "");
    add(r.mahalanobis ? (r.inside_sigma(2.0) ? "1" : "0") : "");
    add(fmt("%.6f", r.radius90_arcmin));
    add(std::isfinite(r.radius90_arcmin) && r.ok ? (r.radius90_holds() ? "1" : "0") : "");
    add(fmt("%.6f", r.luck_fraction));
    add(fmt("%.4f", r.closest_year));
    add(fmt("%.6f", r.closest_arcmin));
    add(fmt("%.4f", r.data_centre_year));
    add(fmt("%.4f", r.closest_minus_centre_years()));
    add(fmt("%.6f", r.fitted_a_au));
    add(fmt("%.6f", r.true_a_au));
    add(fmt("%.6e", r.fitted_mass));
    add(fmt("%.6e", r.true_mass));
    add(clean_note(r.note));
    s += fmt("%.3f", r.unit_seconds);
    s += '\n';
    return s;
}

CaseRow parse_case_row(const std::string& line, const std::string& file, long n) {
    const std::vector<std::string> c = split_csv_line(line);
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
    if (c[6] != "ok" && c[6] != "failed") throw InputError(file, n, names[6], "\"" + c[6] + "\" is neither ok nor failed");
    r.ok = c[6] == "ok";
    r.separation_arcmin = number(7, r.ok);
    r.field_radius_arcmin = number(8, true);
    r.hit = flag(9);
    if (!c[10].empty()) r.mahalanobis = number(10, true);
    r.radius90_arcmin = number(13, false);
    r.luck_fraction = number(15, false);
    r.closest_year = number(16, false);
    r.closest_arcmin = number(17, false);
    r.data_centre_year = number(18, false);
    r.fitted_a_au = number(20, false);
    r.true_a_au = number(21, false);
    r.fitted_mass = number(22, false);
    r.true_mass = number(23, false);
    r.note = c[24];
    r.unit_seconds = number(25, false);
    if (!std::isfinite(r.unit_seconds)) r.unit_seconds = 0.0;
    return r;
}

namespace {

struct RawRow {
    CaseRow row;
    std::string line;  // without its newline
    long line_number = 0;
};

// Reads a cases.csv. `complete_end` receives the byte length of the whole lines (a torn last line is not
// returned); `torn` whether one was found.
std::vector<RawRow> read_raw_rows(const std::string& path, std::size_t* complete_end = nullptr, bool* torn = nullptr) {
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

}  // namespace

std::vector<CaseRow> read_case_rows(const std::string& path) {
    std::vector<CaseRow> out;
    for (RawRow& r : read_raw_rows(path)) out.push_back(std::move(r.row));
    return out;
}

// ------------------------------------------------------------------------------------------------ manifest

namespace {

std::string manifest_path(const std::string& dir) { return (fs::path(dir) / "manifest.toml").string(); }
std::string cases_path(const std::string& dir) { return (fs::path(dir) / "cases.csv").string(); }

std::string manifest_text(const CampaignManifest& m) {
    toml::table c;
    c.insert("name", m.name);
    c.insert("id", m.id);
    c.insert("spec_file", m.spec_file);
    c.insert("shard", m.shard.text());
    c.insert("cases", static_cast<int64_t>(m.cases));
    c.insert("units", static_cast<int64_t>(m.units));
    c.insert("epochs", static_cast<int64_t>(m.epochs));
    c.insert("epochs_are_offsets", m.epochs_are_offsets);
    toml::array from;
    for (const std::string& d : m.merged_from) from.push_back(d);
    c.insert("merged_from", from);
    c.insert("spec", m.spec_text);
    toml::table root;
    root.insert("campaign", c);
    std::ostringstream ss;
    ss << "# Wayward campaign folder: the campaign and the shard that cases.csv belongs to. Written by wayward; do not edit.\n"
       << root << "\n";
    return ss.str();
}

CampaignManifest manifest_for(const CampaignSpec& spec, const Shard& shard) {
    CampaignManifest m;
    m.name = spec.name;
    m.id = spec.id;
    m.spec_file = spec.file;
    m.spec_text = spec.text;
    m.shard = shard;
    m.cases = spec.cases();
    m.units = spec.units();
    m.epochs = spec.epochs.size();
    m.epochs_are_offsets = spec.epochs_are_offsets;
    return m;
}

std::string short_id(const std::string& id) { return id.substr(0, 12); }

// An exclusive lock on DIR/.lock for the lifetime of the object: two runs never share a folder.
class FolderLock {
public:
    explicit FolderLock(const std::string& dir) {
        const std::string path = (fs::path(dir) / ".lock").string();
        fd_ = ::open(path.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0644);
        if (fd_ < 0) throw InputError(dir, 0, "--out", std::string("cannot write in the folder: ") + std::strerror(errno));
        if (::flock(fd_, LOCK_EX | LOCK_NB) != 0) {
            ::close(fd_);
            fd_ = -1;
            throw InputError(dir, 0, "--out", "another wayward campaign or merge is using this folder right now");
        }
    }
    ~FolderLock() {
        if (fd_ >= 0) ::close(fd_);
    }
    FolderLock(const FolderLock&) = delete;
    FolderLock& operator=(const FolderLock&) = delete;

private:
    int fd_ = -1;
};

void make_folder(const std::string& dir) {
    if (dir.empty()) throw InputError("", 0, "--out", "is required");
    std::error_code ec;
    fs::create_directories(dir, ec);
    if (ec) throw InputError(dir, 0, "--out", "cannot create the folder: " + ec.message());
    if (!fs::is_directory(dir, ec)) throw InputError(dir, 0, "--out", "is not a folder");
}

// Appends whole lines with one write() call each time, then flushes them to disk.
class Journal {
public:
    explicit Journal(const std::string& path) : path_(path) {
        fd_ = ::open(path.c_str(), O_WRONLY | O_APPEND | O_CREAT | O_CLOEXEC, 0644);
        if (fd_ < 0) throw InputError(path, 0, "--out", std::string("cannot write: ") + std::strerror(errno));
    }
    ~Journal() { close(); }
    void append(const std::string& lines) {
        std::lock_guard<std::mutex> lock(mutex_);
        std::size_t done = 0;
        while (done < lines.size()) {
            const ssize_t w = ::write(fd_, lines.data() + done, lines.size() - done);
            if (w < 0) {
                if (errno == EINTR) continue;
                throw std::runtime_error("cannot append to " + path_ + ": " + std::strerror(errno));
            }
            done += static_cast<std::size_t>(w);
        }
        ::fdatasync(fd_);
    }
    void close() {
        if (fd_ >= 0) ::close(fd_);
        fd_ = -1;
    }

private:
    std::string path_;
    int fd_ = -1;
    std::mutex mutex_;
};

}  // namespace

CampaignManifest load_campaign_manifest(const std::string& dir) {
    const std::string path = manifest_path(dir);
    std::error_code ec;
    if (!fs::exists(path, ec)) throw InputError(path, 0, "", "no manifest here: is " + dir + " a campaign folder?");
    const toml::table root_t = detail::parse_toml(detail::read_text_file(path), path);
    TableReader root(root_t, path, "");
    const toml::table* c = root.table("campaign");
    if (!c) throw InputError(path, 1, "campaign", "the [campaign] table is missing");
    TableReader r(*c, path, "campaign");
    CampaignManifest m;
    m.name = r.required_string("name");
    m.id = r.required_string("id");
    m.spec_file = r.string("spec_file").value_or("");
    try {
        m.shard = parse_shard(r.required_string("shard"));
    } catch (const InputError& e) {
        r.fail("shard", bare_message(e));
    }
    auto count = [&](const std::string& key) {
        const auto v = r.integer(key);
        if (!v || *v < 0) r.fail(key, "must be a non-negative integer");
        return static_cast<std::size_t>(*v);
    };
    m.cases = count("cases");
    m.units = count("units");
    m.epochs = count("epochs");
    if (m.epochs == 0 || m.units * m.epochs != m.cases) r.fail("cases", "does not equal units x epochs");
    m.epochs_are_offsets = r.boolean("epochs_are_offsets").value_or(true);
    m.merged_from = r.strings("merged_from").value_or(std::vector<std::string>{});
    m.spec_text = r.string("spec").value_or("");
    r.finish();
    root.finish();
    return m;
}

// ------------------------------------------------------------------------------------------------ the runner

namespace {

struct SystemData {
    std::uint64_t seed = 0;
    std::optional<ExerciseInMemory> ex;
    std::string error;
    double true_a_au = NAN, true_mass = NAN;
};

std::shared_ptr<const SystemData> make_system_data(const CampaignSpec& spec, std::size_t scenario, std::size_t seed_index) {
    auto d = std::make_shared<SystemData>();
    const Scenario& sc = spec.scenarios[scenario].scenario;
    d->seed = campaign_system_seed(spec, scenario, seed_index);
    try {
        // The calls `wayward new` makes, in memory.
        IntegrationResult run;
        const Truth truth = generate(sc, d->seed, &run);
        const ObservationSet obs = observe(sc, truth, run.ephemeris, d->seed);
        const Brief brief = make_brief(sc, truth, d->seed);
        d->ex = exercise_in_memory(sc, truth, obs, brief, run.ephemeris);
        for (const DrawnBody& body : truth.bodies)
            if (body.role == Role::hidden) {
                d->true_a_au = body.elements.semi_major_axis;
                d->true_mass = body.mass;
            }
    } catch (const std::exception& e) {
        d->error = std::string("could not make the exercise: ") + e.what();
    }
    return d;
}

// Systems shared by the units that need them: made once by the first unit that asks, dropped after the last
// unit of this run that needs it has finished, so memory stays flat in the number of cases.
class SystemCache {
public:
    SystemCache(const CampaignSpec& spec, std::map<std::size_t, int> uses) : spec_(spec), uses_(std::move(uses)) {}
    std::shared_ptr<const SystemData> get(std::size_t system) {
        std::shared_ptr<std::promise<std::shared_ptr<const SystemData>>> maker;
        std::shared_future<std::shared_ptr<const SystemData>> future;
        {
            std::lock_guard<std::mutex> lock(mutex_);
            auto it = made_.find(system);
            if (it == made_.end()) {
                maker = std::make_shared<std::promise<std::shared_ptr<const SystemData>>>();
                future = maker->get_future().share();
                made_.emplace(system, future);
            } else {
                future = it->second;
            }
        }
        if (maker) maker->set_value(make_system_data(spec_, system / spec_.seeds, system % spec_.seeds));
        return future.get();
    }
    void release(std::size_t system) {
        std::lock_guard<std::mutex> lock(mutex_);
        if (--uses_[system] <= 0) made_.erase(system);
    }

private:
    const CampaignSpec& spec_;
    std::mutex mutex_;
    std::map<std::size_t, int> uses_;
    std::map<std::size_t, std::shared_future<std::shared_ptr<const SystemData>>> made_;
};

// Solves one unit and scores it at every epoch. Returns no rows if cancelled.
std::vector<CaseRow> run_unit(const CampaignSpec& spec, const SystemData& data, std::size_t unit, const std::atomic<bool>* cancel) {
    const std::size_t system = unit / spec.settings.size();
    const std::size_t scenario = system / spec.seeds;
    const CampaignScenario& cs = spec.scenarios[scenario];
    const CampaignSettings& st = spec.settings[unit % spec.settings.size()];
    const auto start = std::chrono::steady_clock::now();
    std::vector<CaseRow> rows(spec.epochs.size());
    for (std::size_t e = 0; e < rows.size(); ++e) {
        CaseRow& r = rows[e];
        r.index = unit * spec.epochs.size() + e;
        r.scenario = cs.name;
        r.seed = data.seed;
        r.settings = st.name;
        r.epoch_year = cs.epochs_year[e];
        r.epoch_offset_years = cs.epochs_year[e] - cs.search_epoch_year;
        r.field_radius_arcmin = cs.scenario.plan.field_radius_deg * 60.0;
        r.true_a_au = data.true_a_au;
        r.true_mass = data.true_mass;
    }
    auto fail_all = [&](const std::string& why) {
        for (CaseRow& r : rows) {
            r.ok = false;
            r.hit = false;
            r.separation_arcmin = r.radius90_arcmin = r.luck_fraction = r.closest_year = r.closest_arcmin = NAN;
            r.data_centre_year = r.fitted_a_au = r.fitted_mass = NAN;
            r.mahalanobis.reset();
            r.note = why;
        }
    };
    auto cancelled = [&] { return cancel && cancel->load(); };
    if (!data.ex) {
        fail_all(data.error);
    } else {
        const Exercise& ex = data.ex->exercise;
        SolveOptions o = st.options;
        o.threads = 1;
        o.seed = derive_seed(data.seed, "campaign-samples:" + st.name);
        o.epoch_year = cs.epochs_year.front();
        SolveOptions fit = o;
        fit.samples = 0;  // the samples are drawn once, for every epoch, by the predictor below
        SolveProgress sp;
        sp.cancel = cancel;
        try {
            const Solution sol = solve(ex, fit, sp);
            if (cancelled()) return {};
            PredictHooks hooks;
            hooks.cancel = cancel;
            const std::vector<Prediction> preds = predict(*sol.setup, sol.fit, cs.epochs_year, prediction_options(o), hooks);
            const double centre = decimal_year(ex.brief.epoch0_year, sol.fit.layout.t_ref);
            for (std::size_t e = 0; e < rows.size(); ++e) {
                if (cancelled()) return {};
                const Score s = score_prediction(ex.brief, data.ex->key, preds[e], spec.window_years);
                CaseRow& r = rows[e];
                r.separation_arcmin = s.separation_arcmin;
                r.hit = s.hit;
                r.mahalanobis = s.mahalanobis;
                r.radius90_arcmin = preds[e].samples_used > 0 ? preds[e].radius90_arcsec / 60.0 : NAN;
                r.luck_fraction = s.luck_fraction_inside;
                r.closest_year = s.closest_year;
                r.closest_arcmin = s.closest_arcmin;
                r.data_centre_year = centre;
                r.fitted_a_au = sol.best.semi_major_axis;
                r.fitted_mass = sol.best.mass;
            }
        } catch (const std::bad_alloc&) {
            if (cancelled()) return {};
            fail_all("the solve ran out of memory (a model run that went astray; see --max-memory)");
        } catch (const std::exception& e) {
            if (cancelled()) return {};
            fail_all(std::string("the solve failed: ") + e.what());
        }
    }
    const double seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    for (CaseRow& r : rows) r.unit_seconds = seconds;
    return rows;
}

// Rows of a shard folder, checked against the spec: each case belongs to the shard, appears once, and names the
// scenario, seed and settings that its index stands for.
std::vector<RawRow> checked_rows(const CampaignSpec& spec, const Shard& shard, const std::string& path, std::size_t* complete_end,
                                 bool* torn) {
    std::vector<RawRow> rows = read_raw_rows(path, complete_end, torn);
    std::map<std::size_t, long> seen;
    for (const RawRow& rr : rows) {
        const CaseRow& r = rr.row;
        if (r.index >= spec.cases())
            throw InputError(path, rr.line_number, "case", "case " + std::to_string(r.index) + " does not exist: the campaign has " +
                                                               std::to_string(spec.cases()) + " cases");
        const std::size_t unit = r.index / spec.epochs.size();
        if (!shard.holds_unit(unit))
            throw InputError(path, rr.line_number, "case", "case " + std::to_string(r.index) + " does not belong to shard " + shard.text());
        const CaseKey k = case_key(spec, r.index);
        if (r.scenario != spec.scenarios[k.scenario].name || r.settings != spec.settings[k.settings].name ||
            r.seed != campaign_system_seed(spec, k.scenario, k.seed_index))
            throw InputError(path, rr.line_number, "case", "case " + std::to_string(r.index) + " names another scenario, seed or settings than the spec gives it");
        const auto [it, fresh] = seen.emplace(r.index, rr.line_number);
        if (!fresh)
            throw InputError(path, rr.line_number, "case", "case " + std::to_string(r.index) + " appears twice (lines " +
                                                               std::to_string(it->second) + " and " + std::to_string(rr.line_number) + ")");
    }
    return rows;
}

std::string sorted_table(std::vector<RawRow> rows) {
    std::sort(rows.begin(), rows.end(), [](const RawRow& a, const RawRow& b) { return a.row.index < b.row.index; });
    std::string text = campaign_csv_header() + "\n";
    for (const RawRow& r : rows) text += r.line + "\n";
    return text;
}

}  // namespace

CampaignOutcome run_campaign(const CampaignSpec& spec, const CampaignRun& run, std::ostream& progress_out) {
    CampaignOutcome outcome;
    const std::string& dir = run.out_dir;
    make_folder(dir);
    const FolderLock lock(dir);
    const CampaignManifest want = manifest_for(spec, run.shard);
    std::error_code ec;
    const std::string csv = cases_path(dir);
    if (fs::exists(manifest_path(dir), ec)) {
        const CampaignManifest have = load_campaign_manifest(dir);
        if (have.id != spec.id)
            throw InputError(manifest_path(dir), 0, "campaign.id",
                             "this folder holds another campaign (\"" + have.name + "\", id " + short_id(have.id) + "), not \"" + spec.name +
                                 "\" (id " + short_id(spec.id) + "); a changed spec or scenario file is another campaign: use a new --out folder");
        if (have.shard.index != run.shard.index || have.shard.count != run.shard.count)
            throw InputError(manifest_path(dir), 0, "campaign.shard",
                             "this folder holds shard " + have.shard.text() + " of the campaign, not shard " + run.shard.text());
    } else {
        if (fs::exists(csv, ec))
            throw InputError(csv, 0, "--out", "the folder has a cases.csv but no manifest.toml, so its campaign is unknown; use a new --out folder");
        write_file_atomic(manifest_path(dir), manifest_text(want));
    }

    // What is done already. A torn last line (a run killed mid-write) is cut off; every whole row is kept.
    std::vector<char> done(spec.cases(), 0);
    if (fs::exists(csv, ec)) {
        std::size_t end = 0;
        bool torn = false;
        const std::vector<RawRow> rows = checked_rows(spec, run.shard, csv, &end, &torn);
        if (torn) {
            if (::truncate(csv.c_str(), static_cast<off_t>(end)) != 0)
                throw std::runtime_error("cannot repair " + csv + ": " + std::strerror(errno));
            outcome.repaired = true;
            progress_out << "Cut off a torn last row of " << csv << " (a run was killed while writing it); that case runs again.\n";
        }
        for (const RawRow& r : rows) done[r.row.index] = 1;
    }
    if (!fs::exists(csv, ec) || fs::file_size(csv, ec) == 0) {
        Journal head(csv);
        head.append(campaign_csv_header() + "\n");
    }

    // The units of this shard that still have cases to run.
    const std::size_t ne = spec.epochs.size();
    std::vector<std::size_t> todo;
    std::map<std::size_t, int> uses;
    std::size_t todo_cases = 0;
    for (std::size_t u = 0; u < spec.units(); ++u) {
        if (!run.shard.holds_unit(u)) continue;
        outcome.shard_cases += ne;
        std::size_t have = 0;
        for (std::size_t e = 0; e < ne; ++e) have += done[u * ne + e] ? 1 : 0;
        outcome.resumed += have;
        if (have == ne) continue;
        todo.push_back(u);
        todo_cases += ne - have;
        ++uses[u / spec.settings.size()];
    }
    const unsigned threads = run.threads ? run.threads : default_threads();
    if (!run.quiet) {
        progress_out << "Campaign " << spec.name << " (id " << short_id(spec.id) << "), shard " << run.shard.text() << ": "
                     << outcome.shard_cases << " of " << spec.cases() << " cases";
        if (outcome.resumed) progress_out << ", " << outcome.resumed << " already finished";
        progress_out << "; " << todo.size() << " solves to run on " << std::min<std::size_t>(threads, std::max<std::size_t>(todo.size(), 1))
                     << " thread(s)\n";
        if (outcome.shard_cases == 0)
            progress_out << "Note: shard " << run.shard.text() << " holds no case: the campaign has only " << spec.units() << " solves\n";
        progress_out << std::flush;
    }

    if (!todo.empty()) {
        Journal journal(csv);
        SystemCache cache(spec, uses);
        Progress bar(progress_out, run.quiet);
        std::atomic<long> finished{0};
        std::atomic<std::size_t> failed{0};
        bar.update("cases", 0.0, 0, static_cast<long>(todo_cases));
        parallel_for(todo.size(), threads, [&](std::size_t i) {
            if (run.cancel && run.cancel->load()) return;
            const std::size_t u = todo[i];
            const std::size_t system = u / spec.settings.size();
            struct Release {
                SystemCache& c;
                std::size_t s;
                ~Release() { c.release(s); }
            } release{cache, system};
            const std::shared_ptr<const SystemData> data = cache.get(system);
            const std::vector<CaseRow> rows = run_unit(spec, *data, u, run.cancel);
            if (rows.empty()) return;  // cancelled
            std::string text;
            long added = 0;
            for (const CaseRow& r : rows) {
                if (done[r.index]) continue;
                text += format_case_row(r);
                ++added;
                if (!r.ok) ++failed;
            }
            journal.append(text);
            const long total = finished += added;
            bar.update("cases", static_cast<double>(total) / static_cast<double>(todo_cases), total, static_cast<long>(todo_cases));
        });
        bar.finish();
        outcome.finished = static_cast<std::size_t>(finished.load());
    }
    if (run.cancel && run.cancel->load()) return outcome;

    // Complete: the table sorted by case (rewritten atomically), then the report.
    std::vector<RawRow> rows = checked_rows(spec, run.shard, csv, nullptr, nullptr);
    if (rows.size() != outcome.shard_cases)
        throw std::runtime_error("the shard should hold " + std::to_string(outcome.shard_cases) + " cases but " + csv + " has " +
                                 std::to_string(rows.size()));
    for (const RawRow& r : rows) outcome.failed += r.row.ok ? 0 : 1;
    write_file_atomic(csv, sorted_table(rows));
    std::vector<CaseRow> plain;
    std::sort(rows.begin(), rows.end(), [](const RawRow& a, const RawRow& b) { return a.row.index < b.row.index; });
    for (RawRow& r : rows) plain.push_back(std::move(r.row));
    write_campaign_report(plain, want, dir);
    outcome.complete = true;
    return outcome;
}

std::uint64_t limit_memory(double gigabytes, unsigned threads) {
    if (gigabytes == 0.0) return 0;
    const double gib = 1024.0 * 1024.0 * 1024.0;
    double bytes = gigabytes * gib;
    if (gigabytes < 0.0) {
        const unsigned t = threads ? threads : default_threads();
        bytes = (1.0 + 0.5 * t) * gib;
        const long pages = ::sysconf(_SC_PHYS_PAGES), page = ::sysconf(_SC_PAGE_SIZE);
        if (pages > 0 && page > 0) bytes = std::min(bytes, 0.8 * static_cast<double>(pages) * static_cast<double>(page));
    }
    // On top of what is mapped already (libraries, and the reservations of a sanitizer build, which are huge).
    {
        std::ifstream statm("/proc/self/statm");
        double pages = 0.0;
        if (statm >> pages) bytes += pages * static_cast<double>(::sysconf(_SC_PAGE_SIZE));
    }
    rlimit lim{};
    if (::getrlimit(RLIMIT_AS, &lim) != 0) return 0;
    const auto want = static_cast<rlim_t>(bytes);
    if (lim.rlim_max != RLIM_INFINITY && want > lim.rlim_max) return 0;  // a lower limit is already in force
    lim.rlim_cur = want;
    if (::setrlimit(RLIMIT_AS, &lim) != 0) return 0;
    return static_cast<std::uint64_t>(want);
}

// ------------------------------------------------------------------------------------------------ merge

void merge_campaigns(const std::vector<std::string>& dirs, const std::string& out_dir, std::ostream& out) {
    if (dirs.empty()) throw InputError("", 0, "DIR", "name the shard folders to merge");
    std::vector<CampaignManifest> ms;
    for (const std::string& d : dirs) ms.push_back(load_campaign_manifest(d));
    const CampaignManifest& ref = ms.front();
    for (std::size_t i = 1; i < ms.size(); ++i) {
        if (ms[i].id != ref.id)
            throw InputError(manifest_path(dirs[i]), 0, "campaign.id",
                             "belongs to campaign \"" + ms[i].name + "\" (id " + short_id(ms[i].id) + "), but " + dirs[0] + " to \"" + ref.name +
                                 "\" (id " + short_id(ref.id) + "): shards of different campaigns cannot be merged");
        if (ms[i].shard.count != ref.shard.count)
            throw InputError(manifest_path(dirs[i]), 0, "campaign.shard",
                             "is shard " + ms[i].shard.text() + ", but " + dirs[0] + " is shard " + ref.shard.text() +
                                 ": the shards must come from runs with the same N in --shard K/N");
    }
    std::error_code ec;
    for (const std::string& d : dirs)
        if (fs::exists(out_dir, ec) && fs::equivalent(fs::path(d), fs::path(out_dir), ec))
            throw InputError(out_dir, 0, "--out", "is one of the folders being merged; choose a new folder");

    // Every case once: collect, then list what is missing or doubled.
    const std::size_t cases = ref.cases, ne = ref.epochs;
    std::vector<int> owner(cases, -1);
    std::vector<RawRow> all;
    std::vector<std::string> doubled;
    std::size_t doubled_count = 0;
    for (std::size_t i = 0; i < dirs.size(); ++i) {
        const std::string csv = cases_path(dirs[i]);
        if (!fs::exists(csv, ec)) throw InputError(csv, 0, "", "missing: this shard has no table of cases");
        std::vector<RawRow> rows = read_raw_rows(csv);
        for (RawRow& r : rows) {
            if (r.row.index >= cases)
                throw InputError(csv, r.line_number, "case", "case " + std::to_string(r.row.index) + " does not exist in a campaign of " +
                                                                 std::to_string(cases) + " cases");
            if (!ms[i].shard.holds_unit(r.row.index / ne))
                throw InputError(csv, r.line_number, "case", "case " + std::to_string(r.row.index) + " does not belong to shard " + ms[i].shard.text());
            if (owner[r.row.index] >= 0) {
                ++doubled_count;
                if (doubled.size() < 10)
                    doubled.push_back("case " + std::to_string(r.row.index) + " in " + dirs[static_cast<std::size_t>(owner[r.row.index])] + " and " + dirs[i]);
                continue;
            }
            owner[r.row.index] = static_cast<int>(i);
            all.push_back(std::move(r));
        }
    }
    std::vector<std::size_t> missing;
    std::set<std::string> missing_shards;
    for (std::size_t c = 0; c < cases; ++c)
        if (owner[c] < 0) {
            missing.push_back(c);
            missing_shards.insert(std::to_string((c / ne) % ref.shard.count + 1) + "/" + std::to_string(ref.shard.count));
        }
    if (!missing.empty() || doubled_count > 0) {
        std::ostringstream m;
        m << "cannot merge " << dirs.size() << " folder(s) of campaign \"" << ref.name << "\":";
        if (!missing.empty()) {
            m << " " << missing.size() << " of " << cases << " cases are missing (cases";
            for (std::size_t k = 0; k < std::min<std::size_t>(missing.size(), 10); ++k) m << " " << missing[k];
            if (missing.size() > 10) m << " ...";
            m << "; from shard(s)";
            for (const std::string& s : missing_shards) m << " " << s;
            m << ": run or finish those shards first)";
        }
        if (doubled_count > 0) {
            m << (missing.empty() ? "" : ";") << " " << doubled_count << " case(s) are doubled (";
            for (std::size_t k = 0; k < doubled.size(); ++k) m << (k ? "; " : "") << doubled[k];
            if (doubled_count > doubled.size()) m << "; ...";
            m << "): was a shard given twice?";
        }
        throw InputError("", 0, "DIR", m.str());
    }

    make_folder(out_dir);
    const FolderLock lock(out_dir);
    CampaignManifest merged = ref;
    merged.shard = Shard{};
    merged.merged_from = dirs;
    if (fs::exists(manifest_path(out_dir), ec)) {
        const CampaignManifest have = load_campaign_manifest(out_dir);
        if (have.id != ref.id)
            throw InputError(manifest_path(out_dir), 0, "campaign.id",
                             "this folder holds another campaign (\"" + have.name + "\"); choose a new --out folder");
    }
    write_file_atomic(manifest_path(out_dir), manifest_text(merged));
    write_file_atomic(cases_path(out_dir), sorted_table(all));
    std::sort(all.begin(), all.end(), [](const RawRow& a, const RawRow& b) { return a.row.index < b.row.index; });
    std::vector<CaseRow> plain;
    for (RawRow& r : all) plain.push_back(std::move(r.row));
    out << "Merged " << dirs.size() << " shard folder(s) of campaign \"" << ref.name << "\": all " << cases << " cases, each once.\n";
    out << write_campaign_report(plain, merged, out_dir);
    out << "Wrote " << out_dir << "/cases.csv, summary.txt and the plots\n";
}

// ------------------------------------------------------------------------------------------------ the report

namespace {

// Quantile by linear interpolation between order statistics (the common "type 7" definition); NaN if empty.
double quantile(std::vector<double> v, double q) {
    v.erase(std::remove_if(v.begin(), v.end(), [](double x) { return !std::isfinite(x); }), v.end());
    if (v.empty()) return NAN;
    std::sort(v.begin(), v.end());
    const double h = q * static_cast<double>(v.size() - 1);
    const auto lo = static_cast<std::size_t>(std::floor(h));
    const std::size_t hi = std::min(lo + 1, v.size() - 1);
    return v[lo] + (h - static_cast<double>(lo)) * (v[hi] - v[lo]);
}

double fraction(const std::vector<const CaseRow*>& rows, const std::function<std::optional<bool>(const CaseRow&)>& test) {
    std::size_t n = 0, yes = 0;
    for (const CaseRow* r : rows) {
        const auto t = test(*r);
        if (!t) continue;
        ++n;
        yes += *t ? 1 : 0;
    }
    return n ? static_cast<double>(yes) / static_cast<double>(n) : NAN;
}

std::string cell(const char* f, double v) {
    if (!std::isfinite(v)) return "-";
    char buf[64];
    std::snprintf(buf, sizeof buf, f, v);
    return buf;
}

std::string pad(const std::string& s, std::size_t w, bool left = false) {
    // Width in characters (the table holds a few multi-byte signs).
    std::size_t chars = 0;
    for (unsigned char c : s) chars += (c & 0xC0) != 0x80 ? 1 : 0;
    if (chars >= w) return s;
    return left ? s + std::string(w - chars, ' ') : std::string(w - chars, ' ') + s;
}

}  // namespace

RateInterval bootstrap_rate(const std::vector<bool>& hits, int resamples, double level, std::uint64_t seed) {
    RateInterval ri;
    const std::size_t n = hits.size();
    if (n == 0) {
        ri.rate = ri.lo = ri.hi = NAN;
        return ri;
    }
    const auto count = static_cast<double>(std::count(hits.begin(), hits.end(), true));
    ri.rate = count / static_cast<double>(n);
    Rng rng = make_rng(seed, "campaign-bootstrap");
    boost::random::uniform_int_distribution<std::size_t> pick(0, n - 1);
    std::vector<double> rates(static_cast<std::size_t>(std::max(resamples, 1)));
    for (double& r : rates) {
        std::size_t h = 0;
        for (std::size_t i = 0; i < n; ++i) h += hits[pick(rng)] ? 1 : 0;
        r = static_cast<double>(h) / static_cast<double>(n);
    }
    ri.lo = quantile(rates, 0.5 * (1.0 - level));
    ri.hi = quantile(rates, 1.0 - 0.5 * (1.0 - level));
    return ri;
}

std::string write_campaign_report(const std::vector<CaseRow>& rows, const CampaignManifest& m, const std::string& dir) {
    constexpr int resamples = 2000;
    constexpr double level = 0.95;
    std::vector<std::string> settings, scenarios;
    auto index_of = [](std::vector<std::string>& v, const std::string& s) {
        const auto it = std::find(v.begin(), v.end(), s);
        if (it != v.end()) return static_cast<std::size_t>(it - v.begin());
        v.push_back(s);
        return v.size() - 1;
    };
    auto x_of = [&](const CaseRow& r) { return m.epochs_are_offsets ? r.epoch_offset_years : r.epoch_year; };
    auto x_key = [](double x) { return std::llround(x * 1e4); };
    std::map<std::pair<std::size_t, long long>, std::vector<const CaseRow*>> by_epoch;   // (settings, epoch)
    std::map<std::pair<std::size_t, std::size_t>, std::vector<const CaseRow*>> by_scenario;  // (scenario, settings)
    std::map<long long, double> x_value;
    std::size_t failed = 0;
    std::set<std::uint64_t> seeds;
    for (const CaseRow& r : rows) {
        const std::size_t si = index_of(settings, r.settings), ci = index_of(scenarios, r.scenario);
        by_epoch[{si, x_key(x_of(r))}].push_back(&r);
        by_scenario[{ci, si}].push_back(&r);
        x_value[x_key(x_of(r))] = x_of(r);
        failed += r.ok ? 0 : 1;
        seeds.insert(r.seed);
    }

    std::ostringstream t;
    t << "Campaign " << m.name << " (id " << short_id(m.id) << "), shard " << m.shard.text();
    if (!m.merged_from.empty()) t << " (merged from " << m.merged_from.size() << " folders)";
    t << "\n" << rows.size() << " cases: " << scenarios.size() << " scenario(s), " << seeds.size() << " system(s), " << settings.size()
      << " setting(s), " << x_value.size() << " epoch(s); " << failed << " failed\n\n";
    t << "success: the true position within the field radius of the prediction at the epoch; interval: 95% percentile\n"
         "bootstrap over the cases (" << resamples << " resamples). in 1σ, in 2σ: the truth inside the predicted 1σ or 2σ\n"
         "ellipse (Gaussian errors would put it there 39% and 86% of the time). r90 holds: within the radius holding 90%\n"
         "of the covariance samples. luck: fraction of the luck window inside the field. closest − centre: year of closest\n"
         "agreement minus the data's centre (the σ-weighted mean observation time). Separations in arcmin; failed cases\n"
         "count as misses.\n\n";
    std::size_t first = 10;
    for (const std::string& n : settings) first = std::max(first, n.size() + 2);
    for (const std::string& n : scenarios) first = std::max(first, n.size() + 2);
    const std::vector<std::pair<std::string, std::size_t>> cols = {
        {"settings", first}, {m.epochs_are_offsets ? "epoch (±yr)" : "epoch", 12}, {"cases", 7}, {"success", 9}, {"interval", 15},
        {"median sep", 12}, {"90% sep", 10}, {"in 1σ", 7}, {"in 2σ", 7}, {"r90 holds", 11}, {"luck", 7}, {"closest − centre", 18}};
    auto header = [&](const std::string& first) {
        t << pad(first, cols[0].second, true);
        for (std::size_t k = 1; k < cols.size(); ++k) t << pad(cols[k].first, cols[k].second);
        t << "\n";
    };
    auto line = [&](const std::string& a, const std::string& b, const std::vector<const CaseRow*>& g, std::uint64_t seed) {
        std::vector<bool> hits;
        std::vector<double> sep, luck, closest;
        for (const CaseRow* r : g) {
            hits.push_back(r->ok && r->hit);
            if (r->ok) {
                sep.push_back(r->separation_arcmin);
                luck.push_back(r->luck_fraction);
                closest.push_back(r->closest_minus_centre_years());
            }
        }
        const RateInterval ri = bootstrap_rate(hits, resamples, level, seed);
        t << pad(a, cols[0].second, true) << pad(b, cols[1].second) << pad(std::to_string(g.size()), cols[2].second)
          << pad(cell("%.2f", ri.rate), cols[3].second) << pad("[" + cell("%.2f", ri.lo) + ", " + cell("%.2f", ri.hi) + "]", cols[4].second)
          << pad(cell("%.2f", quantile(sep, 0.5)), cols[5].second) << pad(cell("%.2f", quantile(sep, 0.9)), cols[6].second)
          << pad(cell("%.2f", fraction(g, [](const CaseRow& r) -> std::optional<bool> { if (!r.mahalanobis) return std::nullopt; return r.inside_sigma(1.0); })), cols[7].second)
          << pad(cell("%.2f", fraction(g, [](const CaseRow& r) -> std::optional<bool> { if (!r.mahalanobis) return std::nullopt; return r.inside_sigma(2.0); })), cols[8].second)
          << pad(cell("%.2f", fraction(g, [](const CaseRow& r) -> std::optional<bool> { if (!r.ok || !std::isfinite(r.radius90_arcmin)) return std::nullopt; return r.radius90_holds(); })), cols[9].second)
          << pad(cell("%.2f", quantile(luck, 0.5)), cols[10].second) << pad(cell("%+.1f", quantile(closest, 0.5)), cols[11].second) << "\n";
        return ri;
    };
    header("settings");
    // Curves for the plot, per settings: epochs, rates, band.
    std::vector<std::vector<double>> cx(settings.size()), cy(settings.size()), clo(settings.size()), chi(settings.size());
    for (const auto& [key, g] : by_epoch) {
        const double x = x_value[key.second];
        const std::string epoch = m.epochs_are_offsets ? cell("%+g", x) : cell("%g", x);
        const RateInterval ri = line(settings[key.first], epoch, g, derive_seed(key.first, "campaign-bootstrap-epoch", static_cast<std::uint64_t>(key.second)));
        cx[key.first].push_back(x);
        cy[key.first].push_back(ri.rate);
        clo[key.first].push_back(ri.lo);
        chi[key.first].push_back(ri.hi);
    }
    if (scenarios.size() > 1) {
        t << "\nBy scenario (all epochs together):\n";
        header("scenario");
        for (const auto& [key, g] : by_scenario)
            line(scenarios[key.first], settings[key.second], g, derive_seed(key.first, "campaign-bootstrap-scenario", key.second));
    }
    if (failed) {
        t << "\nFailed cases:\n";
        std::size_t shown = 0;
        for (const CaseRow& r : rows) {
            if (r.ok) continue;
            if (++shown > 10) { t << "  ... and " << failed - 10 << " more (see cases.csv)\n"; break; }
            t << "  case " << r.index << " (" << r.scenario << ", seed " << r.seed << ", " << r.settings << "): " << r.note << "\n";
        }
    }
    const std::string summary = t.str();
    write_file_atomic((fs::path(dir) / "summary.txt").string(), summary);

    // Plots.
    const std::string title = "Campaign " + m.name + " (" + std::to_string(rows.size()) + " cases)";
    const std::string x_label = m.epochs_are_offsets ? "search epoch − the scenario's search epoch (years)" : "search epoch (year)";
    {
        plot::Figure f;
        f.title = title;
        plot::Panel p;
        p.title = "success rate against search epoch, with 95% bootstrap bands";
        p.x_label = x_label;
        p.y_label = "success rate";
        p.y_range = std::make_pair(-0.02, 1.02);
        for (std::size_t s = 0; s < settings.size(); ++s) {
            plot::Series ser;
            ser.label = settings[s];
            ser.x = cx[s];
            ser.y = cy[s];
            ser.style = plot::Style::line_points;
            p.series.push_back(ser);
            p.bands.push_back({settings[s], cx[s], clo[s], chi[s], std::nullopt, 0.2});
        }
        if (m.epochs_are_offsets) p.lines.push_back({0.0, false, "search epoch", std::nullopt, true});
        f.panels.push_back(p);
        plot::save_png(f, (fs::path(dir) / "success_vs_epoch.png").string());
    }
    auto histograms = [&](const std::string& file, const std::string& panel_title, const std::string& label,
                          const std::function<double(const CaseRow&)>& value, std::optional<std::pair<double, double>> range,
                          const std::vector<plot::RefLine>& lines) {
        std::vector<std::vector<double>> v(settings.size());
        std::vector<double> all;
        for (const CaseRow& r : rows) {
            if (!r.ok) continue;
            const double x = value(r);
            if (!std::isfinite(x)) continue;
            v[index_of(settings, r.settings)].push_back(x);
            all.push_back(x);
        }
        if (!range && !all.empty()) {
            const auto [lo, hi] = std::minmax_element(all.begin(), all.end());
            range = std::make_pair(*lo, *hi > *lo ? *hi : *lo + 1.0);
        }
        const int bins = std::clamp(static_cast<int>(std::lround(std::sqrt(static_cast<double>(std::max<std::size_t>(all.size(), 1))))), 5, 40);
        plot::Figure f;
        f.title = title;
        plot::Panel p;
        p.title = panel_title;
        p.x_label = label;
        p.y_label = "cases";
        for (std::size_t s = 0; s < settings.size(); ++s) p.series.push_back(plot::histogram_series(plot::bin_samples(v[s], bins, range), settings[s]));
        p.lines = lines;
        f.panels.push_back(p);
        plot::save_png(f, (fs::path(dir) / file).string());
    };
    std::vector<plot::RefLine> radius_lines;
    {
        std::set<long long> radii;
        for (const CaseRow& r : rows)
            if (radii.insert(std::llround(r.field_radius_arcmin * 1e3)).second && r.field_radius_arcmin > 0)
                radius_lines.push_back({std::log10(r.field_radius_arcmin), false, "field radius " + cell("%g", r.field_radius_arcmin) + "′", plot::palette(1), true});
    }
    histograms("separations.png", "distribution of the separation between prediction and truth at the search epoch",
               "log10 of the separation (arcmin)", [](const CaseRow& r) { return r.separation_arcmin > 0 ? std::log10(r.separation_arcmin) : NAN; },
               std::nullopt, radius_lines);
    histograms("luck_fraction.png", "distribution of the luck fraction (share of the luck window inside the field)",
               "luck fraction", [](const CaseRow& r) { return r.luck_fraction; }, std::make_pair(0.0, 1.0), {});
    {
        plot::Figure f;
        f.title = title;
        f.height_per_panel = 340;
        plot::Panel p;
        p.title = "epoch of closest agreement relative to the data's centre, for each case";
        p.x_label = "search epoch − data centre (years)";
        p.y_label = "closest agreement − data centre (years)";
        std::vector<double> all;
        std::vector<std::vector<double>> per(settings.size());
        for (std::size_t s = 0; s < settings.size(); ++s) {
            plot::Series ser;
            ser.label = settings[s];
            ser.style = plot::Style::points;
            for (const CaseRow& r : rows) {
                if (!r.ok || r.settings != settings[s]) continue;
                ser.x.push_back(r.epoch_year - r.data_centre_year);
                ser.y.push_back(r.closest_minus_centre_years());
                per[s].push_back(r.closest_minus_centre_years());
                all.push_back(r.closest_minus_centre_years());
            }
            p.series.push_back(ser);
        }
        p.lines.push_back({0.0, true, "data centre", std::nullopt, true});
        f.panels.push_back(p);
        plot::Panel h;
        h.title = "distribution of the same";
        h.x_label = "closest agreement − data centre (years)";
        h.y_label = "cases";
        std::optional<std::pair<double, double>> range;
        if (!all.empty()) {
            const auto [lo, hi] = std::minmax_element(all.begin(), all.end());
            range = std::make_pair(*lo, *hi > *lo ? *hi : *lo + 1.0);
        }
        const int bins = std::clamp(static_cast<int>(std::lround(std::sqrt(static_cast<double>(std::max<std::size_t>(all.size(), 1))))), 5, 40);
        for (std::size_t s = 0; s < settings.size(); ++s) h.series.push_back(plot::histogram_series(plot::bin_samples(per[s], bins, range), settings[s]));
        h.lines.push_back({0.0, false, "data centre", std::nullopt, true});
        f.panels.push_back(h);
        plot::save_png(f, (fs::path(dir) / "closest_agreement.png").string());
    }
    return summary;
}

}  // namespace wayward
