// "Sky from the observer": apparent longitude and latitude in the observer's frame (plate carrée, longitude
// increasing to the left as on a sky chart), with the generated star field, the apparent tracks of the planets
// around the current time, the star's direction with the elongation-limit region shaded around it, and the
// prediction marker. Click places the marker at the current epoch, dragging sets its search radius; right or
// middle drag pans, wheel zooms.
#include <algorithm>
#include <cmath>
#include <cstdio>

#include <SFML/Graphics/VertexArray.hpp>

#include "sim/elements.hpp"
#include "sim/starfield.hpp"
#include "sim/units.hpp"
#include "viewer/calendar.hpp"
#include "viewer/draw_util.hpp"
#include "viewer/palette.hpp"
#include "viewer/panels.hpp"

namespace wayward::viewer {

namespace {

struct SkyMap {
    float cx = 0, cy = 0;     // canvas centre, window pixels
    double scale = 1.0;       // pixels per radian
    double center_lon = 0, center_lat = 0;

    // Longitude is taken relative to the view centre in (-pi, pi], so the map wraps around the sphere.
    ImVec2 to_screen(double lon, double lat) const {
        return {static_cast<float>(cx - wrap_pi(lon - center_lon) * scale),
                static_cast<float>(cy - (lat - center_lat) * scale)};
    }
    void to_sky(float sx, float sy, double& lon, double& lat) const {
        lon = wrap_two_pi(center_lon + (cx - sx) / scale);
        lat = std::clamp(center_lat + (cy - sy) / scale, -pi / 2, pi / 2);
    }
};

SkyMap sky_map(const sf::FloatRect& canvas, const SkyView& v) {
    SkyMap s;
    s.cx = canvas.left + canvas.width * 0.5f;
    s.cy = canvas.top + canvas.height * 0.5f;
    // Zoom 1 shows the whole sky: 360 degrees across or 180 degrees up, whichever is tighter.
    s.scale = std::min(canvas.width / two_pi, canvas.height / pi) * v.zoom;
    s.center_lon = v.center_lon;
    s.center_lat = v.center_lat;
    return s;
}

std::string format_deg(double radians, int decimals = 0) {
    char buf[48];
    const double d = radians / deg;
    // U+2212 minus sign for negatives, as in print.
    std::snprintf(buf, sizeof buf, "%s%.*f\u00b0", d < -0.5 * std::pow(10.0, -decimals) ? "\u2212" : "", decimals, std::abs(d));
    return buf;
}

class SkyPanel final : public Panel {
public:
    const char* name() const override { return "sky"; }
    const char* title() const override { return "Sky from the observer"; }

    void reset_view(ViewerControls& c) override { c.sky = SkyView{}; }

    void sidebar(ViewerControls& c, ViewerModel& m) override {
        ImGui::Checkbox("Tracks", &c.tracks);
        ImGui::SameLine();
        ImGui::Checkbox("Stars", &c.show_stars);
        ImGui::SameLine();
        ImGui::Checkbox("Elongation limit", &c.shade_elongation);
        ImGui::SetNextItemWidth(-90.0f);
        ImGui::SliderFloat("track span", &c.track_years, 0.1f, 10.0f, "\u00b1%.1f yr", ImGuiSliderFlags_Logarithmic);
        ImGui::SetNextItemWidth(-90.0f);
        ImGui::SliderFloat("zoom##sky", &c.sky.zoom, 1.0f, 400.0f, "%.2f\u00d7", ImGuiSliderFlags_Logarithmic);
        ImGui::SetNextItemWidth(-90.0f);
        ImGui::SliderFloat("faint limit", &c.star_faint_mag, 4.0f, 10.0f, "%.1f mag");
        if (ImGui::IsItemDeactivatedAfterEdit()) regenerate_stars(m, -1, c.star_faint_mag);
        ImGui::TextDisabled("%zu stars in the field", m.stars.size());
        if (ImGui::Button("Reset view##sky")) reset_view(c);
        ImGui::SameLine();
        ImGui::TextDisabled("right-drag: pan");

        ImGui::Spacing();
        ImGui::TextUnformatted("Prediction");
        if (c.marker.placed) {
            ImGui::Text("\u03bb = %s   \u03b2 = %s", format_deg(c.marker.lon, 3).c_str(), format_deg(c.marker.lat, 3).c_str());
            ImGui::Text("epoch %s   radius %s", format_decimal_year(m.year(c.marker.epoch_days)).c_str(),
                        format_deg(c.marker.radius, 2).c_str());
            if (ImGui::Button("Clear prediction")) c.marker = PredictionMarker{};
        } else {
            ImGui::TextDisabled("click the sky to place it, drag to size it");
        }

        ImGui::Spacing();
        if (ImGui::BeginTable("elongations", 3, ImGuiTableFlags_RowBg | ImGuiTableFlags_SizingStretchProp)) {
            ImGui::TableSetupColumn("body");
            ImGui::TableSetupColumn("elongation");
            ImGui::TableSetupColumn("");
            ImGui::TableHeadersRow();
            for (const BodyView& b : m.bodies) {
                if (b.index == 0 || b.index == m.observer || !m.shows(b.index)) continue;
                const double e = m.elongation(b.index, c.time_days);
                ImGui::TableNextRow();
                ImGui::TableNextColumn();
                ImGui::ColorButton(("##e" + b.name).c_str(), palette::to_imgui(palette::for_body(b.role, b.observer)),
                                   ImGuiColorEditFlags_NoTooltip | ImGuiColorEditFlags_NoBorder, ImVec2(10, 10));
                ImGui::SameLine();
                ImGui::TextUnformatted(b.name.c_str());
                ImGui::TableNextColumn();
                ImGui::TextUnformatted(format_deg(e, 1).c_str());
                ImGui::TableNextColumn();
                if (e < m.elongation_limit()) ImGui::TextColored(palette::to_imgui(palette::unobservable), "near star");
                else ImGui::TextDisabled("observable");
            }
            ImGui::EndTable();
        }
    }

