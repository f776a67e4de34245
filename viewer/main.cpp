// wayward-view: the viewer's command line (CLI11 is included from this file only). Parses the arguments into
// AppOptions and runs the viewer.
#include <iostream>
#include <regex>
#include <string>

#include <CLI/CLI.hpp>

#include "viewer/app.hpp"
#include "viewer/fonts.hpp"
#include "viewer/panels.hpp"

int main(int argc, char** argv) {
    using namespace wayward::viewer;
    AppOptions opt;
    CLI::App app{"wayward-view: rehearse on an exercise folder (trainee mode), or watch a scenario's invented system "
                 "from above and from the observer planet's sky (author mode)"};
    app.set_version_flag("--version", std::string("wayward-view ") + WAYWARD_VERSION + " (assets: " + asset_dir() + ")");
    std::string size;
    app.add_option("input", opt.input,
                   "exercise folder (trainee mode: the hidden body stays sealed until revealed) or scenario file "
                   "(TOML, author mode: everything shown)");
    app.add_option("--seed", opt.seed, "seed for scenarios that draw their values")->capture_default_str();
    app.add_option("--panel", opt.panel, "panel to show first")->check(CLI::IsMember(panel_names()))->capture_default_str();
    app.add_option("--size", size, "window size in pixels, WxH (default 1280x800)")
        ->check(CLI::Validator([](std::string& s) {
            return std::regex_match(s, std::regex("[1-9][0-9]{2,3}x[1-9][0-9]{2,3}")) ? std::string()
                                                                                         : "expected WxH, e.g. 1280x800";
        }, "WxH"));
    auto* shot = app.add_option("--screenshot", opt.screenshot, "render headless, save the window as this PNG and exit");
    app.add_option("--frames", opt.frames, "frames to render before the screenshot")
        ->check(CLI::Range(1, 100000))->needs(shot)->capture_default_str();
    app.add_option("--year", opt.year, "starting time as a decimal year (default: epoch 0, the start of the span)");
    app.add_option("--stars", opt.stars, "star-field size (default: the count law down to magnitude 7)")
        ->check(CLI::Range(0L, 2'000'000L));
    // One text parsed below, so the help shows the form LON,LAT[,YEAR] (a list option would print "FLOAT x 2").
    std::string prediction;
    app.add_option("--prediction", prediction,
                   "trainee mode: your prediction as LON,LAT[,YEAR] (degrees; year default: the search epoch)")
        ->type_name("LON,LAT[,YEAR]");
    app.add_flag("--run-solve", opt.run_solve, "trainee mode: start the solver with the default priors at once");
    app.add_option("--minimum", opt.minimum, "trainee mode: the local minimum to show (1 = best)")
        ->check(CLI::Range(1, 1000))->capture_default_str();
    app.add_flag("--reveal", opt.reveal,
                 "testing aid, with --screenshot only: reveal the answer key without the confirmation dialog")
        ->needs(shot);
    try {
        app.parse(argc, argv);
    } catch (const CLI::ParseError& e) {
        const int rc = app.exit(e);
        return rc == 0 ? 0 : 2;
    }
    if (!prediction.empty()) {
        std::size_t start = 0;
        for (;;) {
            const std::size_t comma = prediction.find(',', start);
            const std::string cell = prediction.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
            std::size_t used = 0;
            double v = 0.0;
            try {
                v = std::stod(cell, &used);
            } catch (const std::exception&) {
                used = std::string::npos;
            }
            if (used != cell.size() || cell.empty()) {
                std::cerr << "--prediction: \"" << cell << "\" is not a number (expected LON,LAT[,YEAR])\n";
                return 2;
            }
            opt.prediction.push_back(v);
            if (comma == std::string::npos) break;
            start = comma + 1;
        }
        if (opt.prediction.size() < 2 || opt.prediction.size() > 3) {
            std::cerr << "--prediction: expected LON,LAT or LON,LAT,YEAR\n";
            return 2;
        }
    }
    if (!size.empty()) {
        const auto x = size.find('x');
        opt.width = static_cast<unsigned>(std::stoul(size.substr(0, x)));
        opt.height = static_cast<unsigned>(std::stoul(size.substr(x + 1)));
    }
    try {
        return run_viewer(opt);
    } catch (const std::exception& e) {
        std::cerr << "wayward-view: error: " << e.what() << "\n";
        return 2;
    }
}
