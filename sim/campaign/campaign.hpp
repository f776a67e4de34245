// Campaigns: many exercises run and scored in memory, to measure how often a team's method finds the hidden body.
//
// A campaign spec (TOML) names scenarios, a number of seeds, a campaign seed, named solve settings and search
// epochs. One case = (scenario, seed, settings, epoch). Work is shared: each system (scenario, seed) is generated
// and observed once, each unit (scenario, seed, settings) is solved once, and the unit's solution is predicted at
// every epoch from one set of model runs (the predictor, sim/predict). Each finished unit appends its rows to DIR/cases.csv
// with a single write() call, so a killed run leaves only whole rows and resumes where it stopped; a manifest
// (DIR/manifest.toml) names the campaign (SHA-256 of the spec and its scenario files) and the shard. Sharding
// splits the units, `merge` joins the shards. The report (sim/report/campaign_report): summary.txt and PNG plots (success rate against epoch
// with Wilson bands, separations, luck fractions, epoch of closest agreement).
//
// Determinism: a system's seed comes from (campaign seed, scenario name, seed number) through derive_seed, and is
// the seed that `wayward new` takes to make the same exercise; the covariance samples' seed from (system seed,
// settings name). Solves run single-threaded inside the campaign's worker threads, so rows depend neither on the
// thread count nor on the shard or the order. Units: years, arcmin, au, solar masses.
#pragma once

#include <atomic>
#include <cstdint>
#include <optional>
#include <ostream>
#include <string>
#include <vector>

#include "sim/exercise/exercise.hpp"
#include "sim/scenario/scenario.hpp"
#include "sim/solve/solve.hpp"

namespace wayward {

struct CampaignScenario {
    std::string name;                 // label in the table (letters, digits, - _ .)
    std::string path;                 // as resolved from the spec's folder
    long line = 0;                    // of its [[scenario]] table in the spec
    Scenario scenario;
    std::string sha256;               // of the scenario file's text (part of the campaign's identity)
    double search_epoch_year = 0.0;   // the scenario's first search epoch (offsets count from it)
    std::vector<double> epochs_year;  // the campaign's epochs for this scenario, in spec order
};

struct CampaignSettings {
    std::string name;
    long line = 0;
    SolveOptions options;             // as `wayward solve` would build them (threads and seed set per unit)
    // A team's own solver instead of Wayward's (`external = ["program", "arg", ...]` in the spec): run once per
    // unit in the spec's folder with the case's exercise folder as its last argument; it writes prediction.toml
    // there (one prediction per epoch of the brief). Empty: Wayward's solver.
    std::vector<std::string> external;
    double external_timeout_s = 600.0;
    std::string external_dir;         // the working folder (the spec's)
};

// The search rehearsal in a campaign ([search] in the spec): off unless the table is there. Each case runs
// `nights` nights of `strategy` from its epoch with the scenario's telescope; the nights are the campaign's night
// budget, and discovery within them is the case's search success.
struct CampaignSearch {
    bool on = false;
    int nights = 30;
    std::string strategy = "probability";
};

struct CampaignSpec {
    std::string file;                 // the spec's path (for messages)
    std::string text;                 // its content
    std::string name;
    std::string id;                   // SHA-256 of the spec text and every scenario file's text, in order
    std::uint64_t seed = 1;           // campaign seed
    std::size_t seeds = 0;            // systems per scenario
    double window_years = 60.0;       // half-window of the luck curve
    bool epochs_are_offsets = true;   // epochs given as offsets from each scenario's search epoch, else as years
    std::vector<double> epochs;       // as given (offsets in years, or years)
    std::vector<CampaignScenario> scenarios;
    std::vector<CampaignSettings> settings;
    CampaignSearch search;

    std::size_t systems() const { return scenarios.size() * seeds; }
    std::size_t units() const { return systems() * settings.size(); }
    std::size_t cases() const { return units() * epochs.size(); }
};

// Reads and validates a spec and every scenario it names; throws InputError naming file, line and field.
CampaignSpec load_campaign_spec(const std::string& path);
// The same from text; scenario paths are taken relative to `base_dir`.
CampaignSpec parse_campaign_spec(const std::string& text, const std::string& file, const std::string& base_dir);

// Case numbering: case = ((scenario * seeds + seed_index) * settings + settings_index) * epochs + epoch_index;
// unit = case / epochs (one solve); system = unit / settings (one generated exercise).
struct CaseKey {
    std::size_t scenario = 0, seed_index = 0, settings = 0, epoch = 0;
};
CaseKey case_key(const CampaignSpec& spec, std::size_t case_index);
std::size_t case_index(const CampaignSpec& spec, const CaseKey& key);
// The seed of system (scenario, seed number): what `wayward new SCENARIO --seed S` takes to make the same exercise.
std::uint64_t campaign_system_seed(const CampaignSpec& spec, std::size_t scenario, std::size_t seed_index);

// Shard K of N holds the units u with u % N == K - 1 (all epochs of a unit stay together: one solve).
struct Shard {
    std::size_t index = 1, count = 1;
    bool holds_unit(std::size_t unit) const { return unit % count == index - 1; }
    std::string text() const { return std::to_string(index) + "/" + std::to_string(count); }
};
Shard parse_shard(const std::string& text);  // "K/N" with 1 <= K <= N; InputError naming --shard otherwise

// One row of cases.csv.
struct CaseRow {
    std::size_t index = 0;
    std::string scenario;
    std::uint64_t seed = 0;
    std::string settings;
    double epoch_year = 0.0;
    double epoch_offset_years = 0.0;          // from the scenario's search epoch
    bool ok = true;                           // false: the case failed (note says why); it counts as a miss
    double separation_arcmin = NAN;
    double field_radius_arcmin = 0.0;
    bool hit = false;                         // never for a case the detection test did not detect (no pointing)
    bool detected = true;                     // the record demanded a hidden body (the solve's detection test)
    std::optional<double> mahalanobis;        // from the linear 1-sigma ellipse
    double radius90_arcmin = NAN;             // radius holding 90% of the covariance samples
    double map_rank = NAN;                    // the truth's rank in the virtual bodies' map, where it is not linear
    double luck_fraction = NAN;               // of the luck window inside the field radius
    double closest_year = NAN, closest_arcmin = NAN;
    double data_centre_year = NAN;            // sigma-weighted mean time of the kept observations
    double fitted_a_au = NAN, true_a_au = NAN, fitted_mass = NAN, true_mass = NAN;
    bool searched = false;                    // the search rehearsal ran for this case (empty cells otherwise)
    bool search_found = false;                // the body confirmed within the night budget
    int search_night = 0;                     // night of discovery (1-based; 0 when not found)
    double search_hours = NAN;                // telescope hours used until found or the budget ran out
    std::string note;                         // why a case failed (no commas or quotes)
    double unit_seconds = 0.0;                // wall time of the unit's solve and predictions (not deterministic)