    void on_mouse(const sf::Event& e, const sf::FloatRect& canvas, ViewerControls& c, const ViewerModel& m) override {
        const SkyMap map = sky_map(canvas, c.sky);
        switch (e.type) {
            case sf::Event::MouseWheelScrolled: {
                if (e.mouseWheelScroll.wheel != sf::Mouse::VerticalWheel) break;
                const auto sx = static_cast<float>(e.mouseWheelScroll.x), sy = static_cast<float>(e.mouseWheelScroll.y);
                // Zoom about the cursor (in map offsets, so the wrap at +-180 degrees does not matter).
                const double ox = (map.cx - sx) / map.scale, oy = (map.cy - sy) / map.scale;
                c.sky.zoom = std::clamp(c.sky.zoom * std::pow(1.15f, e.mouseWheelScroll.delta), 1.0f, 400.0f);
                const SkyMap after = sky_map(canvas, c.sky);
                const double nx = (after.cx - sx) / after.scale, ny = (after.cy - sy) / after.scale;
                c.sky.center_lon = wrap_two_pi(c.sky.center_lon + ox - nx);
                c.sky.center_lat = std::clamp(c.sky.center_lat + oy - ny, -pi / 2, pi / 2);
                break;
            }
            case sf::Event::MouseButtonPressed: {
                const auto sx = static_cast<float>(e.mouseButton.x), sy = static_cast<float>(e.mouseButton.y);
                if (e.mouseButton.button == sf::Mouse::Left) {
                    double lon, lat;
                    map.to_sky(sx, sy, lon, lat);
                    const double keep = c.marker.radius > 0 ? c.marker.radius : m.scenario.plan.field_radius_deg * deg;
                    c.marker = PredictionMarker{true, lon, lat, c.time_days, keep};
                    sizing_ = true;
                    press_ = {sx, sy};
                } else {
                    panning_ = true;
                    last_ = {sx, sy};
                }
                break;
            }
            case sf::Event::MouseButtonReleased:
                sizing_ = panning_ = false;
                break;
            case sf::Event::MouseMoved: {
                const sf::Vector2f now(static_cast<float>(e.mouseMove.x), static_cast<float>(e.mouseMove.y));
                if (sizing_ && std::hypot(now.x - press_.x, now.y - press_.y) > 4.0f) {
                    double lon, lat;
                    map.to_sky(now.x, now.y, lon, lat);
                    c.marker.radius = separation(c.marker.lon, c.marker.lat, lon, lat);
                }
                if (panning_) {
                    c.sky.center_lon = wrap_two_pi(c.sky.center_lon + (now.x - last_.x) / map.scale);
                    c.sky.center_lat = std::clamp(c.sky.center_lat + (now.y - last_.y) / map.scale, -pi / 2, pi / 2);
                    last_ = now;
                }
                break;
            }
            default:
                break;
        }
    }

