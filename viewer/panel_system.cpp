// "System from above": the barycentric reference plane seen from +z, with the star, each body coloured by
// role, trails drawn from the ephemeris samples, a distance grid and a scale bar. In trainee mode the planets
// are the team's model from the brief, the selected solution's orbit is drawn as the model integrates it, and
// after the reveal the hidden body's true orbit from the answer key. Wheel zooms about the cursor, dragging pans.
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <optional>

#include "viewer/analysis.hpp"
#include "viewer/calendar.hpp"
#include "viewer/draw_util.hpp"
#include "viewer/palette.hpp"
#include "viewer/panels.hpp"

namespace wayward::viewer {

namespace {

// Screen mapping for the plan view.
struct PlanMap {
    float cx = 0, cy = 0;   // canvas centre, window pixels
    double scale = 1.0;     // pixels per au
    double center_x = 0, center_y = 0;

    ImVec2 to_screen(double x, double y) const {
        return {static_cast<float>(cx + (x - center_x) * scale), static_cast<float>(cy - (y - center_y) * scale)};
    }
    void to_world(float sx, float sy, double& x, double& y) const {
        x = center_x + (sx - cx) / scale;
        y = center_y - (sy - cy) / scale;
    }
};

// The widest apocentre among the bodies shown (au), so zoom 1 fits them all.
double widest_orbit(const ViewerModel& m) {
    double r = 1.0;
    for (const BodyView& b : m.bodies)
        if (b.index != 0 && m.shows(b.index)) r = std::max(r, b.a_au * (1.0 + std::min(b.e, 0.99)));
    // The solver's selected orbit too (trainee mode), so that it is in view at zoom 1.
    if (m.analysis && m.analysis->minimum_view && m.analysis->minimum_view->solution_id == m.analysis->solution_id) {
        const std::vector<float>& xyz = m.analysis->minimum_view->xyz;
        for (std::size_t k = 0; k + 2 < xyz.size(); k += 3 * 16)
            if (!std::isnan(xyz[k])) r = std::max(r, static_cast<double>(std::hypot(xyz[k], xyz[k + 1])));
    }
    return r;
}

PlanMap plan_map(const sf::FloatRect& canvas, const PlanView& view, const ViewerModel& m) {
    PlanMap p;
    p.cx = canvas.left + canvas.width * 0.5f;
    p.cy = canvas.top + canvas.height * 0.5f;
    const double fit = 0.5 * std::min(canvas.width, canvas.height) * 0.92 / widest_orbit(m);
    p.scale = fit * view.zoom;
    p.center_x = view.center_x;
    p.center_y = view.center_y;
    return p;
}

std::string format_au(double au) {
    char buf[32];
    if (au >= 1.0) std::snprintf(buf, sizeof buf, "%g au", au);
    else std::snprintf(buf, sizeof buf, "%.2g au", au);
    return buf;
}

const char* role_name(const BodyView& b) {
    if (b.role == Role::star) return "star";
    if (b.role == Role::hidden) return b.from_key ? "hidden (key)" : "hidden";
    return b.observer ? "observer" : "known";
}

class SystemPanel final : public Panel {
public:
    const char* name() const override { return "system"; }
    const char* title() const override { return "System from above"; }

    void reset_view(ViewerControls& c) override { c.plan = PlanView{}; }