    bool inside_sigma(double k) const { return mahalanobis && *mahalanobis <= k; }
    bool radius90_holds() const { return ok && separation_arcmin <= radius90_arcmin; }
    double closest_minus_centre_years() const { return closest_year - data_centre_year; }
};
const std::string& campaign_csv_header();
std::string format_case_row(const CaseRow& row);  // one line with its newline
CaseRow parse_case_row(const std::string& line, const std::string& file, long line_number);
// Reads a whole cases.csv (header checked); rows in file order.
std::vector<CaseRow> read_case_rows(const std::string& path);

struct CampaignRun {
    std::string out_dir;
    unsigned threads = 0;                      // units solved at once (0: all cores); each solve uses one thread
    Shard shard;
    bool quiet = false;
    const std::atomic<bool>* cancel = nullptr; // set (e.g. by SIGINT): stop soon, keep every finished row
};
// manifest.toml of a campaign folder.
struct CampaignManifest {
    std::string name, id, spec_file, spec_text;
    Shard shard;
    std::size_t cases = 0, units = 0, epochs = 0;
    bool epochs_are_offsets = true;
    std::vector<std::string> merged_from;
};
CampaignManifest load_campaign_manifest(const std::string& dir);

struct CampaignOutcome {
    std::size_t shard_cases = 0;   // cases this shard holds
    std::size_t resumed = 0;       // found finished in cases.csv
    std::size_t finished = 0;      // finished in this run
    std::size_t failed = 0;        // rows with status failed (in the whole shard)
    bool repaired = false;         // a torn last row was cut off
    bool complete = false;         // every case of the shard is in cases.csv (then sorted)
    std::vector<CaseRow> rows;     // when complete: every row of the shard, sorted by case (for the report)
    CampaignManifest manifest;     // of the folder
};
// Checks the output folder (creates it; refuses a folder holding another campaign or shard, or one in use),
// then runs every unfinished unit of the shard, then sorts cases.csv. The report (sim/report/campaign_report)
// is the caller's to write.
CampaignOutcome run_campaign(const CampaignSpec& spec, const CampaignRun& run, std::ostream& progress);


// Joins shard folders of one campaign into `out_dir` (cases.csv sorted, manifest as shard 1/1). Refuses
// (InputError) folders of different campaigns, and lists missing and doubled cases. Returns every row, sorted
// by case, and the merged manifest (for the report).
struct MergedCampaign {
    std::vector<CaseRow> rows;
    CampaignManifest manifest;
};
MergedCampaign merge_campaigns(const std::vector<std::string>& dirs, const std::string& out_dir, std::ostream& out);

// Caps this process's address space (setrlimit RLIMIT_AS) at what is mapped now plus `gigabytes`, or by default
// plus 1 GB + 0.5 GB per thread (at most 80% of physical memory), so that one model run that goes astray fails its
// case with std::bad_alloc instead of taking the machine down; 0 leaves the limit alone. Returns the limit set
// (bytes, 0: none).
std::uint64_t limit_memory(double gigabytes, unsigned threads);

// Wilson score interval of a success rate (Wilson 1927, JASA 22:209; recommended by Agresti & Coull 1998,
// Am. Stat. 52:119): unlike a bootstrap it widens at 0 and 1 (5 of 5 gives [0.57, 1] at 95%, not [1, 1]).
// NaN for no cases.
struct RateInterval {
    double rate = 0.0, lo = 0.0, hi = 0.0;
};
RateInterval wilson_rate(std::size_t successes, std::size_t cases, double level);
RateInterval wilson_rate(const std::vector<bool>& hits, double level);
// Below this many cases a rate's interval is wide whatever its method; reports say so beside it.
inline constexpr std::size_t small_sample_cases = 20;

}  // namespace wayward
