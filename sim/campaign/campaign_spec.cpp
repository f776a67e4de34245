// Campaign specs (read and validated before any work), case numbering, system seeds and shards. See campaign.hpp.
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
#include "sim/search/strategy.hpp"
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

// Whether the scenario has at least two known planets whatever it draws (the spacing rule needs two).
bool has_two_known(const Scenario& sc) {
    int known = 0;
    for (const BodySpec& b : sc.bodies) known += b.role == Role::known ? 1 : 0;
    if (sc.family.present) known += sc.family.count_min;
    return known >= 2;
}

}  // namespace

CampaignSpec load_campaign_spec(const std::string& path) {
    const std::string text = detail::read_text_file(path);
    const fs::path parent = fs::path(path).parent_path();
    return parse_campaign_spec(text, path, parent.empty() ? std::string(".") : parent.string());
}

namespace {

void read_campaign_table(TableReader& root, const std::string& file, CampaignSpec& spec) {
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
}

// Every [[scenario]]: its file read and validated; returns the campaign's identity text (the spec and every
// scenario file's text, in order).
std::string read_scenarios(TableReader& root, const std::string& file, const std::string& base_dir, CampaignSpec& spec) {
    const auto scenario_tables = root.tables("scenario");
    if (scenario_tables.empty()) throw InputError(file, 1, "scenario", "at least one [[scenario]] with a file is required");
    std::string identity = spec.text;
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
    return identity;
}

void read_epochs(TableReader& root, const std::string& file, CampaignSpec& spec) {
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
                if (spec.epochs[i] == spec.epochs[j]) r.fail(key, "the epoch " + cell_or_empty("%g", spec.epochs[i]) + " is listed twice");
        for (CampaignScenario& cs : spec.scenarios) {
            const double lo = cs.scenario.epoch0_year, hi = cs.scenario.epoch0_year + cs.scenario.span_years;
            for (double e : spec.epochs) {
                const double y = spec.epochs_are_offsets ? cs.search_epoch_year + e : e;
                if (!(y >= lo && y <= hi)) {
                    const std::string what = spec.epochs_are_offsets
                                                 ? "the offset " + cell_or_empty("%+g", e) + " puts the epoch at " + cell_or_empty("%g", y) + " (from " + cs.name +
                                                       "'s search epoch " + cell_or_empty("%g", cs.search_epoch_year) + "), which"
                                                 : "the epoch " + cell_or_empty("%g", y);
                    r.fail(key, what + " lies outside " + cs.name + "'s span " + cell_or_empty("%g", lo) + " to " + cell_or_empty("%g", hi));
                }
                cs.epochs_year.push_back(y);
            }
        }
        r.finish();
    }
}

void read_settings(TableReader& root, const std::string& file, const std::string& base_dir, CampaignSpec& spec) {
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
        if (r.has("external")) {
            // A team's own solver: a command, no options of Wayward's solver.
            s.external = r.strings("external").value_or(std::vector<std::string>{});
            if (s.external.empty() || s.external.front().empty()) r.fail("external", "must name a program: [\"program\", \"argument\", ...]");
            s.external_timeout_s = r.number_or("external_timeout_s", 600.0);
            if (!(s.external_timeout_s > 0.0 && s.external_timeout_s <= 86400.0)) r.fail("external_timeout_s", "must be in (0, 86400] seconds");
            s.external_dir = base_dir.empty() ? "." : base_dir;
            for (const char* key : {"circular", "coplanar", "ecc_sigma", "tilt_sigma_deg", "samples", "starts", "shape_starts", "grid_distances",
                                    "grid_longitudes", "neglect_light_time", "distance", "era_systematics"})
                if (r.has(key)) r.fail(key, "an external solver takes no options of Wayward's solver (give them to your program)");
            r.finish();
            spec.settings.push_back(std::move(s));
            continue;
        }
        // The solve's options under their library names (solve_options.hpp); a range error names the spec key.
        SolveOptions& o = s.options;
        o.circular = r.boolean("circular").value_or(false);
        o.coplanar = r.boolean("coplanar").value_or(false);
        o.eccentricity_prior_sigma = r.number_or("ecc_sigma", o.eccentricity_prior_sigma);
        o.inclination_prior_rad = r.number_or("tilt_sigma_deg", o.inclination_prior_rad / deg) * deg;
        auto bounded = [&](const char* key, int fallback, long long lo, long long hi) {
            const long long v = r.integer(key).value_or(fallback);
            if (v < lo || v > hi) r.fail(key, "must be in [" + std::to_string(lo) + ", " + std::to_string(hi) + "]");
            return static_cast<int>(v);
        };
        o.samples = bounded("samples", o.samples, 20, 100000);
        o.starts = bounded("starts", o.starts, 1, 64);
        o.shape_starts = r.boolean("shape_starts").value_or(true);
        o.grid_distances = bounded("grid_distances", o.grid_distances, 2, 100);
        o.grid_longitudes = bounded("grid_longitudes", o.grid_longitudes, 4, 360);
        if (r.boolean("neglect_light_time").value_or(false)) o.model.light_time = LightTime::neglected;
        o.model.era_systematics = r.string("era_systematics").value_or("none");
        if (o.model.era_systematics != "none" && o.model.era_systematics != "offsets" && o.model.era_systematics != "drifts")
            r.fail("era_systematics", "must be none, offsets or drifts, not \"" + o.model.era_systematics + "\"");
        try {
            set_distance_prior(o, r.string("distance").value_or("free"));  // validates every option
        } catch (const InputError& e) {
            r.fail(e.field(), e.message());
        }
        s.options.track_years = spec.window_years;
        if (s.options.distance == DistancePrior::spacing)
            for (const CampaignScenario& cs : spec.scenarios)
                if (!has_two_known(cs.scenario))
                    r.fail("distance", "the spacing rule needs at least two known planets, and " + cs.name + " may have fewer");
        r.finish();
        spec.settings.push_back(std::move(s));
    }
}