    void sidebar(ViewerControls& c, ViewerModel& m) override {
        ImGui::Checkbox("Trails", &c.trails);
        ImGui::SameLine();
        ImGui::Checkbox("Labels", &c.labels);
        ImGui::SetNextItemWidth(-90.0f);
        ImGui::SliderFloat("trail length", &c.trail_orbits, 0.05f, 1.0f, "%.2f orbit");
        ImGui::SetNextItemWidth(-90.0f);
        ImGui::SliderFloat("zoom", &c.plan.zoom, 0.5f, 200.0f, "%.2f\u00d7", ImGuiSliderFlags_Logarithmic);
        if (ImGui::Button("Reset view")) reset_view(c);
        ImGui::SameLine();
        ImGui::TextDisabled("wheel: zoom \u00b7 drag: pan");

        ImGui::Spacing();
        if (ImGui::BeginTable("bodies", 4, ImGuiTableFlags_RowBg | ImGuiTableFlags_SizingStretchProp)) {
            ImGui::TableSetupColumn("body");
            ImGui::TableSetupColumn("role");
            ImGui::TableSetupColumn("a (au)");
            ImGui::TableSetupColumn("P (yr)");
            ImGui::TableHeadersRow();
            for (const BodyView& b : m.bodies) {
                if (!m.shows(b.index)) continue;
                ImGui::TableNextRow();
                ImGui::TableNextColumn();
                ImGui::ColorButton(("##c" + b.name).c_str(), palette::to_imgui(palette::for_body(b.role, b.observer)),
                                   ImGuiColorEditFlags_NoTooltip | ImGuiColorEditFlags_NoBorder, ImVec2(10, 10));
                ImGui::SameLine();
                ImGui::TextUnformatted(b.name.c_str());
                ImGui::TableNextColumn();
                ImGui::TextUnformatted(role_name(b));
                ImGui::TableNextColumn();
                if (b.index == 0) ImGui::TextDisabled("\u2014");
                else ImGui::Text("%.2f", b.a_au);
                ImGui::TableNextColumn();
                if (b.period_days > 0) ImGui::Text("%.1f", b.period_days / 365.25);
                else ImGui::TextDisabled("\u2014");
            }
            ImGui::EndTable();
        }
    }

    void on_mouse(const sf::Event& e, const sf::FloatRect& canvas, ViewerControls& c, const ViewerModel& m) override {
        const PlanMap map = plan_map(canvas, c.plan, m);
        switch (e.type) {
            case sf::Event::MouseWheelScrolled: {
                if (e.mouseWheelScroll.wheel != sf::Mouse::VerticalWheel) break;
                // Zoom about the cursor: the point under it stays put.
                double wx, wy;
                map.to_world(static_cast<float>(e.mouseWheelScroll.x), static_cast<float>(e.mouseWheelScroll.y), wx, wy);
                const float factor = std::pow(1.15f, e.mouseWheelScroll.delta);
                c.plan.zoom = std::clamp(c.plan.zoom * factor, 0.5f, 200.0f);
                const PlanMap after = plan_map(canvas, c.plan, m);
                double ax, ay;
                after.to_world(static_cast<float>(e.mouseWheelScroll.x), static_cast<float>(e.mouseWheelScroll.y), ax, ay);
                c.plan.center_x += wx - ax;
                c.plan.center_y += wy - ay;
                break;
            }
            case sf::Event::MouseButtonPressed:
                dragging_ = true;
                last_ = {static_cast<float>(e.mouseButton.x), static_cast<float>(e.mouseButton.y)};
                break;
            case sf::Event::MouseButtonReleased:
                dragging_ = false;
                break;
            case sf::Event::MouseMoved:
                if (dragging_) {
                    const sf::Vector2f now(static_cast<float>(e.mouseMove.x), static_cast<float>(e.mouseMove.y));
                    c.plan.center_x -= (now.x - last_.x) / map.scale;
                    c.plan.center_y += (now.y - last_.y) / map.scale;
                    last_ = now;
                }
                break;
            default:
                break;
        }
    }

    void draw(sf::RenderTarget&, ImDrawList& list, const sf::FloatRect& canvas, const ViewerControls& c,
              const ViewerModel& m, const DrawContext& ctx) override {
        const PlanMap map = plan_map(canvas, c.plan, m);
        const ImVec2 lo(canvas.left, canvas.top), hi(canvas.left + canvas.width, canvas.top + canvas.height);
        list.PushClipRect(lo, hi, true);
        draw_grid(list, map, canvas, ctx);
        if (c.trails) draw_trails(list, map, c, m);
        draw_solver_orbit(list, map, c, m, ctx);
        draw_bodies(list, map, canvas, c, m, ctx);
        draw_overlay(list, map, canvas, c, m, ctx);
        list.PopClipRect();
    }

private:
    bool dragging_ = false;
    sf::Vector2f last_;

