// Merging the shard folders of one campaign: every case exactly once. See campaign.hpp.
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

// ------------------------------------------------------------------------------------------------ merge

MergedCampaign merge_campaigns(const std::vector<std::string>& dirs, const std::string& out_dir, std::ostream& out) {
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
    const WriterLock lock(out_dir, "--out");  // two runs never share a folder
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
    return {std::move(plain), merged};
}

}  // namespace wayward