// [search]: the rehearsal per case, when present. Every scenario needs a telescope, and each epoch's nights must
// end inside its span.
void read_search(TableReader& root, const std::string& file, CampaignSpec& spec) {
    const toml::table* st = root.table("search");
    if (!st) return;
    TableReader r(*st, file, "search");
    spec.search.on = true;
    const long long nights = r.integer("nights").value_or(30);
    if (nights < 1 || nights > 366) r.fail("nights", "must be in [1, 366] (the night budget of each case)");
    spec.search.nights = static_cast<int>(nights);
    spec.search.strategy = r.string("strategy").value_or("probability");
    if (spec.search.strategy == "plan") r.fail("strategy", "a campaign searches by probability, sweep or spiral (a plan file belongs to one exercise)");
    try {
        strategy_by_name(spec.search.strategy);
    } catch (const InputError& e) {
        r.fail("strategy", e.message());
    }
    for (const CampaignSettings& st : spec.settings)
        if (!st.external.empty()) r.fail("nights", "settings \"" + st.name + "\" use an external solver, whose region the rehearsal cannot map");
    for (const CampaignScenario& cs : spec.scenarios) {
        if (!cs.scenario.telescope) r.fail("nights", cs.name + " has no [telescope] table, so it cannot be searched");
        const double end = cs.scenario.epoch0_year + cs.scenario.span_years;
        for (double y : cs.epochs_year)
            if (y + (spec.search.nights + 2.0) / julian_year_days > end)
                r.fail("nights", std::to_string(spec.search.nights) + " nights from the epoch " + cell_or_empty("%g", y) + " run past " + cs.name +
                                     "'s span (it ends at " + cell_or_empty("%g", end) + ")");
    }
    r.finish();
}

}  // namespace

CampaignSpec parse_campaign_spec(const std::string& text, const std::string& file, const std::string& base_dir) {
    const toml::table root_t = detail::parse_toml(text, file);
    TableReader root(root_t, file, "");
    CampaignSpec spec;
    spec.file = file;
    spec.text = text;
    read_campaign_table(root, file, spec);
    const std::string identity = read_scenarios(root, file, base_dir, spec);
    read_epochs(root, file, spec);
    read_settings(root, file, base_dir, spec);
    read_search(root, file, spec);
    root.finish();
    // Every case is one row; a count no machine could finish is refused before anything is written.
    constexpr double max_cases = 10'000'000;
    const double cases = static_cast<double>(spec.scenarios.size()) * static_cast<double>(spec.seeds) *
                         static_cast<double>(spec.settings.size()) * static_cast<double>(spec.epochs.size());
    if (cases > max_cases)
        throw InputError(file, 1, "campaign.seeds", "the campaign would have " + cell_or_empty("%.0f", cases) +
                                                        " cases (scenarios x seeds x settings x epochs); at most 10000000 are allowed");
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

}  // namespace wayward