    void draw_grid(ImDrawList& list, const PlanMap& map, const sf::FloatRect& canvas, const DrawContext& ctx) {
        // Rings around the barycentre every `step` au, at least ~70 px apart.
        const double step = nice_step(70.0 / map.scale);
        const ImVec2 o = map.to_screen(0.0, 0.0);
        const double reach = std::hypot(canvas.width, canvas.height) + std::hypot(o.x - map.cx, o.y - map.cy);
        const int rings = std::min(200, static_cast<int>(reach / (step * map.scale)) + 1);
        for (int k = 1; k <= rings; ++k) {
            const float r = static_cast<float>(k * step * map.scale);
            list.AddCircle(o, r, im_color(palette::grid, 95), std::clamp(static_cast<int>(r / 3), 48, 512), 1.0f);
        }
        list.AddLine(ImVec2(canvas.left, o.y), ImVec2(canvas.left + canvas.width, o.y), im_color(palette::grid, 80));
        list.AddLine(ImVec2(o.x, canvas.top), ImVec2(o.x, canvas.top + canvas.height), im_color(palette::grid, 80));
        for (int k = 1; k <= std::min(rings, 12); ++k) {
            const ImVec2 p(o.x + static_cast<float>(k * step * map.scale) + 3.0f, o.y + 2.0f);
            draw_text(list, ctx.fonts, ctx.text_size * 0.8f, p, im_color(palette::text_dim, 170), format_au(k * step));
        }
    }

    void draw_trails(ImDrawList& list, const PlanMap& map, const ViewerControls& c, const ViewerModel& m) {
        const std::size_t n = m.body_count();
        const double t = c.time_days;
        std::vector<ImVec2> pts;
        for (const BodyView& b : m.bodies) {
            if (b.index == 0 || !m.shows(b.index) || !(b.period_days > 0)) continue;
            const double window = b.period_days * c.trail_orbits;
            const sf::Color col = palette::for_body(b.role, b.observer);
            // Past part [t - window, t], then (early in the span, where there is no past) the coming part.
            const double past_start = std::max(m.t_begin(), t - window);
            const double future_end = std::min(m.t_end(), t + std::max(0.0, window - (t - past_start)));
            const std::size_t k0 = m.nearest_sample(past_start), k1 = m.nearest_sample(t), k2 = m.nearest_sample(future_end);
            const std::size_t stride = std::max<std::size_t>(1, (k2 - k0) / 1200);
            const float thick = b.role == Role::hidden || b.observer ? 2.0f : 1.6f;
            // Past: fading towards the oldest point, drawn in a few alpha bands.
            const int bands = 6;
            for (int band = 0; band < bands; ++band) {
                const std::size_t a0 = k0 + (k1 - k0) * static_cast<std::size_t>(band) / bands;
                const std::size_t a1 = k0 + (k1 - k0) * static_cast<std::size_t>(band + 1) / bands;
                pts.clear();
                for (std::size_t k = a0; k <= a1; k += stride) pts.push_back(sample_point(m, map, k, b.index, n));
                if (band == bands - 1) {
                    const Vec3 p = m.position(b.index, t);
                    pts.push_back(map.to_screen(p.x(), p.y()));
                } else {
                    pts.push_back(sample_point(m, map, a1, b.index, n));
                }
                const auto alpha = static_cast<std::uint8_t>(70 + 170 * (band + 1) / bands);
                if (pts.size() >= 2) list.AddPolyline(pts.data(), static_cast<int>(pts.size()), im_color(col, alpha), 0, thick);
            }
            if (k2 > k1) {
                pts.clear();
                const Vec3 p = m.position(b.index, t);
                pts.push_back(map.to_screen(p.x(), p.y()));
                for (std::size_t k = k1 + 1; k <= k2; k += stride) pts.push_back(sample_point(m, map, k, b.index, n));
                if (pts.size() >= 2) list.AddPolyline(pts.data(), static_cast<int>(pts.size()), im_color(col, 95), 0, 1.2f);
            }
        }
    }

