// Pieces the campaign's own files share (spec, rows, folder, runner, merge); not for other stages.
#pragma once

#include <cmath>
#include <cstdio>
#include <mutex>
#include <string>
#include <vector>

#include "sim/campaign/campaign.hpp"

namespace wayward {

// A number in a printf format, or "" when it is not finite (an empty CSV cell).
inline std::string cell_or_empty(const char* printf_format, double v) {
    if (!std::isfinite(v)) return "";
    char buf[64];
    std::snprintf(buf, sizeof buf, printf_format, v);
    return buf;
}

struct RawRow {
    CaseRow row;
    std::string line;  // without its newline
    long line_number = 0;
};

// Reads a cases.csv. `complete_end` receives the byte length of the whole lines (a torn last line is not
// returned); `torn` whether one was found.
std::vector<RawRow> read_raw_rows(const std::string& path, std::size_t* complete_end = nullptr, bool* torn = nullptr);
// Rows of a shard folder, checked against the spec: each case belongs to the shard, appears once, and names the
// scenario, seed and settings that its index stands for.
std::vector<RawRow> checked_rows(const CampaignSpec& spec, const Shard& shard, const std::string& path, std::size_t* complete_end,
                                 bool* torn);
// The header and the rows sorted by case.
std::string sorted_table(std::vector<RawRow> rows);

std::string manifest_path(const std::string& dir);
std::string cases_path(const std::string& dir);
std::string manifest_text(const CampaignManifest& m);
CampaignManifest manifest_for(const CampaignSpec& spec, const Shard& shard);
std::string short_id(const std::string& id);
// Creates the output folder (InputError naming --out when it cannot).
void make_folder(const std::string& dir);

// Appends whole lines with one write() call each time, then flushes them to disk. Never follows a link planted
// at the journal's name.
class Journal {
public:
    explicit Journal(const std::string& path);
    ~Journal();
    Journal(const Journal&) = delete;
    Journal& operator=(const Journal&) = delete;
    void append(const std::string& lines);
    void close();

private:
    std::string path_;
    int fd_ = -1;
    std::mutex mutex_;
};

}  // namespace wayward

namespace wayward {

struct Exercise;
struct Prediction;
// A team's own solver on one unit: writes the exercise (brief with the case's epochs as its search epochs,
// observations, observer track; no answer key) into `case_dir`, runs the settings' command there (working folder:
// the spec's; the case folder as the last argument; stdout and stderr into case_dir/solver.log), waits at most
// the settings' timeout (killing it then, or when `cancel` is set) and reads case_dir/prediction.toml. One
// prediction per epoch, matched by epoch_year (to a thousandth of a year). Throws std::runtime_error with the
// reason when the program fails, times out, or writes no usable prediction.
std::vector<Prediction> run_external_solver(const CampaignSettings& st, const Exercise& ex, const std::vector<double>& epochs_year,
                                            const std::string& case_dir, const std::atomic<bool>* cancel);

}  // namespace wayward
