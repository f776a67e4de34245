// The `wayward` command-line tool: parses arguments and calls the sim library. No physics lives here.
#include <cstdio>
#include <functional>
#include <iostream>
#include <memory>
#include <new>
#include <sstream>

#include <CLI/CLI.hpp>

#include "sim/commands/commands.hpp"
#include "sim/commands/search_command.hpp"
#include "sim/commands/record_command.hpp"
#include "sim/base/errors.hpp"
#include "sim/report/plot.hpp"

namespace {

using namespace wayward;

// A subcommand and what runs it once its arguments are parsed.
struct Command {
    CLI::App* app = nullptr;
    std::function<int()> run;
};

// `wayward ephemeris`
Command add_ephemeris(CLI::App& app) {
    auto args = std::make_shared<EphemerisArgs>();
    EphemerisArgs& eph = *args;
    auto* c = app.add_subcommand("ephemeris", "print barycentric states and apparent positions of every body (CSV)");
    c->add_option("scenario", eph.scenario, "scenario file (TOML)")->required();
    c->add_option("--at", eph.at, "times, comma-separated: days after epoch 0 (365.25 or 365.25d), years (1955.25yr) or dates (1955-03-21)")->delimiter(',')->required();
    c->add_option("--seed", eph.seed, "seed for scenarios that draw their values")->capture_default_str();
    c->add_option("--method", eph.method, "integration method (gauss-radau, rkf78, dopri5, bulirsch-stoer)")->capture_default_str();
    return {c, [args] { return run_ephemeris(*args, std::cout); }};
}

// `wayward new`
Command add_new(CLI::App& app) {
    auto args = std::make_shared<NewArgs>();
    NewArgs& nw = *args;
    auto* c = app.add_subcommand("new", "make an exercise folder from a scenario: observations, brief, sealed answer key");
    c->add_option("scenario", nw.scenario, "scenario file (TOML)")->required();
    c->add_option("--seed", nw.seed, "seed of the invented system and its observations (default: a secret random one, kept only in the answer key)");
    c->add_option("--out", nw.out_dir, "exercise folder to write")->required();
    c->add_option("--key-out", nw.key_dir, "folder for the answer key (default OUT-answer-key beside OUT; keep it from the trainee)");
    c->add_option("--record", nw.record_dir, "also write the exercise in the record form `import` reads (ICRS, TDB) into this folder");
    c->add_flag("--force", nw.force, "overwrite an existing exercise");
    return {c, [args] { return run_new(*args, std::cout); }};
}

// `wayward import`
Command add_import(CLI::App& app) {
    auto args = std::make_shared<ImportArgs>();
    ImportArgs& im = *args;
    auto* c = app.add_subcommand("import", "make an exercise folder from a survey record: ICRS positions, the observer's positions, a record.toml");
    c->add_option("record", im.record_dir, "record folder (record.toml, positions.csv, observer.csv)")->required();
    c->add_option("--out", im.out_dir, "exercise folder to write")->required();
    c->add_flag("--force", im.force, "overwrite an existing exercise");
    return {c, [args] { return run_import(*args, std::cout); }};
}

// `wayward residuals`
Command add_residuals(CLI::App& app) {
    auto args = std::make_shared<ResidualsArgs>();
    ResidualsArgs& res = *args;
    auto* c = app.add_subcommand("residuals", "fit the known planets only and write their O−C residuals (CSV, PNG)");
    c->add_option("exercise", res.dir, "exercise folder")->required();
    c->add_flag("--neglect-light-time", res.neglect_light_time, "leave light time out of the model");
    c->add_flag("--quiet", res.quiet, "no progress lines on stderr");
    return {c, [args] { return run_residuals(*args, std::cout, std::cerr); }};
}

// `wayward solve`
Command add_solve(CLI::App& app) {
    auto args = std::make_shared<SolveArgs>();
    SolveArgs& sv = *args;
    auto* c = app.add_subcommand("solve", "infer the hidden body's orbit and mass and predict its position at the search epoch");
    c->add_option("exercise", sv.dir, "exercise folder")->required();
    c->add_option("--distance", sv.distance, "distance prior: free, fixed:A, gauss:A,SIGMA or spacing[:FRACTION]")->capture_default_str();
    c->add_flag("--circular", sv.circular, "fit a circular orbit");
    c->add_flag("--coplanar", sv.coplanar, "hold the orbit in the observer's plane (default: fit its tilt, with a weak prior)");
    c->add_option("--ecc-sigma", sv.ecc_sigma, "sigma of the Gaussian prior on e cos(varpi) and e sin(varpi)")->capture_default_str();
    c->add_option("--tilt-sigma", sv.tilt_sigma_deg, "sigma (deg) of the Gaussian prior on the orbit's tilt components")->capture_default_str();
    c->add_option("--epoch", sv.epoch_year, "year of the prediction (default: the brief's search epoch)");
    c->add_option("--samples", sv.samples, "covariance samples for the ellipse check")->capture_default_str();
    c->add_option("--starts", sv.starts, "grid minima refined")->capture_default_str();
    c->add_flag("--circular-starts-only", sv.circular_starts_only,
                "after a poor fit, do not try eccentric or tilted starts about the grid minima (default: try them where the priors allow)");
    c->add_option("--threads", sv.threads, "threads (0: all cores; results do not depend on it)")->capture_default_str();
    c->add_flag("--quiet", sv.quiet, "no progress output");
    c->add_flag("--neglect-light-time", sv.neglect_light_time, "leave light time out of the model");
    c->add_flag("--point-anyway", sv.point_anyway, "write the best solution's pointing even when the record does not demand a hidden body");
    c->add_option("--fitting-model", sv.fitting_model, "the fitting model's integrator: wisdom-holman (fast) or adaptive (the reference)")->capture_default_str();
    c->add_option("--derivatives", sv.derivatives, "fit Jacobians: variational (the map's tangent map, one run) or differences (a run per parameter)")->capture_default_str();
    c->add_option("--era-systematics", sv.era_systematics,
                  "fit each era's offset (offsets) or offset and drift (drifts) as nuisance parameters, in both coordinates except the most weighted era's longitude; none: trust the eras")
        ->capture_default_str();
    c->add_option("--out", sv.out_file, "solution file to write (default EXERCISE/solution.toml)");
    c->add_flag("--sky-map", sv.sky_map, "also write the prediction's probability map (DIR/skymap.fits, HEALPix) and its 50/90/99 % regions (DIR/skymap_regions.csv)");
    c->add_option("--sky-map-form", sv.sky_map_form, "the map's FITS form: flat (a probability per NESTED pixel) or multiorder (NUNIQ cells, far smaller)")->capture_default_str();
    return {c, [args] { return run_solve(*args, std::cout, std::cerr); }};
}

// `wayward score`
Command add_score(CLI::App& app) {
    auto args = std::make_shared<ScoreArgs>();
    ScoreArgs& scr = *args;
    auto* c = app.add_subcommand("score", "check the answer key, then score a prediction: separation, hit, luck curve");
    c->add_option("exercise", scr.dir, "exercise folder")->required();
    c->add_option("--solution", scr.solution, "solution file (default EXERCISE/solution.toml)");
    c->add_option("--key", scr.key, "answer key (default EXERCISE-answer-key/answer_key.toml beside the exercise)");
    c->add_option("--lon", scr.lon_deg, "your predicted longitude (deg)");
    c->add_option("--lat", scr.lat_deg, "your predicted latitude (deg)");
    c->add_option("--epoch", scr.epoch_year, "the year of your prediction");
    c->add_option("--prediction", scr.prediction_file,
                  "a TOML file with lon_deg, lat_deg, epoch_year, and optionally radius_arcmin or sigma_major_arcmin, sigma_minor_arcmin, position_angle_deg");
    c->add_option("--radius", scr.radius_arcmin, "your prediction's region: the radius (arcmin) holding 90% of a circular Gaussian");
    c->add_option("--ellipse", scr.ellipse, "your prediction's region: 1-sigma semi-axes (arcmin) and the major axis' position angle (deg, from +β through +λ): A,B,PA");
    c->add_option("--window", scr.window_years, "luck-curve half-window (years)")->capture_default_str();
    return {c, [args] { return run_score(*args, std::cout); }};
}

// `wayward search`
Command add_search(CLI::App& app) {
    auto args = std::make_shared<SearchArgs>();
    SearchArgs& srch = *args;
    auto* c = app.add_subcommand("search", "rehearse the telescope search: plan fields from the solution, observe night by night, settle candidates by revisits");
    c->add_option("exercise", srch.dir, "exercise folder")->required();
    c->add_option("--solution", srch.solution, "solution file (default EXERCISE/solution.toml)");
    c->add_option("--nights", srch.nights, "nights to search")->capture_default_str();
    c->add_option("--start", srch.start_year, "year of the first night (default: the solution's epoch)");
    c->add_option("--strategy", srch.strategy, "probability, sweep, spiral or plan (default probability; plan with --plan)");
    c->add_option("--telescope", srch.telescope_file, "a TOML file with a [telescope] table (default: the brief's)");
    c->add_option("--plan", srch.plan_file, "your own plan: CSV of night,lon_deg,lat_deg");
    c->add_option("--seed", srch.seed, "seed of the weather, the sky and the detections")->capture_default_str();
    return {c, [args] { return run_search(*args, std::cout); }};
}

// `wayward campaign`
Command add_campaign(CLI::App& app) {
    auto args = std::make_shared<CampaignArgs>();
    CampaignArgs& cmp = *args;
    auto* c = app.add_subcommand("campaign", "run (or resume) a campaign: many exercises solved and scored, with a report");
    c->add_option("spec", cmp.spec, "campaign spec (TOML)")->required();
    c->add_option("--out", cmp.out_dir, "campaign folder (cases.csv, manifest, report)")->required();
    c->add_option("--threads", cmp.threads, "cases solved at once (0: all cores; results do not depend on it)")->capture_default_str();
    c->add_option("--shard", cmp.shard, "run shard K of N: the solves u with u % N == K - 1")->capture_default_str();
    c->add_option("--max-memory", cmp.max_memory_gb, "address-space cap in GB, so a runaway model run fails its case (default 1 + 0.5 per thread; 0: none)");
    c->add_flag("--quiet", cmp.quiet, "no progress output");
    return {c, [args] { return run_campaign_command(*args, std::cout, std::cerr); }};
}

// `wayward merge`
Command add_merge(CLI::App& app) {
    auto args = std::make_shared<MergeArgs>();
    MergeArgs& mrg = *args;
    auto* c = app.add_subcommand("merge", "join the shard folders of one campaign, check that no case is missing or doubled, report");
    c->add_option("dirs", mrg.dirs, "shard folders")->required();
    c->add_option("--out", mrg.out_dir, "merged campaign folder")->required();
    return {c, [args] { return run_merge(*args, std::cout); }};
}

// `wayward budget`
Command add_budget(CLI::App& app) {
    auto args = std::make_shared<BudgetArgs>();
    BudgetArgs& bud = *args;
    auto* c = app.add_subcommand("budget", "error budget: each error source alone, its share of the prediction error, search radii");
    c->add_option("scenario", bud.scenario, "scenario file (TOML)")->required();
    c->add_option("--runs", bud.runs, "systems drawn (seeds)")->capture_default_str();
    c->add_option("--seed", bud.seed, "seed of the runs' seeds")->capture_default_str();
    c->add_option("--out", bud.out_dir, "folder for budget.csv, budget_runs.csv, budget.png (made if missing)")->required();
    c->add_option("--threads", bud.threads, "solves at once (0: all cores; results do not depend on it)")->capture_default_str();
    c->add_option("--ecc-sigma", bud.ecc_sigma, "base prior sigma on e cos(varpi), e sin(varpi) (default 0.5: broad)");
    c->add_option("--tilt-sigma", bud.tilt_sigma_deg, "base prior sigma (deg) on the tilt components (default 30: broad)");
    c->add_option("--starts", bud.starts, "grid minima refined per solve")->capture_default_str();
    c->add_option("--era-sigma", bud.era_sigma, "what-if: scale an era's sigma, LABEL=FACTOR (repeatable)");
    c->add_option("--end-year", bud.end_year, "what-if: the last era ends in this year instead");
    c->add_option("--cadence", bud.cadence, "what-if: multiply every era's observations per season")->capture_default_str();
    c->add_option("--mass-error", bud.mass_error, "relative sigma of the known masses in the brief (default: the scenario's)");
    c->add_option("--only", bud.only, "compute only these lines (keys as in budget.csv)")->delimiter(',');
    c->add_option("--combine", bud.combine, "the sources the all-on line switches on together (default: every one)")->delimiter(',');
    c->add_option("--max-memory", bud.max_memory_gb, "address-space cap in GB (default 1 + 0.5 per thread; 0: none)");
    c->add_option("--search-nights", bud.search_nights, "rehearse the all-on solutions' telescope search for N nights (0: no search)")
        ->capture_default_str();
    c->add_flag("--quiet", bud.quiet, "no progress output");
    return {c, [args] { return run_budget_command(*args, std::cout, std::cerr); }};
}

}  // namespace

