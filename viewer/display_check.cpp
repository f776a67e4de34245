// Whether an X display can be opened, asked of Xlib before SFML is (SFML aborts the process when it cannot
// open one). Kept in its own file: Xlib's macros (None, Status, Bool ...) clash with SFML's names.
#include "viewer/app.hpp"

#include <cstdlib>

#include <X11/Xlib.h>

namespace wayward::viewer {

namespace {
Display* probe = nullptr;  // kept open until SFML has its own connection (see display_available)
}

bool display_available(std::string* why) {
    const char* name = std::getenv("DISPLAY");
    if (!name || !*name) {
        if (why) *why = "no X display: DISPLAY is not set (run it in a desktop session, or headless under xvfb-run)";
        return false;
    }
    Display* d = XOpenDisplay(nullptr);
    if (!d) {
        if (why) *why = std::string("cannot open the X display '") + name + "' (is an X server running there?)";
        return false;
    }
    // Closing this connection and letting SFML open its own at once fails now and then under Xvfb (SFML then
    // aborts): the probe stays open until the window exists (release_display_probe).
    release_display_probe();
    probe = d;
    return true;
}

void release_display_probe() {
    if (probe) XCloseDisplay(probe);
    probe = nullptr;
}

}  // namespace wayward::viewer
