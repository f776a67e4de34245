// The viewer's controls as one plain struct: ImGui widgets write straight into these fields through pointers,
// the canvas's mouse and keyboard handlers change them, and the panels read them to draw. No physics here.
#pragma once

namespace wayward::viewer {

// A pointing on the sky placed by clicking in the sky panel; dragging sets its search radius.
struct PredictionMarker {
    bool placed = false;
    double lon = 0.0;         // radians, observer frame
    double lat = 0.0;         // radians
    double epoch_days = 0.0;  // days after epoch 0 at which the pointing is meant
    double radius = 0.0;      // search radius, radians
};

// System from above: the barycentric reference plane seen from +z.
struct PlanView {
    double center_x = 0.0, center_y = 0.0;  // au at the canvas centre
    float zoom = 1.0f;                      // 1 = the widest shown orbit fits the canvas
};

// Sky from the observer: plate carrée in (longitude, latitude), longitude increasing to the left (east).
struct SkyView {
    double center_lon = 3.14159265358979323846;  // radians (180 degrees)
    double center_lat = 0.0;
    float zoom = 1.0f;                           // 1 = the full 360 degrees of longitude fit the width
};

struct ViewerControls {
    int panel = 0;                   // index into the panel list
    double time_days = 0.0;          // days after epoch 0
    bool playing = false;
    float speed_days_per_second = 60.0f;
    float step_days = 10.0f;         // one press of Right/Left

    // System from above.
    bool trails = true;
    float trail_orbits = 1.0f;       // trail length in orbital periods of each body
    bool labels = true;
    PlanView plan;

    // Sky from the observer.
    bool tracks = true;
    float track_years = 1.0f;        // tracks run this long before and after the current time
    bool shade_elongation = true;
    bool show_stars = true;
    float star_faint_mag = 7.0f;
    SkyView sky;
    PredictionMarker marker;
    bool show_solution = true;       // the solver's prediction (ellipse, 90% circle, track) on the sky

    // Solve: the local minimum whose track is shown (index into the solution's minima, best first).
    int selected_minimum = 0;

    bool show_help = false;
};

}  // namespace wayward::viewer
