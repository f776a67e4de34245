// The viewer application: opens the window, runs the frame loop (events -> bridge and panels, the sidebar of
// ImGui controls, the panel's canvas, rendering), and in screenshot mode renders a fixed number of frames of
// one panel, saves the window as a PNG and returns. Problems with the input are shown in the window and on
// stderr; the return value is the process exit status.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace wayward::viewer {

struct AppOptions {
    std::string input;            // exercise folder (trainee mode) or scenario file (author mode); empty: none given
    std::uint64_t seed = 1;
    std::string panel = "system"; // starting panel (a make_panels() name)
    unsigned width = 1280, height = 800;
    std::string screenshot;       // if set: headless run, save this PNG
    int frames = 3;               // frames to render before the screenshot
    long stars = -1;              // star-field size; < 0: from the count law down to the faint limit
    std::optional<double> year;   // starting time as a decimal year (default: epoch 0)
    // Trainee mode. A prediction of the trainee's own: longitude and latitude (degrees) and, optionally, the
    // year it is meant for (default: the brief's first search epoch).
    std::vector<double> prediction;
    bool run_solve = false;       // start the solver with the default priors at once
    int minimum = 1;              // the local minimum to show (1 = best)
    bool reveal = false;          // screenshot mode only: reveal the answer key without the dialog (testing aid)
};

// Exit status 2 for a missing display; in screenshot mode also for bad input (after the screenshot shows the
// message), a refused answer key, or a failed save. 0 otherwise. In screenshot mode the run waits for the
// trainee's work (fit, solve, reveal, scores) before rendering its frames, and prints each score as a line
// "wayward-view: score WHO separation_arcmin=S hit=0|1 epoch=Y" for scripts and tests.
int run_viewer(const AppOptions& options);

// Whether an X display can be opened; `why` says what is missing. The probing connection stays open until
// release_display_probe() (after the window is made).
bool display_available(std::string* why);
void release_display_probe();

}  // namespace wayward::viewer