    // The selected local minimum's orbit as the team's model integrates it (trainee mode, when solved).
    void draw_solver_orbit(ImDrawList& list, const PlanMap& map, const ViewerControls& c, const ViewerModel& m, const DrawContext& ctx) {
        const MinimumView* v = selected_view(m, c);
        if (!v) return;
        std::vector<ImVec2> pts;
        const std::size_t count = v->xyz.size() / 3;
        const std::size_t stride = std::max<std::size_t>(1, count / 3000);
        auto flush = [&] {
            if (pts.size() >= 2) list.AddPolyline(pts.data(), static_cast<int>(pts.size()), im_color(palette::solution, 200), 0, 1.6f);
            pts.clear();
        };
        for (std::size_t k = 0; k < count; k += stride) {
            const float* p = &v->xyz[k * 3];
            if (std::isnan(p[0])) {
                flush();
                continue;
            }
            pts.push_back(map.to_screen(p[0], p[1]));
        }
        flush();
        const std::size_t k = m.nearest_sample(c.time_days);
        if (k < count && !std::isnan(v->xyz[k * 3])) {
            const ImVec2 s = map.to_screen(v->xyz[k * 3], v->xyz[k * 3 + 1]);
            list.AddCircle(s, 6.0f, im_color(palette::solution), 20, 2.0f);
            (void)ctx;  // its label is placed with the bodies' (draw_bodies)
        }
    }

    static const MinimumView* selected_view(const ViewerModel& m, const ViewerControls& c) {
        if (!c.show_solution || !m.analysis || !m.analysis->minimum_view) return nullptr;
        const MinimumView& v = *m.analysis->minimum_view;
        if (v.solution_id != m.analysis->solution_id || v.minimum != static_cast<std::size_t>(std::max(0, c.selected_minimum))) return nullptr;
        return &v;
    }

    static ImVec2 sample_point(const ViewerModel& m, const PlanMap& map, std::size_t k, std::size_t i, std::size_t n) {
        const float* p = &m.sample_xyz[(k * n + i) * 3];
        return map.to_screen(p[0], p[1]);
    }

    void draw_bodies(ImDrawList& list, const PlanMap& map, const sf::FloatRect& canvas, const ViewerControls& c,
                     const ViewerModel& m, const DrawContext& ctx) {
        struct Placed {
            const BodyView* body;
            ImVec2 at;
            float radius;
        };
        std::vector<Placed> placed;
        LabelPlacer labels(ImVec2(canvas.left + 4, canvas.top + 4), ImVec2(canvas.left + canvas.width - 4, canvas.top + canvas.height - 4));
        labels.block_rect(ImVec2(canvas.left, canvas.top), ImVec2(canvas.left + 470.0f, canvas.top + 82.0f));  // the title block
        for (const BodyView& b : m.bodies) {
            if (!m.shows(b.index)) continue;
            const Vec3 p = m.position(b.index, c.time_days);
            const ImVec2 s = map.to_screen(p.x(), p.y());
            const sf::Color col = palette::for_body(b.role, b.observer);
            float r = 5.0f;
            if (b.role == Role::star) {
                r = 8.0f;
                for (int k = 4; k >= 1; --k)
                    list.AddCircleFilled(s, r + 4.0f * static_cast<float>(k), im_color(col, static_cast<std::uint8_t>(14 + 6 * (4 - k))), 32);
            }
            list.AddCircleFilled(s, r, im_color(col), 24);
            if (b.observer || b.role == Role::hidden) list.AddCircle(s, r + 3.5f, im_color(col, 220), 24, 1.5f);
            const float extent = b.observer || b.role == Role::hidden ? r + 5.0f : r + 1.0f;
            labels.block(s, extent);
            placed.push_back({&b, s, extent});
        }
        // The solver's body on its orbit, labelled like the bodies.
        std::optional<ImVec2> solver_at;
        if (const MinimumView* v = selected_view(m, c)) {
            const std::size_t k = m.nearest_sample(c.time_days);
            if (k * 3 + 1 < v->xyz.size() && !std::isnan(v->xyz[k * 3])) {
                solver_at = map.to_screen(v->xyz[k * 3], v->xyz[k * 3 + 1]);
                labels.block(*solver_at, 8.0f);
            }
        }
        if (!c.labels) return;
        if (solver_at) {
            const MinimumView& v = *selected_view(m, c);
            draw_label(list, ctx.fonts, ctx.text_size * 0.85f, labels, *solver_at, 8.0f, im_color(palette::text_dim),
                       v.minimum == 0 ? "solver" : "minimum " + std::to_string(v.minimum + 1));
        }
        for (const Placed& p : placed) {
            const BodyView& b = *p.body;
            const sf::Color col = b.role == Role::star ? palette::text : palette::for_body(b.role, b.observer);
            draw_label(list, ctx.fonts, ctx.text_size * 0.9f, labels, p.at, p.radius, im_color(col), b.name);
        }
    }

