// A campaign folder: its manifest, the lock that keeps two runs apart, the journal that appends whole rows, and the
// checks of the rows it holds. See campaign.hpp.
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
using detail::TableReader;

Journal::Journal(const std::string& path) : path_(path) {
    fd_ = ::open(path.c_str(), O_WRONLY | O_APPEND | O_CREAT | O_CLOEXEC | O_NOFOLLOW, 0644);
    if (fd_ < 0) throw InputError(path, 0, "--out", std::string("cannot write: ") + std::strerror(errno));
}

Journal::~Journal() { close(); }

void Journal::append(const std::string& lines) {
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

void Journal::close() {
    if (fd_ >= 0) ::close(fd_);
    fd_ = -1;
}

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
       << detail::toml_text_shortest(root) << "\n";
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


void make_folder(const std::string& dir) {
    if (dir.empty()) throw InputError("", 0, "--out", "is required");
    std::error_code ec;
    fs::create_directories(dir, ec);
    if (ec) throw InputError(dir, 0, "--out", "cannot create the folder: " + ec.message());
    if (!fs::is_directory(dir, ec)) throw InputError(dir, 0, "--out", "is not a folder");
}


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
        r.fail("shard", e.message());
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

}  // namespace wayward
