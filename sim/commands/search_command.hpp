// `wayward search DIR`: the telescope search rehearsed between solve and score (for a folder imported from a
// survey record, which has no truth to rehearse against, a list of fields instead: run_field_list). Reads the brief, the team's
// solution and its telescope (the brief's, or --telescope FILE), plans and runs the nights against the sealed
// truth, and writes DIR/search/plan.csv, log.csv, nights.csv, candidates.csv, rehearsal.toml (seed and telescope),
// summary.txt and search.png. Every input is read and checked
// before anything is written.
#pragma once

#include <cstdint>
#include <optional>
#include <ostream>
#include <string>

namespace wayward {

struct SearchArgs {
    std::string dir;
    std::string solution;            // default DIR/solution.toml
    int nights = 30;
    std::optional<double> start_year;  // default: the solution's prediction epoch
    std::optional<std::string> strategy;  // default: probability (plan when --plan is given)
    std::string telescope_file;      // overrides the brief's telescope
    std::string plan_file;           // the team's own plan (night,lon_deg,lat_deg)
    std::uint64_t seed = 1;          // weather, sky, chart and detections
};
// `table`, when given, receives the path of the table the search wrote: DIR/search/nights.csv for a rehearsal,
// DIR/search/fields.csv for the fields of an imported record.
int run_search(const SearchArgs& args, std::ostream& out, std::string* table = nullptr);

struct Exercise;
struct Solution;
// For a folder imported from a survey record (no sealed truth, nothing to rehearse): the region's fields at one
// date (--start, default the solution's epoch), most probable first, their centres in ICRS, none within the
// elongation limit; writes DIR/search/fields.csv and fields.txt. Nights are left to the observatory's tools.
int run_field_list(const SearchArgs& args, const Exercise& ex, const Solution& solution, std::ostream& out);

struct RehearsalResult;
// The files' texts (public for the tests' byte-for-byte comparisons).
std::string search_plan_csv(const RehearsalResult& r);
std::string search_log_csv(const RehearsalResult& r, double epoch0_year);
std::string search_nights_csv(const RehearsalResult& r);       // per night: weather, fields, probability covered, why none
std::string search_candidates_csv(const RehearsalResult& r);   // where each visit's candidates were measured

// When the whole search could search no field: one line saying so and counting the nights by reason (the
// region within the elongation limit, no darkness, too low, cloudy); "" when any field was searched.
std::string search_idle_line(const RehearsalResult& r, double elongation_limit_deg);

// DIR/search, created if need be: InputError if it is a symbolic link or not a folder.
std::string search_folder(const std::string& exercise_dir);

// The caution printed with every plan of pointings.
extern const char* const search_caution;

}  // namespace wayward
