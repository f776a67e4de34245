// The commands of the `wayward` tool as library functions (the CLI only parses arguments into these structs),
// so tests and the viewer can run exactly what a user runs.
#pragma once

#include <cstdint>
#include <optional>
#include <ostream>
#include <string>
#include <vector>

#include "sim/solve/solve.hpp"

namespace wayward {

struct EphemerisArgs {
    std::string scenario;
    std::vector<std::string> at;  // each: days after epoch 0 (365.25 or 365.25d), a year (1955.25yr) or a date (1955-03-21)
    std::uint64_t seed = 1;
    std::string method = "gauss-radau";  // the truth default (IntegratorOptions)
};
int run_ephemeris(const EphemerisArgs& args, std::ostream& out);
// One time given on the command line, in days after epoch 0: "D" or "Dd" (days), "Yyr" (a decimal year, as the
// program's years: Julian epochs), or "YYYY-MM-DD" (a Gregorian date, 0 h). InputError naming `flag` otherwise.
double days_from_time_text(const std::string& text, double epoch0_year, const std::string& flag);

struct NewArgs {
    std::string scenario;
    std::optional<std::uint64_t> seed;  // none: a secret random seed, written only into the answer key
    std::string out_dir;
    std::string key_dir;  // default: OUT-answer-key beside OUT
    std::string record_dir;  // also write the exercise in the record form here (none: not written)
    bool force = false;
};
// Makes an exercise folder and prints its summary.
int run_new(const NewArgs& args, std::ostream& out);

struct ResidualsArgs {
    std::string dir;
    bool neglect_light_time = false;
    bool quiet = false;  // no progress lines on stderr
};
// Fits the known-bodies model, writes residuals.csv and residuals.png into the exercise folder, prints RMS.
int run_residuals(const ResidualsArgs& args, std::ostream& out, std::ostream& progress);

struct SolveArgs {
    std::string dir;
    std::string distance = "free";  // free | fixed:A | gauss:A,SIGMA | spacing[:FRACTION]
    bool circular = false;
    bool coplanar = false;
    double ecc_sigma = 0.1;       // weak prior on e cos(varpi), e sin(varpi)
    double tilt_sigma_deg = 3.0;  // weak prior on the tilt components
    std::optional<double> epoch_year;
    int samples = 300;
    int starts = 4;
    bool circular_starts_only = false;
    unsigned threads = 0;
    bool quiet = false;
    bool neglect_light_time = false;
    bool point_anyway = false;    // write the pointing even when the record does not demand a hidden body
    std::string fitting_model = "wisdom-holman";  // a name of model_integrators()
    std::string derivatives = "variational";      // variational or differences
    std::string era_systematics = "none";         // none, offsets or drifts (nuisance parameters per era)
    std::string out_file;  // where solution.toml goes (default: EXERCISE/solution.toml)
    bool sky_map = false;  // also write DIR/skymap.fits and DIR/skymap_regions.csv
    std::string sky_map_form = "flat";  // flat (NESTED, one nside) or multiorder (NUNIQ cells)
};
SolveOptions solve_options(const SolveArgs& args);  // parses the priors (InputError on bad values)
// `solved`, when given, receives the solution in memory (with its model, for predictions at other epochs); it is
// left untouched when the record demands no hidden body and --point-anyway is not set.
int run_solve(const SolveArgs& args, std::ostream& out, std::ostream& progress, Solution* solved = nullptr);

struct ScoreArgs {
    std::string dir;
    std::string solution;             // default DIR/solution.toml
    std::string key;                  // default DIR-answer-key/answer_key.toml beside DIR
    std::optional<double> lon_deg, lat_deg, epoch_year;  // a trainee's own prediction
    std::string prediction_file;      // or a small TOML file with lon_deg, lat_deg, epoch_year
    std::optional<double> radius_arcmin;  // the trainee's region: 90 % radius of a circular Gaussian
    std::string ellipse;              // or "A,B,PA": 1-sigma semi-axes (arcmin), position angle (deg)
    double window_years = 60.0;
};
struct Score;
int run_score(const ScoreArgs& args, std::ostream& out, Score* scored = nullptr);  // `scored` receives the numbers

}  // namespace wayward

// ---- Campaigns, merge and the error budget (sim/campaign.hpp, sim/budget.hpp) ----
namespace wayward {

struct CampaignArgs {
    std::string spec;
    std::string out_dir;
    unsigned threads = 0;        // cases solved at once (0: all cores)
    std::string shard = "1/1";   // K/N: the units u with u % N == K - 1
    double max_memory_gb = -1.0; // address-space cap (-1: 1 GB + 0.5 GB per thread; 0: none)
    bool quiet = false;
};
// Runs (or resumes) a campaign; SIGINT/SIGTERM stop it after keeping every finished row (exit status 130).
int run_campaign_command(const CampaignArgs& args, std::ostream& out, std::ostream& progress);

struct MergeArgs {
    std::vector<std::string> dirs;
    std::string out_dir;
};
int run_merge(const MergeArgs& args, std::ostream& out);

struct BudgetArgs {
    std::string scenario;
    int runs = 10;
    std::uint64_t seed = 1;
    std::string out_dir;  // required: the budget never writes into the current folder unasked
    unsigned threads = 0;
    std::optional<double> ecc_sigma, tilt_sigma_deg;
    int starts = 4;
    std::vector<std::string> era_sigma;  // LABEL=FACTOR
    std::optional<double> end_year;
    double cadence = 1.0;
    std::optional<double> mass_error;
    std::vector<std::string> only;
    std::vector<std::string> combine;
    double max_memory_gb = -1.0;
    int search_nights = 0;               // > 0: rehearse the all-on solutions' telescope search for this many nights
    bool quiet = false;
};
// Prints the budget table and writes OUT/budget.csv, OUT/budget_runs.csv and OUT/budget.png.
int run_budget_command(const BudgetArgs& args, std::ostream& out, std::ostream& progress);

}  // namespace wayward
