// The viewer application: opens the window, runs the frame loop (events -> bridge and panels, the sidebar of
// ImGui controls, the panel's canvas, rendering), and in screenshot mode renders a fixed number of frames of
// one panel, saves the window as a PNG and returns. Problems with the input are shown in the window and on
// stderr; the return value is the process exit status.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

namespace wayward::viewer {

struct AppOptions {
    std::string input;            // scenario file (author mode); empty: none given
    std::uint64_t seed = 1;
    std::string panel = "system"; // starting panel (a make_panels() name)
    unsigned width = 1280, height = 800;
    std::string screenshot;       // if set: headless run, save this PNG
    int frames = 3;               // frames to render before the screenshot
    long stars = -1;              // star-field size; < 0: from the count law down to the faint limit
    std::optional<double> year;   // starting time as a decimal year (default: epoch 0)
};

// Exit status 2 for a missing display; in screenshot mode also for bad input (after the screenshot shows the
// message) or a failed save. 0 otherwise.
int run_viewer(const AppOptions& options);

// Whether an X display can be opened; `why` says what is missing.
bool display_available(std::string* why);

}  // namespace wayward::viewer