    void draw(sf::RenderTarget& target, ImDrawList& list, const sf::FloatRect& canvas, const ViewerControls& c,
              const ViewerModel& m, const DrawContext& ctx) override {
        const SkyMap map = sky_map(canvas, c.sky);
        labels_ = LabelPlacer(ImVec2(canvas.left + 4, canvas.top + 4), ImVec2(canvas.left + canvas.width - 4, canvas.top + canvas.height - 4));
        if (c.show_stars) draw_stars(target, map, canvas, m, ctx);
        const ImVec2 lo(canvas.left, canvas.top), hi(canvas.left + canvas.width, canvas.top + canvas.height);
        list.PushClipRect(lo, hi, true);
        draw_grid(list, map, canvas, ctx);
        const SkyPosition star = m.sky(0, c.time_days);
        if (c.shade_elongation) draw_limit(list, map, star, m);
        draw_star_direction(list, map, star, m, ctx);
        draw_planets(list, map, c, m, ctx);
        if (c.marker.placed) draw_marker(list, map, c, m, ctx);
        draw_overlay(list, canvas, c, m, ctx);
        list.PopClipRect();
    }

private:
    bool sizing_ = false, panning_ = false;
    sf::Vector2f press_, last_;
    sf::VertexArray star_quads_{sf::Quads};
    sf::VertexArray star_points_{sf::Points};
    LabelPlacer labels_;  // this frame's labels

    void draw_stars(sf::RenderTarget& target, const SkyMap& map, const sf::FloatRect& canvas, const ViewerModel& m,
                    const DrawContext& ctx) {
        star_quads_.clear();
        star_points_.clear();
        const double bright = m.star_spec.bright_mag, faint = m.star_spec.faint_mag;
        const float tex = ctx.glow ? static_cast<float>(ctx.glow->getSize().x) : 1.0f;
        const float x0 = canvas.left - 8, x1 = canvas.left + canvas.width + 8;
        const float y0 = canvas.top - 8, y1 = canvas.top + canvas.height + 8;
        // A little larger when zoomed in, so a magnified field does not look empty.
        const double fit = std::min(canvas.width / two_pi, canvas.height / pi);
        const float grow = std::min(1.8f, static_cast<float>(std::pow(map.scale / fit, 0.12)));
        const double point_below = 0.28 / grow;
        for (const Star& s : m.stars) {
            const ImVec2 p = map.to_screen(s.lon, s.lat);
            if (p.x < x0 || p.x > x1 || p.y < y0 || p.y > y1) continue;
            const double u = std::clamp((faint - s.mag) / (faint - bright), 0.0, 1.0);  // 1 = brightest
            const float half = grow * static_cast<float>(1.3 + 5.0 * u * u * u);
            const auto alpha = static_cast<sf::Uint8>(std::clamp(45.0 + 210.0 * std::pow(u, 0.8), 0.0, 255.0));
            // A faint blue-white to warm-white tint from a hash of the position: variety, not physics.
            double h = std::sin(s.lon * 12.9898 + s.lat * 78.233) * 43758.5453;
            h -= std::floor(h);
            const auto tint = static_cast<float>(h);
            const sf::Color col(static_cast<sf::Uint8>(200 + 55 * tint), static_cast<sf::Uint8>(212 + 30 * tint),
                                static_cast<sf::Uint8>(255 - 45 * tint), alpha);
            if (u < point_below) {  // most stars are faint: one pixel each is cheaper to draw than a sprite
                star_points_.append(sf::Vertex({std::floor(p.x) + 0.5f, std::floor(p.y) + 0.5f}, col));
                continue;
            }
            star_quads_.append(sf::Vertex({p.x - half, p.y - half}, col, {0, 0}));
            star_quads_.append(sf::Vertex({p.x + half, p.y - half}, col, {tex, 0}));
            star_quads_.append(sf::Vertex({p.x + half, p.y + half}, col, {tex, tex}));
            star_quads_.append(sf::Vertex({p.x - half, p.y + half}, col, {0, tex}));
        }
        sf::RenderStates states;
        states.texture = ctx.glow;
        states.blendMode = sf::BlendAdd;
        target.draw(star_quads_, states);
        target.draw(star_points_, sf::RenderStates(sf::BlendAdd));
    }

