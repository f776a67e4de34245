// The `wayward` command-line tool: parses arguments and calls the sim library. No physics lives here.
#include <cstdio>
#include <iostream>
#include <sstream>

#include <CLI/CLI.hpp>

#include "sim/commands.hpp"
#include "sim/errors.hpp"

int main(int argc, char** argv) {
    using namespace wayward;
    CLI::App app{"wayward: rehearse the prediction of an unseen planet from the pull it exerts on planets you can see"};
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
    c_new->add_option("--seed", nw.seed, "seed of the invented system and its observations")->capture_default_str();
    c_new->add_option("--out", nw.out_dir, "exercise folder to write")->required();
    c_new->add_option("--key-out", nw.key_dir, "folder for the answer key (default OUT/answer-key)");
    c_new->add_flag("--force", nw.force, "overwrite an existing exercise");

    try {
        app.parse(argc, argv);
    } catch (const CLI::ParseError& e) {
        const int rc = app.exit(e);
        return rc == 0 ? 0 : 2;
    }
    try {
        if (c_eph->parsed()) return run_ephemeris(eph, std::cout);
        if (c_new->parsed()) return run_new(nw, std::cout);
    } catch (const InputError& e) {
        std::cerr << "wayward: " << e.what() << "\n";
        return 2;
    } catch (const std::exception& e) {
        std::cerr << "wayward: error: " << e.what() << "\n";
        return 2;
    }
    return 0;
}