    void draw_overlay(ImDrawList& list, const PlanMap& map, const sf::FloatRect& canvas, const ViewerControls& c,
                      const ViewerModel& m, const DrawContext& ctx) {
        const float pad = 16.0f, ts = ctx.text_size;
        const double year = m.year(c.time_days);
        draw_text(list, ctx.fonts, ts * 1.35f, ImVec2(canvas.left + pad, canvas.top + pad), im_color(palette::text),
                  title(), Align::left, true);
        draw_text(list, ctx.fonts, ts * 1.1f, ImVec2(canvas.left + pad, canvas.top + pad + ts * 1.7f),
                  im_color(palette::text), format_decimal_year(year) + "   \u00b7   " + format_calendar_date(calendar_date(year)),
                  Align::left, true);
        draw_text(list, ctx.fonts, ts * 0.85f, ImVec2(canvas.left + pad, canvas.top + pad + ts * 3.1f),
                  im_color(palette::text_dim),
                  m.mode == ViewerMode::trainee ? "barycentric reference plane, seen from +z; planets from the brief\u2019s model"
                                                : "barycentric reference plane, seen from +z",
                  Align::left, true);

        // Scale bar, bottom left.
        const double bar_au = nice_step(120.0 / map.scale);
        const float bar_px = static_cast<float>(bar_au * map.scale);
        const float y = canvas.top + canvas.height - pad - 6.0f, x0 = canvas.left + pad;
        list.AddLine(ImVec2(x0, y), ImVec2(x0 + bar_px, y), im_color(palette::text), 2.0f);
        list.AddLine(ImVec2(x0, y - 5), ImVec2(x0, y + 5), im_color(palette::text), 2.0f);
        list.AddLine(ImVec2(x0 + bar_px, y - 5), ImVec2(x0 + bar_px, y + 5), im_color(palette::text), 2.0f);
        draw_text(list, ctx.fonts, ts * 0.9f, ImVec2(x0 + bar_px * 0.5f, y - ts * 1.5f), im_color(palette::text),
                  format_au(bar_au), Align::centre, true);

        // Legend, bottom right.
        const float lx = canvas.left + canvas.width - pad - ts * 11.5f;
        const bool solver = selected_view(m, c) != nullptr;
        const int rows = 3 + (m.hidden_shown() ? 1 : 0) + (solver ? 1 : 0);
        float ly = canvas.top + canvas.height - pad - ts * 1.35f * static_cast<float>(rows);
        list.AddRectFilled(ImVec2(lx - 10, ly - 8), ImVec2(canvas.left + canvas.width - pad + 6, canvas.top + canvas.height - pad + 2),
                           IM_COL32(10, 13, 22, 190), 6.0f);
        ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::star, "star");
        ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::observer, "observer planet");
        ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::known, "known planet");
        if (m.hidden_shown())
            ly = legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::hidden,
                            m.mode == ViewerMode::trainee ? "hidden body (true orbit)" : "hidden body");
        if (solver) legend_row(list, ctx.fonts, ts * 0.9f, ImVec2(lx, ly), palette::solution, "solver\u2019s orbit (model)", true);
    }
};

}  // namespace

std::unique_ptr<Panel> make_system_panel() { return std::make_unique<SystemPanel>(); }

}  // namespace wayward::viewer