    void draw_grid(ImDrawList& list, const SkyMap& map, const sf::FloatRect& canvas, const DrawContext& ctx) {
        // The sky occupies latitudes -90..90; beyond the poles the canvas is left dark.
        const float top = std::max(canvas.top, map.to_screen(map.center_lon, pi / 2).y);
        const float bottom = std::min(canvas.top + canvas.height, map.to_screen(map.center_lon, -pi / 2).y);
        const float left = canvas.left, right = canvas.left + canvas.width;
        if (top > canvas.top) list.AddRectFilled(ImVec2(left, canvas.top), ImVec2(right, top), IM_COL32(6, 8, 14, 255));
        if (bottom < canvas.top + canvas.height)
            list.AddRectFilled(ImVec2(left, bottom), ImVec2(right, canvas.top + canvas.height), IM_COL32(6, 8, 14, 255));
        list.AddRect(ImVec2(left - 1, top), ImVec2(right + 1, bottom), im_color(palette::grid_strong, 160));

        const double step = nice_grid_step(70.0 / map.scale);
        const int decimals = step < 0.99 * deg ? 1 : 0;
        const float ts = ctx.text_size * 0.8f;
        // Labels for meridians go just under the sky if there is room, else along its bottom edge.
        const float label_y = bottom + ts * 1.6f < canvas.top + canvas.height ? bottom + 4.0f : bottom - ts * 1.5f;
        const double half_width = 0.5 * canvas.width / map.scale;
        const int n_lon = std::min(400, static_cast<int>(2.0 * half_width / step) + 2);
        const double first = std::floor((map.center_lon - half_width) / step) * step;
        for (int k = 0; k <= n_lon; ++k) {
            const double lon = first + k * step;
            const ImVec2 a = map.to_screen(lon, map.center_lat);
            if (a.x < left - 1 || a.x > right + 1) continue;
            list.AddLine(ImVec2(a.x, top), ImVec2(a.x, bottom), im_color(palette::grid, 110));
            double shown = wrap_two_pi(lon);
            if (two_pi - shown < 1e-9) shown = 0.0;  // 359.999... is the 0 meridian
            if (a.x - 2.0f * ts < left || a.x + 2.0f * ts > right) continue;  // its label would be cut off
            draw_text(list, ctx.fonts, ts, ImVec2(a.x, label_y), im_color(palette::text_dim), format_deg(shown, decimals),
                      Align::centre, true);
        }
        const double half_height = 0.5 * canvas.height / map.scale;
        const double lat_first = std::ceil((std::max(-pi / 2, map.center_lat - half_height)) / step) * step;
        for (double lat = lat_first; lat <= std::min(pi / 2, map.center_lat + half_height) + 1e-12; lat += step) {
            const float y = map.to_screen(map.center_lon, lat).y;
            const bool equator = std::abs(lat) < 1e-9;
            list.AddLine(ImVec2(left, y), ImVec2(right, y), im_color(equator ? palette::grid_strong : palette::grid, equator ? 150 : 110));
            draw_text(list, ctx.fonts, ts, ImVec2(left + 6, y - ts * 1.3f), im_color(palette::text_dim),
                      format_deg(equator ? 0.0 : lat, decimals), Align::left, true);
        }
    }

    // Grid steps in radians: 1, 2, 5, 10, 15, 30 degrees and decimal fractions of a degree.
    static double nice_grid_step(double at_least) {
        for (double d : {1.0, 2.0, 5.0, 10.0, 15.0, 30.0, 45.0, 90.0})
            if (d * deg >= at_least) return d * deg;
        if (at_least > 90.0 * deg) return 90.0 * deg;
        return nice_step(at_least / deg) * deg;
    }

    // A filled small circle (convex for the sizes drawn here), repeated a turn either side so it wraps.
    void fill_circle(ImDrawList& list, const SkyMap& map, double lon, double lat, double radius, ImU32 fill, ImU32 edge,
                     float edge_width) {
        const std::vector<SkyPoint> ring = small_circle(lon, lat, radius, 120);
        const ImVec2 centre = map.to_screen(lon, lat);
        std::vector<ImVec2> pts(ring.size());
        for (int turn = -1; turn <= 1; ++turn) {
            const float shift = static_cast<float>(turn * two_pi * map.scale);
            for (std::size_t k = 0; k < ring.size(); ++k)
                pts[k] = ImVec2(centre.x + shift - static_cast<float>(wrap_pi(ring[k].lon - lon) * map.scale),
                                static_cast<float>(map.cy - (ring[k].lat - map.center_lat) * map.scale));
            if (fill) list.AddConvexPolyFilled(pts.data(), static_cast<int>(pts.size()), fill);
            if (edge) list.AddPolyline(pts.data(), static_cast<int>(pts.size()), edge, ImDrawFlags_Closed, edge_width);
        }
    }

