// The viewer's plots, drawn with ImGui's draw lists: a frame with axes (linear or log), nice ticks, grid,
// title and axis labels; lines, marker scatter (circle, square, triangle, diamond, cross), reference lines,
// shaded bands, points beyond the range shown as arrowheads on the edge, and a legend; plus the nearest-point
// pick used for hover. The one plotting module of the viewer (no packaged ImGui plotting library exists in
// Debian 12). Pixels and data coordinates only.
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include <SFML/Graphics/RenderTarget.hpp>
#include <SFML/Graphics/RenderTexture.hpp>

#include <imgui.h>

#include "viewer/fonts.hpp"

namespace wayward::viewer {

enum class Marker { circle, square, triangle, diamond, triangle_down, cross };

// A marker of half-size r at c. Hollow markers are outlined; a cross is always lines.
void draw_marker(ImDrawList& list, ImVec2 c, Marker marker, float r, ImU32 colour, bool filled = true, float thickness = 1.3f);

struct PlotAxis {
    double lo = 0.0, hi = 1.0;
    bool log = false;       // base 10; lo and hi must be positive
    std::string label;
};

// Tick positions and labels come from sim (axis_ticks, axis_tick_label in sim/report/ticks.hpp).
// The range with a margin, symmetric about zero when `symmetric` (for residuals).
PlotAxis padded_axis(double lo, double hi, double margin_fraction, bool symmetric, const std::string& label);

struct LegendEntry {
    std::string label;
    ImU32 colour = 0;
    Marker marker = Marker::circle;
    bool filled = true;
    bool line = false;      // a line swatch instead of a marker
};

// Where a plot's axes sit in its box and how data maps to pixels (no drawing: tests use it without a window).
struct PlotGeometry {
    ImVec2 outer_lo, outer_hi;   // the whole plot's box
    ImVec2 lo, hi;               // the axes' box inside it (room left for ticks, labels, title)
    PlotAxis x, y;
    PlotGeometry() = default;
    PlotGeometry(ImVec2 box_lo, ImVec2 box_hi, float text_size, PlotAxis x_axis, PlotAxis y_axis, bool has_title);
    ImVec2 to_screen(double xv, double yv) const;
    double x_at(float sx) const;
    double y_at(float sy) const;
    bool contains(ImVec2 p) const { return p.x >= lo.x && p.x <= hi.x && p.y >= lo.y && p.y <= hi.y; }
    // Where point() puts a marker of half-size r: clamped inside the box when beyond the y range.
    ImVec2 marker_at(double xv, double yv, float r, int* beyond = nullptr) const;
};

class Plot {
public:
    // `lo`/`hi`: the whole plot's box in window pixels; the axes' box leaves room for the labels inside it.
    Plot(ImDrawList& list, const FontSet& fonts, float text_size, ImVec2 lo, ImVec2 hi, PlotAxis x, PlotAxis y,
         std::string title = {});

    void draw_frame();                          // background, grid, ticks, labels, title
    const PlotGeometry& geometry() const { return g_; }
    ImVec2 to_screen(double x, double y) const { return g_.to_screen(x, y); }
    double x_at(float sx) const { return g_.x_at(sx); }
    double y_at(float sy) const { return g_.y_at(sy); }
    ImVec2 inner_lo() const { return g_.lo; }
    ImVec2 inner_hi() const { return g_.hi; }
    bool contains(ImVec2 p) const { return g_.contains(p); }
    const PlotAxis& x_axis() const { return g_.x; }
    const PlotAxis& y_axis() const { return g_.y; }

    // Between begin_data() and end_data() drawing is clipped to the axes' box.
    void begin_data();
    void end_data();
    // Between begin_dense() and end_dense() (inside the data block) filled markers are drawn without their
    // anti-aliased fringe: a third of the vertices, for plots with thousands of points.
    void begin_dense();
    void end_dense();
    // A polyline through (x[k], y[k]); a NaN breaks it.
    void line(const std::vector<double>& x, const std::vector<double>& y, ImU32 colour, float width = 1.6f);
    void hline(double y, ImU32 colour, float width = 1.2f, bool dashed = false, const std::string& label = {});
    void vline(double x, ImU32 colour, float width = 1.2f, bool dashed = false, const std::string& label = {});
    void x_band(double x0, double x1, ImU32 fill);
    // A marker at (x, y); beyond the y range it becomes an arrowhead on that edge. Returns where it was drawn.
    ImVec2 point(double x, double y, Marker marker, float r, ImU32 colour, bool filled = true);
    // A legend in a corner of the axes' box: top right by default.
    void legend(const std::vector<LegendEntry>& entries, bool left = false, bool bottom = false);

private:
    ImDrawList& list_;
    const FontSet& fonts_;
    float ts_;
    PlotGeometry g_;
    std::string title_;
    ImDrawListFlags saved_flags_ = 0;
    void dashed_line(ImVec2 a, ImVec2 b, ImU32 colour, float width);
};

// A plot's data layer drawn once and shown as one image each frame: thousands of small markers cost the
// software renderer far more than one textured rectangle. Record the layer into record()'s draw list (a Plot
// built on it), then finish(); draw() adds the image to a list each frame until the key or the box changes.
// Markers recorded here should be opaque (the image is composited once more when drawn).
class PlotImageCache {
public:
    PlotImageCache();
    ~PlotImageCache();
    PlotImageCache(PlotImageCache&&) noexcept;
    PlotImageCache& operator=(PlotImageCache&&) noexcept;
    bool ready(std::uint64_t key, ImVec2 lo, ImVec2 hi) const;
    ImDrawList& record(ImVec2 lo, ImVec2 hi);
    // Renders the recording into the texture; false if no texture could be made (then draw the layer directly).
    // `window` is made active again afterwards.
    bool finish(std::uint64_t key, sf::RenderTarget& window);
    void draw(ImDrawList& list) const;

private:
    std::unique_ptr<ImDrawList> list_;
    std::unique_ptr<sf::RenderTexture> texture_;
    std::uint64_t key_ = 0;
    ImVec2 lo_{0, 0}, hi_{0, 0};
    bool valid_ = false;
};

// The index of the point nearest to `mouse` within `max_px` (none if farther). NaN points are skipped.
std::optional<std::size_t> nearest_point(const std::vector<ImVec2>& points, ImVec2 mouse, float max_px);

}  // namespace wayward::viewer
