// "Sky from the observer": apparent longitude and latitude in the observer's frame (plate carrée, longitude
// increasing to the left as on a sky chart; drawn by SkyChart), with the generated star field, the apparent
// tracks of the planets around the current time, the star's direction with the elongation-limit region shaded
// around it, the trainee's prediction marker and, in trainee mode, the solver's prediction (and after the
// reveal the hidden body). Click places the marker at the current epoch, dragging sets its search radius;
// right or middle drag pans, wheel zooms.
#include <algorithm>
#include <cmath>
#include <cstdio>

#include "sim/physics/geometry.hpp"
#include "sim/base/units.hpp"
#include "viewer/analysis.hpp"
#include "viewer/calendar.hpp"
#include "viewer/draw_util.hpp"
#include "viewer/palette.hpp"
#include "viewer/panels.hpp"
#include "viewer/sky_chart.hpp"

namespace wayward::viewer {

namespace {

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
        ImGui::TextUnformatted("Your prediction");
        if (c.marker.placed) {
            double lon_deg = c.marker.lon / deg, lat_deg = c.marker.lat / deg, year = m.year(c.marker.epoch_days);
            double radius_deg = c.marker.radius / deg;
            ImGui::SetNextItemWidth(-90.0f);
            if (ImGui::InputDouble("\u03bb (deg)", &lon_deg, 0.0, 0.0, "%.3f", ImGuiInputTextFlags_EnterReturnsTrue))
                c.marker.lon = wrap_two_pi(lon_deg * deg);
            ImGui::SetNextItemWidth(-90.0f);
            if (ImGui::InputDouble("\u03b2 (deg)", &lat_deg, 0.0, 0.0, "%.3f", ImGuiInputTextFlags_EnterReturnsTrue))
                c.marker.lat = std::clamp(lat_deg, -90.0, 90.0) * deg;
            ImGui::SetNextItemWidth(-90.0f);
            if (ImGui::InputDouble("epoch", &year, 0.0, 0.0, "%.2f", ImGuiInputTextFlags_EnterReturnsTrue))
                c.marker.epoch_days = std::clamp(m.days_at_year(year), m.t_begin(), m.t_end());
            ImGui::SetNextItemWidth(-90.0f);
            if (ImGui::InputDouble("radius (deg)", &radius_deg, 0.0, 0.0, "%.2f", ImGuiInputTextFlags_EnterReturnsTrue))
                c.marker.radius = std::clamp(radius_deg, 0.0, 90.0) * deg;
            if (ImGui::Button("Clear prediction")) c.marker = PredictionMarker{};
        } else {
            ImGui::TextDisabled("click the sky to place it at the current epoch,\ndrag to size its radius");
        }
        if (m.mode == ViewerMode::trainee) {
            if (ImGui::Button("Go to the search epoch")) c.time_days = std::clamp(m.days_at_year(m.search_epoch_year()), m.t_begin(), m.t_end());
            ImGui::SameLine();
            ImGui::TextDisabled("%s", format_decimal_year(m.search_epoch_year(), 1).c_str());
            if (m.analysis && m.analysis->solution) ImGui::Checkbox("Solver\u2019s prediction", &c.show_solution);
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
                    const double keep = c.marker.radius > 0 ? c.marker.radius : m.field_radius();
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
        SkyLayers layers;
        layers.stars = c.show_stars;
        layers.tracks = c.tracks;
        layers.limit = c.shade_elongation;
        layers.track_years = c.track_years;
        chart_.draw(target, list, canvas, c.sky, c, m, ctx, layers);
        const ImVec2 lo(canvas.left, canvas.top), hi(canvas.left + canvas.width, canvas.top + canvas.height);
        list.PushClipRect(lo, hi, true);
        draw_overlay(list, canvas, c, m, ctx);
        list.PopClipRect();
    }

private:
    bool sizing_ = false, panning_ = false;
    sf::Vector2f press_, last_;
    SkyChart chart_;

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
        const bool solver = c.show_solution && shown_prediction(m, c, nullptr);
        const int rows = 4 + (m.hidden_shown() ? 1 : 0) + (solver ? 1 : 0);
        const float legend_height = ts * 0.9f * 1.35f * static_cast<float>(rows);
        const bool beside = lx - 20.0f > x + ts * 23.0f;
        float ly = beside ? canvas.top + pad : canvas.top + canvas.height - pad - legend_height - ts * 1.6f;
        list.AddRectFilled(ImVec2(lx - 10, ly - 8), ImVec2(canvas.left + canvas.width - pad + 6, ly + legend_height + 4),
                           IM_COL32(10, 13, 22, 200), 6.0f);
        ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::star, "star");
        ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::known, "known planet, track");
        if (m.hidden_shown())
            ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::hidden,
                            m.mode == ViewerMode::trainee ? "hidden body (revealed)" : "hidden body");
        ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::unobservable, "too near the star", true);
        ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::prediction, "your prediction");
        if (solver) legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::solution, "solver\u2019s prediction");
    }
};

}  // namespace

std::unique_ptr<Panel> make_sky_panel() { return std::make_unique<SkyPanel>(); }

}  // namespace wayward::viewer