    void draw_limit(ImDrawList& list, const SkyMap& map, const SkyPosition& star, const ViewerModel& m) {
        fill_circle(list, map, star.lon, star.lat, m.elongation_limit(), im_color(palette::unobservable, 46),
                    im_color(palette::unobservable, 170), 1.5f);
    }

    void draw_star_direction(ImDrawList& list, const SkyMap& map, const SkyPosition& star, const ViewerModel& m,
                             const DrawContext& ctx) {
        const ImVec2 s = map.to_screen(star.lon, star.lat);
        for (int k = 4; k >= 1; --k) list.AddCircleFilled(s, 7.0f + 4.0f * static_cast<float>(k), im_color(palette::star, static_cast<std::uint8_t>(16 + 6 * (4 - k))), 32);
        list.AddCircleFilled(s, 7.0f, im_color(palette::star), 24);
        labels_.block(s, 9.0f);
        draw_label(list, ctx.fonts, ctx.text_size * 0.9f, labels_, s, 9.0f, im_color(palette::text), m.bodies[0].name);
        char buf[96];
        std::snprintf(buf, sizeof buf, "elongation < %.0f\u00b0", m.scenario.plan.elongation_limit_deg);
        const float reach = static_cast<float>(m.elongation_limit() * map.scale);
        if (reach > 30.0f)
            draw_text(list, ctx.fonts, ctx.text_size * 0.8f, ImVec2(s.x, s.y + reach + 4.0f), im_color(palette::unobservable, 235),
                      buf, Align::centre, true);
    }

    void draw_planets(ImDrawList& list, const SkyMap& map, const ViewerControls& c, const ViewerModel& m,
                      const DrawContext& ctx) {
        const std::size_t n = m.body_count();
        const double t = c.time_days;
        const double span = c.track_years * julian_year_days;
        std::vector<ImVec2> pts;
        struct Pending {
            ImVec2 at;
            ImU32 colour;
            std::string text;
        };
        std::vector<Pending> pending;
        const float jump = static_cast<float>(pi * map.scale);  // a longer step is the wrap, not the track
        auto flush = [&](ImU32 col, float thick) {
            if (pts.size() >= 2) list.AddPolyline(pts.data(), static_cast<int>(pts.size()), col, 0, thick);
            pts.clear();
        };
        for (const BodyView& b : m.bodies) {
            if (b.index == 0 || b.index == m.observer || !m.shows(b.index)) continue;
            const sf::Color col = palette::for_body(b.role, b.observer);
            const SkyPosition now = m.sky(b.index, t);
            if (c.tracks) {
                const std::size_t k0 = m.nearest_sample(std::max(m.t_begin(), t - span));
                const std::size_t k1 = m.nearest_sample(t);
                const std::size_t k2 = m.nearest_sample(std::min(m.t_end(), t + span));
                for (int part = 0; part < 2; ++part) {
                    const std::size_t a = part == 0 ? k0 : k1, z = part == 0 ? k1 : k2;
                    const ImU32 colour = im_color(col, part == 0 ? 210 : 80);
                    const float thick = part == 0 ? 2.0f : 1.3f;
                    pts.clear();
                    if (part == 1) pts.push_back(map.to_screen(now.lon, now.lat));
                    for (std::size_t k = a; k <= z; ++k) {
                        const ImVec2 p = map.to_screen(m.sample_lon[k * n + b.index], m.sample_lat[k * n + b.index]);
                        if (!pts.empty() && std::abs(p.x - pts.back().x) > jump) flush(colour, thick);
                        pts.push_back(p);
                    }
                    if (part == 0) {
                        const ImVec2 p = map.to_screen(now.lon, now.lat);
                        if (!pts.empty() && std::abs(p.x - pts.back().x) > jump) flush(colour, thick);
                        pts.push_back(p);
                    }
                    flush(colour, thick);
                }
            }
            const ImVec2 s = map.to_screen(now.lon, now.lat);
            list.AddCircleFilled(s, 5.0f, im_color(col), 20);
            list.AddCircle(s, 7.5f, im_color(col, 160), 20, 1.2f);
            labels_.block(s, 8.0f);
            pending.push_back({s, im_color(col), b.name});
        }
        for (const auto& p : pending) draw_label(list, ctx.fonts, ctx.text_size * 0.9f, labels_, p.at, 8.0f, p.colour, p.text);
    }