namespace {

// Parses the command line and runs the command; main() only turns what escapes into an exit status.
int run(int argc, char** argv) {
    CLI::App app{"wayward: rehearse the prediction of an unseen planet from the pull it exerts on planets you can see"};
    app.set_version_flag("--version", std::string("wayward ") + WAYWARD_VERSION);
    app.require_subcommand(1);
    const std::vector<Command> commands = {add_ephemeris(app), add_new(app), add_import(app), add_residuals(app), add_solve(app), add_score(app), add_search(app), add_campaign(app), add_merge(app), add_budget(app)};
    // Every command that draws a figure takes --svg: each PNG gets an SVG copy beside it.
    bool svg = false;
    for (const Command& c : commands)
        if (const std::string n = c.app->get_name(); n == "residuals" || n == "score" || n == "search" || n == "campaign" || n == "merge" || n == "budget")
            c.app->add_flag("--svg", svg, "also write each figure as SVG (vector graphics) beside its PNG, same name");

    try {
        app.parse(argc, argv);
    } catch (const CLI::ParseError& e) {
        // CLI11 reports an unknown first word as a missing subcommand; say what was wrong instead.
        if (dynamic_cast<const CLI::RequiredError*>(&e) && argc > 1 && argv[1][0] != '-' && app.get_subcommands().empty()) {
            std::string names;
            for (const Command& c : commands) names += (names.empty() ? "" : ", ") + c.app->get_name();
            std::cerr << "wayward: unknown command '" << argv[1] << "' (commands: " << names << "; see --help)\n";
            return 2;
        }
        const int rc = app.exit(e);
        return rc == 0 ? 0 : 2;
    }
    plot::set_svg_copies(svg);
    for (const Command& c : commands)
        if (c.app->parsed()) return c.run();
    return 0;
}

}  // namespace

int main(int argc, char** argv) {
    // Everything, the command-line setup included, runs inside the handlers: out of memory at any point is exit
    // status 3 with a plain message, never an abort.
    try {
        return run(argc, argv);
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
