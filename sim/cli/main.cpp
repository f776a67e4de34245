// The `wayward` command-line tool: parses arguments and calls the sim library. No physics lives here.
#include <cstdio>
#include <iostream>
#include <new>
#include <sstream>

#include <CLI/CLI.hpp>

#include "sim/commands/commands.hpp"
#include "sim/commands/search_command.hpp"
#include "sim/base/errors.hpp"

int main(int argc, char** argv) {
    using namespace wayward;
    CLI::App app{"wayward: rehearse the prediction of an unseen planet from the pull it exerts on planets you can see"};
    app.set_version_flag("--version", std::string("wayward ") + WAYWARD_VERSION);
    app.require_subcommand(1);

    EphemerisArgs eph;
    auto* c_eph = app.add_subcommand("ephemeris", "print barycentric states and apparent positions of every body (CSV)");
    c_eph->add_option("scenario", eph.scenario, "scenario file (TOML)")->required();
    c_eph->add_option("--at", eph.days, "days after epoch 0 (comma-separated)")->delimiter(',')->required();
    c_eph->add_option("--seed", eph.seed, "seed for scenarios that draw their values")->capture_default_str();
    c_eph->add_option("--method", eph.method, "integration method (rkf78, dopri5, bulirsch-stoer)")->capture_default_str();

    NewArgs nw;
    auto* c_new = app.add_subcommand("new", "make an exercise folder from a scenario: observations, brief, sealed answer key");
    c_new->add_option("scenario", nw.scenario, "scenario file (TOML)")->required();
    c_new->add_option("--seed", nw.seed, "seed of the invented system and its observations (default: a secret random one, kept only in the answer key)");
    c_new->add_option("--out", nw.out_dir, "exercise folder to write")->required();
    c_new->add_option("--key-out", nw.key_dir, "folder for the answer key (default OUT-answer-key beside OUT; keep it from the trainee)");
    c_new->add_flag("--force", nw.force, "overwrite an existing exercise");

    ResidualsArgs res;
    auto* c_res = app.add_subcommand("residuals", "fit the known planets only and write their O−C residuals (CSV, PNG)");
    c_res->add_option("exercise", res.dir, "exercise folder")->required();
    c_res->add_flag("--neglect-light-time", res.neglect_light_time, "leave light time out of the model");
    c_res->add_flag("--quiet", res.quiet, "no progress lines on stderr");

    SolveArgs sv;
    auto* c_solve = app.add_subcommand("solve", "infer the hidden body's orbit and mass and predict its position at the search epoch");
    c_solve->add_option("exercise", sv.dir, "exercise folder")->required();
    c_solve->add_option("--distance", sv.distance, "distance prior: free, fixed:A, gauss:A,SIGMA or spacing[:FRACTION]")->capture_default_str();
    c_solve->add_flag("--circular", sv.circular, "fit a circular orbit");
    c_solve->add_flag("--coplanar", sv.coplanar, "hold the orbit in the observer's plane (default: fit its tilt, with a weak prior)");
    c_solve->add_option("--ecc-sigma", sv.ecc_sigma, "sigma of the Gaussian prior on e cos(varpi) and e sin(varpi)")->capture_default_str();
    c_solve->add_option("--tilt-sigma", sv.tilt_sigma_deg, "sigma (deg) of the Gaussian prior on the orbit's tilt components")->capture_default_str();
    c_solve->add_option("--epoch", sv.epoch_year, "year of the prediction (default: the brief's search epoch)");
    c_solve->add_option("--samples", sv.samples, "covariance samples for the ellipse check")->capture_default_str();
    c_solve->add_option("--starts", sv.starts, "grid minima refined")->capture_default_str();
    c_solve->add_option("--threads", sv.threads, "threads (0: all cores; results do not depend on it)")->capture_default_str();
    c_solve->add_flag("--quiet", sv.quiet, "no progress output");
    c_solve->add_flag("--neglect-light-time", sv.neglect_light_time, "leave light time out of the model");

    ScoreArgs scr;
    auto* c_score = app.add_subcommand("score", "check the answer key, then score a prediction: separation, hit, luck curve");
    c_score->add_option("exercise", scr.dir, "exercise folder")->required();
    c_score->add_option("--solution", scr.solution, "solution file (default EXERCISE/solution.toml)");
    c_score->add_option("--key", scr.key, "answer key (default EXERCISE-answer-key/answer_key.toml beside the exercise)");
    c_score->add_option("--lon", scr.lon_deg, "your predicted longitude (deg)");
    c_score->add_option("--lat", scr.lat_deg, "your predicted latitude (deg)");
    c_score->add_option("--epoch", scr.epoch_year, "the year of your prediction");
    c_score->add_option("--prediction", scr.prediction_file, "a TOML file with lon_deg, lat_deg, epoch_year");
    c_score->add_option("--window", scr.window_years, "luck-curve half-window (years)")->capture_default_str();

    SearchArgs srch;
    auto* c_search = app.add_subcommand("search", "rehearse the telescope search: plan fields from the solution, observe night by night, settle candidates by revisits");
    c_search->add_option("exercise", srch.dir, "exercise folder")->required();
    c_search->add_option("--solution", srch.solution, "solution file (default EXERCISE/solution.toml)");
    c_search->add_option("--nights", srch.nights, "nights to search")->capture_default_str();
    c_search->add_option("--start", srch.start_year, "year of the first night (default: the solution's epoch)");
    c_search->add_option("--strategy", srch.strategy, "probability, sweep, spiral or plan (default probability; plan with --plan)");
    c_search->add_option("--telescope", srch.telescope_file, "a TOML file with a [telescope] table (default: the brief's)");
    c_search->add_option("--plan", srch.plan_file, "your own plan: CSV of night,lon_deg,lat_deg");
    c_search->add_option("--seed", srch.seed, "seed of the weather, the sky and the detections")->capture_default_str();

    CampaignArgs cmp;
    auto* c_campaign = app.add_subcommand("campaign", "run (or resume) a campaign: many exercises solved and scored, with a report");
    c_campaign->add_option("spec", cmp.spec, "campaign spec (TOML)")->required();
    c_campaign->add_option("--out", cmp.out_dir, "campaign folder (cases.csv, manifest, report)")->required();
    c_campaign->add_option("--threads", cmp.threads, "cases solved at once (0: all cores; results do not depend on it)")->capture_default_str();
    c_campaign->add_option("--shard", cmp.shard, "run shard K of N: the solves u with u % N == K - 1")->capture_default_str();
    c_campaign->add_option("--max-memory", cmp.max_memory_gb, "address-space cap in GB, so a runaway model run fails its case (default 1 + 0.5 per thread; 0: none)");
    c_campaign->add_flag("--quiet", cmp.quiet, "no progress output");

    MergeArgs mrg;
    auto* c_merge = app.add_subcommand("merge", "join the shard folders of one campaign, check that no case is missing or doubled, report");
    c_merge->add_option("dirs", mrg.dirs, "shard folders")->required();
    c_merge->add_option("--out", mrg.out_dir, "merged campaign folder")->required();

    BudgetArgs bud;
    auto* c_budget = app.add_subcommand("budget", "error budget: each error source alone, its share of the prediction error, search radii");
    c_budget->add_option("scenario", bud.scenario, "scenario file (TOML)")->required();
    c_budget->add_option("--runs", bud.runs, "systems drawn (seeds)")->capture_default_str();
    c_budget->add_option("--seed", bud.seed, "seed of the runs' seeds")->capture_default_str();
    c_budget->add_option("--out", bud.out_dir, "folder for budget.csv, budget_runs.csv, budget.png")->capture_default_str();
    c_budget->add_option("--threads", bud.threads, "solves at once (0: all cores; results do not depend on it)")->capture_default_str();
    c_budget->add_option("--ecc-sigma", bud.ecc_sigma, "base prior sigma on e cos(varpi), e sin(varpi) (default 0.5: broad)");
    c_budget->add_option("--tilt-sigma", bud.tilt_sigma_deg, "base prior sigma (deg) on the tilt components (default 30: broad)");
    c_budget->add_option("--starts", bud.starts, "grid minima refined per solve")->capture_default_str();
    c_budget->add_option("--era-sigma", bud.era_sigma, "what-if: scale an era's sigma, LABEL=FACTOR (repeatable)");
    c_budget->add_option("--end-year", bud.end_year, "what-if: the last era ends in this year instead");
    c_budget->add_option("--cadence", bud.cadence, "what-if: multiply every era's observations per season")->capture_default_str();
    c_budget->add_option("--mass-error", bud.mass_error, "relative sigma of the known masses in the brief (default: the scenario's)");
    c_budget->add_option("--only", bud.only, "compute only these lines (keys as in budget.csv)")->delimiter(',');
    c_budget->add_option("--combine", bud.combine, "the sources the all-on line switches on together (default: every one)")->delimiter(',');
    c_budget->add_option("--max-memory", bud.max_memory_gb, "address-space cap in GB (default 1 + 0.5 per thread; 0: none)");
    c_budget->add_flag("--quiet", bud.quiet, "no progress output");

    try {
        app.parse(argc, argv);
    } catch (const CLI::ParseError& e) {
        // CLI11 reports an unknown first word as a missing subcommand; say what was wrong instead.
        if (dynamic_cast<const CLI::RequiredError*>(&e) && argc > 1 && argv[1][0] != '-' && app.get_subcommands().empty()) {
            std::cerr << "wayward: unknown command '" << argv[1] << "' (commands: ephemeris, new, residuals, solve, score, campaign, merge, budget; see --help)\n";
            return 2;
        }
        const int rc = app.exit(e);
        return rc == 0 ? 0 : 2;
    }
    try {
        if (c_eph->parsed()) return run_ephemeris(eph, std::cout);
        if (c_new->parsed()) return run_new(nw, std::cout);
        if (c_res->parsed()) return run_residuals(res, std::cout, std::cerr);
        if (c_solve->parsed()) return run_solve(sv, std::cout, std::cerr);
        if (c_score->parsed()) return run_score(scr, std::cout);
        if (c_search->parsed()) return run_search(srch, std::cout);
        if (c_campaign->parsed()) return run_campaign_command(cmp, std::cout, std::cerr);
        if (c_merge->parsed()) return run_merge(mrg, std::cout);
        if (c_budget->parsed()) return run_budget_command(bud, std::cout, std::cerr);
    } catch (const InputError& e) {
        std::cerr << "wayward: " << e.what() << "\n";
        return 2;  // bad input (README: Exit status)
    } catch (const std::bad_alloc&) {
        std::cerr << "wayward: error: out of memory (the computation needed more than the machine or --max-memory allows)\n";
        return 3;
    } catch (const std::exception& e) {
        std::cerr << "wayward: error: " << e.what() << "\n";
        return 3;  // a computation or system failure, not the input's fault
    }
    return 0;
}