    void draw_marker(ImDrawList& list, const SkyMap& map, const ViewerControls& c, const ViewerModel& m,
                     const DrawContext& ctx) {
        const PredictionMarker& mk = c.marker;
        const ImU32 col = im_color(palette::prediction);
        fill_circle(list, map, mk.lon, mk.lat, mk.radius, im_color(palette::prediction, 34), col, 1.8f);
        const ImVec2 s = map.to_screen(mk.lon, mk.lat);
        const float arm = 9.0f, gap = 3.0f;
        list.AddLine(ImVec2(s.x - arm, s.y), ImVec2(s.x - gap, s.y), col, 2.0f);
        list.AddLine(ImVec2(s.x + gap, s.y), ImVec2(s.x + arm, s.y), col, 2.0f);
        list.AddLine(ImVec2(s.x, s.y - arm), ImVec2(s.x, s.y - gap), col, 2.0f);
        list.AddLine(ImVec2(s.x, s.y + gap), ImVec2(s.x, s.y + arm), col, 2.0f);
        const std::string text = "prediction, epoch " + format_decimal_year(m.year(mk.epoch_days)) + ", r = " +
                                 format_deg(mk.radius, 2);
        const float r_px = static_cast<float>(mk.radius * map.scale);
        draw_text(list, ctx.fonts, ctx.text_size * 0.85f, ImVec2(s.x, s.y + std::max(r_px, arm) + 6.0f), col, text,
                  Align::centre, true);
    }

    void draw_overlay(ImDrawList& list, const sf::FloatRect& canvas, const ViewerControls& c, const ViewerModel& m,
                      const DrawContext& ctx) {
        const float pad = 16.0f, ts = ctx.text_size;
        const float x = canvas.left + pad + 44.0f;
        const double year = m.year(c.time_days);
        list.AddRectFilled(ImVec2(x - 10, canvas.top + pad - 8), ImVec2(x + ts * 23.0f, canvas.top + pad + ts * 4.4f),
                           IM_COL32(10, 13, 22, 190), 6.0f);
        draw_text(list, ctx.fonts, ts * 1.35f, ImVec2(x, canvas.top + pad), im_color(palette::text),
                  std::string(title()) + " (" + m.bodies[m.observer].name + ")");
        draw_text(list, ctx.fonts, ts * 1.1f, ImVec2(x, canvas.top + pad + ts * 1.7f), im_color(palette::text),
                  format_decimal_year(year) + "   \u00b7   " + format_calendar_date(calendar_date(year)));
        draw_text(list, ctx.fonts, ts * 0.85f, ImVec2(x, canvas.top + pad + ts * 3.1f), im_color(palette::text_dim),
                  "\u03bb, \u03b2 in the observer\u2019s orbital plane; \u03bb grows to the left");

        // Legend, top right beside the title, or bottom right when the canvas is too narrow for both.
        const float lx = canvas.left + canvas.width - pad - ts * 11.5f;
        const int rows = m.mode == ViewerMode::author ? 5 : 4;
        const float legend_height = ts * 0.9f * 1.35f * static_cast<float>(rows);
        const bool beside = lx - 20.0f > x + ts * 23.0f;
        float ly = beside ? canvas.top + pad : canvas.top + canvas.height - pad - legend_height - ts * 1.6f;
        list.AddRectFilled(ImVec2(lx - 10, ly - 8), ImVec2(canvas.left + canvas.width - pad + 6, ly + legend_height + 4),
                           IM_COL32(10, 13, 22, 200), 6.0f);
        ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::star, "star");
        ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::known, "known planet, track");
        if (m.mode == ViewerMode::author) ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::hidden, "hidden body");
        ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::unobservable, "too near the star", true);
        legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::prediction, "prediction");
    }
};

}  // namespace

std::unique_ptr<Panel> make_sky_panel() { return std::make_unique<SkyPanel>(); }

}  // namespace wayward::viewer
