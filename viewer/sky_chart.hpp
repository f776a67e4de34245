// The sky from the observer as a chart that several panels draw: plate carrée in the observer frame's
// longitude and latitude (longitude growing to the left, as on a sky chart), with the star field, grid, the
// elongation-limit region around the star, the planets' apparent tracks, the trainee's prediction marker, the
// solver's prediction (1-sigma ellipse, the circle holding 90% of its samples, the search field, its track) and,
// after the reveal, the hidden body's true place. Every direction is sim's (the model's samples, sim's
// Prediction and Score); this file only maps angles to pixels.
#pragma once

#include <memory>
#include <optional>
#include <string>
#include <vector>

#include <SFML/Graphics/Rect.hpp>
#include <SFML/Graphics/RenderTarget.hpp>
#include <SFML/Graphics/RenderTexture.hpp>
#include <SFML/Graphics/VertexArray.hpp>

#include <imgui.h>

#include "sim/solve/solve.hpp"
#include "viewer/controls.hpp"
#include "viewer/draw_util.hpp"
#include "viewer/model.hpp"
#include "viewer/panels.hpp"

namespace wayward::viewer {

struct SkyMap {
    float cx = 0, cy = 0;     // chart centre, window pixels
    double scale = 1.0;       // pixels per radian
    double center_lon = 0, center_lat = 0;

    // Longitude is taken relative to the view centre in (-pi, pi], so the map wraps around the sphere.
    ImVec2 to_screen(double lon, double lat) const;
    void to_sky(float sx, float sy, double& lon, double& lat) const;
};

// Zoom 1 shows the whole sky: 360 degrees across or 180 degrees up, whichever is tighter.
SkyMap sky_map(const sf::FloatRect& area, const SkyView& view);
// A view centred on (lon, lat) showing about `radius` (radians) around it in the shorter direction of `area`.
SkyView sky_view_around(const sf::FloatRect& area, double lon, double lat, double radius);

// "12.3°" with U+2212 for negatives.
std::string format_deg(double radians, int decimals = 0);
// "84.2′" below a degree and a half, else "3.25°".
std::string format_angle_arcmin(double arcmin);

struct SkyLayers {
    bool stars = true, grid = true, limit = true, planets = true, tracks = true, labels = true;
    bool marker = true;           // the trainee's prediction
    bool solution = true;         // the solver's prediction
    bool overlay_title = false;   // the title block (the sky panel's)
    double track_years = 1.0;     // planet tracks this long either side of the current time
    double solution_track_years = 10.0;  // the solver's track this long either side of its epoch
};

// What a panel may want to draw of the solver's prediction: the selected minimum's, with an ellipse and the
// 90% circle only when it is the solver's own (best) prediction. Null if there is none to draw.
const Prediction* shown_prediction(const ViewerModel& model, const ViewerControls& controls, bool* exact);
// The fine track of the shown prediction for drawing, if computed (else its own 0.25-year track).
const std::vector<TrackPoint>& shown_track(const ViewerModel& model, const ViewerControls& controls, const Prediction& shown);

class SkyChart {
public:
    void draw(sf::RenderTarget& target, ImDrawList& list, const sf::FloatRect& area, const SkyView& view,
              const ViewerControls& controls, const ViewerModel& model, const DrawContext& ctx, const SkyLayers& layers);

    // Pieces for panels that add their own marks over the chart (in the map of the last draw()).
    const SkyMap& map() const { return map_; }
    LabelPlacer& labels() { return labels_; }
    void fill_circle(ImDrawList& list, double lon, double lat, double radius, ImU32 fill, ImU32 edge, float edge_width) const;
    void draw_ellipse(ImDrawList& list, const Prediction& p, ImU32 fill, ImU32 edge) const;
    // The track between two years (all of it by default); dashed for a predicted one.
    void draw_track(ImDrawList& list, const std::vector<TrackPoint>& track, ImU32 colour, float width, bool dashed = false,
                    double from_year = -1e300, double to_year = 1e300) const;
    void draw_cross(ImDrawList& list, double lon, double lat, ImU32 colour, float arm = 9.0f) const;

private:
    SkyMap map_;
    LabelPlacer labels_;
    sf::VertexArray star_quads_{sf::Quads};
    sf::VertexArray star_points_{sf::Points};
    struct StarCacheKey {
        float left, top, width, height;
        double scale, center_lon, center_lat;
        const void* stars;
        std::size_t count;
        double faint;
        bool operator==(const StarCacheKey&) const = default;
    };
    std::optional<StarCacheKey> star_key_;
    // The field drawn once per view into a texture (when one can be made) and added onto the sky each frame.
    std::unique_ptr<sf::RenderTexture> star_texture_;
    bool star_texture_ok_ = false;
    void draw_star_arrays(sf::RenderTarget& target, const DrawContext& ctx);

    void draw_stars(sf::RenderTarget& target, const sf::FloatRect& area, const ViewerModel& m, const DrawContext& ctx);
    void draw_grid(ImDrawList& list, const sf::FloatRect& area, const DrawContext& ctx);
    void draw_star_direction(ImDrawList& list, const SkyPosition& star, const ViewerModel& m, const DrawContext& ctx);
    void draw_planets(ImDrawList& list, const ViewerControls& c, const ViewerModel& m, const DrawContext& ctx, const SkyLayers& layers);
    void draw_marker(ImDrawList& list, const ViewerControls& c, const ViewerModel& m, const DrawContext& ctx);
    void draw_solution(ImDrawList& list, const ViewerControls& c, const ViewerModel& m, const DrawContext& ctx, double track_years);
};

}  // namespace wayward::viewer
