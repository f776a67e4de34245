// "Residuals": the known-bodies fit's O−C (sim fit_known, run in a worker thread when the exercise opens)
// against year, one row per observed planet with λ·cos β on the left and β on the right; eras told apart by
// colour and marker, observations set aside as outliers drawn as grey crosses, points beyond the plotted
// range as arrowheads on the edge. Hovering a point shows the observation (year, target, era, O−C, σ).
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>

#include "sim/base/units.hpp"
#include "viewer/analysis.hpp"
#include "viewer/calendar.hpp"
#include "viewer/draw_util.hpp"
#include "viewer/palette.hpp"
#include "viewer/panels.hpp"
#include "viewer/plot_widgets.hpp"
#include "viewer/progress_widgets.hpp"
#include "viewer/residuals_view.hpp"

namespace wayward::viewer {

namespace {

constexpr float header_height = 78.0f;  // the title block above the plots
constexpr float marker_r = 2.6f;

Marker era_marker(std::size_t era) {
    // No triangles for the first eras: hollow triangles on the edges mean "beyond the range".
    static const Marker order[] = {Marker::circle, Marker::square, Marker::diamond, Marker::triangle, Marker::triangle_down};
    return order[era % 5];
}

sf::Color era_colour(std::size_t era) { return palette::era_colours[era % std::size(palette::era_colours)]; }

double obs_year(const KnownFit& fit, std::size_t k) { return decimal_year(fit.setup.brief.epoch0_year, fit.setup.obs[k].time_days); }

std::string signed_arcsec(double v) {
    char buf[48];
    std::snprintf(buf, sizeof buf, "%s%.3f\u2033", v < 0 ? "\u2212" : "+", std::abs(v));
    return buf;
}

}  // namespace

ResidualLayout residual_layout(const KnownFit& fit, const sf::FloatRect& canvas, float ts) {
    ResidualLayout layout;
    const ModelSetup& s = fit.setup;
    const std::size_t planets = s.planets.size();
    if (planets == 0) return layout;
    double y0 = INFINITY, y1 = -INFINITY;
    for (std::size_t k = 0; k < s.obs.size(); ++k) {
        y0 = std::min(y0, obs_year(fit, k));
        y1 = std::max(y1, obs_year(fit, k));
    }
    PlotAxis xa = padded_axis(y0, y1, 0.02, false, "");
    const float left = canvas.left + 10.0f, right = canvas.left + canvas.width - 6.0f;
    layout.legend_y = canvas.top + header_height - ts * 1.5f;
    const float top = canvas.top + header_height + 4.0f, bottom = canvas.top + canvas.height - 4.0f;
    const float row_h = (bottom - top) / static_cast<float>(planets), col_w = (right - left) * 0.5f;
    for (std::size_t p = 0; p < planets; ++p) {
        for (int comp = 0; comp < 2; ++comp) {
            // The range holds 99% of the kept points (the rest show as arrowheads), symmetric about zero.
            std::vector<double> mags;
            for (std::size_t k = 0; k < s.obs.size(); ++k)
                if (s.obs[k].planet == p && !s.obs[k].rejected) mags.push_back(std::abs(fit.residuals[k][static_cast<std::size_t>(comp)]));
            std::sort(mags.begin(), mags.end());
            const double q = mags.empty() ? 1.0 : mags[std::min(mags.size() - 1, static_cast<std::size_t>(0.99 * static_cast<double>(mags.size())))];
            ResidualCell cell;
            cell.planet = p;
            cell.component = comp;
            cell.lo = ImVec2(left + col_w * static_cast<float>(comp), top + row_h * static_cast<float>(p));
            cell.hi = ImVec2(cell.lo.x + col_w - 8.0f, cell.lo.y + row_h - 6.0f);
            cell.x = xa;
            cell.x.label = p + 1 == planets ? "year" : "";
            cell.y = padded_axis(-q, q, 0.15, true, "O\u2212C (arcsec)");
            cell.title = s.known.bodies[s.planets[p]].name + (comp == 0 ? "  \u00b7  \u03bb\u00b7cos \u03b2" : "  \u00b7  \u03b2");
            layout.cells.push_back(cell);
        }
    }
    return layout;
}

namespace {

PlotGeometry cell_geometry(const ResidualCell& cell, float ts) { return PlotGeometry(cell.lo, cell.hi, ts, cell.x, cell.y, true); }

}  // namespace

std::vector<ImVec2> residual_positions(const KnownFit& fit, const ResidualLayout&, const ResidualCell& cell, float ts, bool show_set_aside) {
    const PlotGeometry g = cell_geometry(cell, ts);
    const ModelSetup& s = fit.setup;
    std::vector<ImVec2> out(s.obs.size(), ImVec2(NAN, NAN));
    for (std::size_t k = 0; k < s.obs.size(); ++k) {
        if (s.obs[k].planet != cell.planet || (s.obs[k].rejected && !show_set_aside)) continue;
        out[k] = g.marker_at(obs_year(fit, k), fit.residuals[k][static_cast<std::size_t>(cell.component)], marker_r);
    }
    return out;
}

std::optional<std::size_t> residual_under(const KnownFit& fit, const ResidualLayout& layout, float ts, bool show_set_aside, ImVec2 mouse) {
    for (const ResidualCell& cell : layout.cells) {
        const PlotGeometry g = cell_geometry(cell, ts);
        if (!g.contains(mouse)) continue;
        return nearest_point(residual_positions(fit, layout, cell, ts, show_set_aside), mouse, 8.0f);
    }
    return std::nullopt;
}

std::vector<std::string> describe_observation(const KnownFit& fit, std::size_t k) {
    const ModelSetup& s = fit.setup;
    const FitObservation& o = s.obs[k];
    const double year = obs_year(fit, k);
    char buf[160];
    std::vector<std::string> lines;
    lines.push_back(s.known.bodies[s.planets[o.planet]].name + ", " + format_decimal_year(year, 3) + " (" +
                    format_calendar_date(calendar_date(year)) + ")");
    lines.push_back("era: " + s.eras[o.era]);
    lines.push_back("O\u2212C: \u03bb\u00b7cos \u03b2 " + signed_arcsec(fit.residuals[k][0]) + ",  \u03b2 " + signed_arcsec(fit.residuals[k][1]));
    std::snprintf(buf, sizeof buf, "\u03c3: %.3f\u2033, %.3f\u2033 (%s)", o.sigma_lon_arcsec, o.sigma_lat_arcsec,
                  o.sigma_recorded ? "recorded" : "estimated from the era's residuals");
    lines.emplace_back(buf);
    if (o.rejected) lines.emplace_back("set aside as an outlier (beyond 4\u03c3), not in the fit");
    return lines;
}

namespace {

bool author_note(const ViewerModel& m) {
    if (m.mode == ViewerMode::trainee) return false;
    ImGui::PushTextWrapPos(0.0f);
    ImGui::TextDisabled("This panel works on an exercise folder: make one with `wayward new SCENARIO --out DIR` and open DIR.");
    ImGui::PopTextWrapPos();
    return true;
}

class ResidualsPanel final : public Panel {
public:
    const char* name() const override { return "residuals"; }
    const char* title() const override { return "Residuals"; }
    void reset_view(ViewerControls&) override {}

    void sidebar(ViewerControls&, ViewerModel& m) override {
        if (author_note(m)) return;
        Analysis& a = *m.analysis;
        ImGui::TextWrapped("O\u2212C of the known planets alone (no hidden body): what the known planets cannot explain.");
        if (a.fit_job.running()) {
            progress_bar(-1.0, "fitting");
            ImGui::TextDisabled("%s", a.fit_stage.c_str());
            return;
        }
        if (!a.fit) {
            ImGui::TextColored(palette::to_imgui(palette::unobservable), "The fit failed");
            ImGui::TextWrapped("%s", a.fit_error.c_str());
            if (ImGui::Button("Fit again")) a.start_fit();
            return;
        }
        const KnownFit& f = *a.fit;
        ImGui::Text("\u03c7\u00b2 = %.1f for %zu degrees of freedom", f.chi2, f.dof);
        ImGui::Text("\u03c7\u00b2/dof = %.3f  \u00b7  %zu kept, %zu set aside", f.chi2 / static_cast<double>(std::max<std::size_t>(f.dof, 1)),
                    f.kept, f.rejected);
        ImGui::Checkbox("Show the observations set aside", &show_set_aside_);
        ImGui::Spacing();
        ImGui::TextUnformatted("RMS of O\u2212C (arcsec), kept observations");
        if (ImGui::BeginTable("rms", 5, ImGuiTableFlags_RowBg | ImGuiTableFlags_SizingFixedFit)) {
            ImGui::TableSetupColumn("era", ImGuiTableColumnFlags_WidthStretch);
            ImGui::TableSetupColumn("n");
            ImGui::TableSetupColumn("\u03bb\u00b7cos \u03b2");
            ImGui::TableSetupColumn("\u03b2");
            ImGui::TableSetupColumn("\u03c3");
            ImGui::TableHeadersRow();
            std::string planet;
            for (const ResidualSummaryRow& r : residual_summary(f)) {
                if (r.planet_name != planet) {
                    planet = r.planet_name;
                    ImGui::TableNextRow();
                    ImGui::TableNextColumn();
                    ImGui::TextColored(palette::to_imgui(palette::known), "%s", r.planet_name.c_str());
                }
                ImGui::TableNextRow();
                ImGui::TableNextColumn();
                ImGui::TextDisabled("  %s", r.era_name.c_str());
                if (r.set_aside && ImGui::IsItemHovered()) ImGui::SetTooltip("%zu set aside", r.set_aside);
                ImGui::TableNextColumn();
                ImGui::Text("%zu", r.kept);
                ImGui::TableNextColumn();
                ImGui::Text("%.2f", r.rms_lon);
                ImGui::TableNextColumn();
                ImGui::Text("%.2f", r.rms_lat);
                ImGui::TableNextColumn();
                ImGui::Text("%.2f%s", r.sigma, r.sigma_estimated ? "*" : "");
            }
            ImGui::EndTable();
        }
        ImGui::TextDisabled("* \u03c3 estimated from the era's own residuals");
        ImGui::TextDisabled("hover a point for the observation");
    }

    void on_mouse(const sf::Event&, const sf::FloatRect&, ViewerControls&, const ViewerModel&) override {}

    void draw(sf::RenderTarget& target, ImDrawList& list, const sf::FloatRect& canvas, const ViewerControls&, const ViewerModel& m,
              const DrawContext& ctx) override {
        const ImVec2 lo(canvas.left, canvas.top), hi(canvas.left + canvas.width, canvas.top + canvas.height);
        list.PushClipRect(lo, hi, true);
        const float pad = 16.0f, ts = ctx.text_size;
        draw_text(list, ctx.fonts, ts * 1.35f, ImVec2(canvas.left + pad, canvas.top + pad - 4.0f), im_color(palette::text),
                  "Residuals of the known planets");
        if (m.mode != ViewerMode::trainee) {
            draw_card(list, ctx.fonts, ts, canvas, palette::text_dim, "An exercise folder is needed",
                      "Residuals come from fitting the known planets to an exercise's observations. Make one with "
                      "`wayward new scenarios/default.toml --out DIR` and open DIR in the viewer.");
            list.PopClipRect();
            return;
        }
        const Analysis& a = *m.analysis;
        if (!a.fit) {
            if (a.fit_job.running())
                draw_card(list, ctx.fonts, ts, canvas, palette::sky_blue, "Fitting the known planets",
                          std::to_string(a.exercise().observations.size()) + " observations. " + a.fit_stage, -1.0, ImGui::GetTime());
            else
                draw_card(list, ctx.fonts, ts, canvas, palette::unobservable, "The fit failed", a.fit_error);
            list.PopClipRect();
            return;
        }
        const KnownFit& f = *a.fit;
        char buf[200];
        std::snprintf(buf, sizeof buf, "O\u2212C = observed minus computed, arcsec; %zu observations, %zu set aside; \u03c7\u00b2/dof = %.3f",
                      f.setup.obs.size(), f.rejected, f.chi2 / static_cast<double>(std::max<std::size_t>(f.dof, 1)));
        draw_text(list, ctx.fonts, ts * 0.85f, ImVec2(canvas.left + pad, canvas.top + pad + ts * 1.45f), im_color(palette::text_dim), buf);

        const ResidualLayout layout = residual_layout(f, canvas, ts);
        // Legend row: eras by colour and marker, then the set-aside marker.
        float lx = canvas.left + pad;
        const float ly = layout.legend_y;
        for (std::size_t e = 0; e < f.setup.eras.size(); ++e) {
            draw_marker(list, ImVec2(lx + 5, ly + ts * 0.45f), era_marker(e), 4.0f, im_color(era_colour(e)));
            lx += 14.0f + draw_text(list, ctx.fonts, ts * 0.85f, ImVec2(lx + 13, ly), im_color(palette::text), f.setup.eras[e]).x + 18.0f;
        }
        if (show_set_aside_) {
            draw_marker(list, ImVec2(lx + 5, ly + ts * 0.45f), Marker::cross, 4.0f, im_color(palette::set_aside), true, 1.5f);
            lx += 14.0f + draw_text(list, ctx.fonts, ts * 0.85f, ImVec2(lx + 13, ly), im_color(palette::text), "set aside (outlier)").x + 18.0f;
        }
        draw_marker(list, ImVec2(lx + 5, ly + ts * 0.5f), Marker::triangle, 4.5f, im_color(palette::text_dim), false, 1.2f);
        draw_text(list, ctx.fonts, ts * 0.85f, ImVec2(lx + 13, ly), im_color(palette::text_dim), "beyond the plotted range (hover for the value)");

        const ImVec2 mouse = ImGui::GetIO().MousePos;
        const std::optional<std::size_t> hover = residual_under(f, layout, ts, show_set_aside_, mouse);
        if (caches_.size() != layout.cells.size()) caches_.resize(layout.cells.size());
        for (std::size_t i = 0; i < layout.cells.size(); ++i) {
            const ResidualCell& cell = layout.cells[i];
            Plot plot(list, ctx.fonts, ts, cell.lo, cell.hi, cell.x, cell.y, cell.title);
            plot.draw_frame();
            const PlotGeometry& g = plot.geometry();
            // The points are drawn once into an image and shown from it until the fit, the layout or the
            // set-aside switch changes.
            bool drawn = false;
            if (use_cache_) {
                const std::uint64_t key = cell_key(a.fit.get(), cell, g, show_set_aside_);
                PlotImageCache& cache = caches_[i];
                if (!cache.ready(key, g.lo, g.hi)) {
                    Plot rec(cache.record(g.lo, g.hi), ctx.fonts, ts, cell.lo, cell.hi, cell.x, cell.y, cell.title);
                    draw_points(rec, f, cell, true);
                    if (!cache.finish(key, target)) use_cache_ = false;
                }
                if (use_cache_) {
                    cache.draw(list);
                    drawn = true;
                }
            }
            if (!drawn) draw_points(plot, f, cell, false);
            if (hover && f.setup.obs[*hover].planet == cell.planet) {
                plot.begin_data();
                const ImVec2 p = g.marker_at(obs_year(f, *hover), f.residuals[*hover][static_cast<std::size_t>(cell.component)], marker_r);
                list.AddCircle(p, 7.0f, im_color(palette::text), 16, 1.8f);
                plot.end_data();
            }
        }
        list.PopClipRect();
        if (hover) {
            ImGui::BeginTooltip();
            for (const std::string& line : describe_observation(f, *hover)) ImGui::TextUnformatted(line.c_str());
            ImGui::EndTooltip();
        }
    }

private:
    bool show_set_aside_ = true;
    bool use_cache_ = true;  // false once a texture could not be made: draw the points every frame
    std::vector<PlotImageCache> caches_;

    static std::uint64_t cell_key(const void* fit, const ResidualCell& cell, const PlotGeometry& g, bool set_aside) {
        // FNV-1a over what the picture depends on.
        std::uint64_t h = 1469598103934665603ull;
        auto mix = [&](const void* p, std::size_t n) {
            for (std::size_t k = 0; k < n; ++k) h = (h ^ static_cast<const unsigned char*>(p)[k]) * 1099511628211ull;
        };
        const double v[] = {cell.x.lo, cell.x.hi, cell.y.lo, cell.y.hi, g.lo.x, g.lo.y, g.hi.x, g.hi.y};
        mix(&fit, sizeof fit);
        mix(v, sizeof v);
        mix(&cell.planet, sizeof cell.planet);
        mix(&cell.component, sizeof cell.component);
        mix(&set_aside, sizeof set_aside);
        return h;
    }

    // The cell's observations; opaque for the cached image (it is blended once more when drawn).
    void draw_points(Plot& plot, const KnownFit& f, const ResidualCell& cell, bool opaque) const {
        const ModelSetup& s = f.setup;
        const std::size_t comp = static_cast<std::size_t>(cell.component);
        plot.begin_data();
        plot.begin_dense();
        if (show_set_aside_)
            for (std::size_t k = 0; k < s.obs.size(); ++k)
                if (s.obs[k].planet == cell.planet && s.obs[k].rejected)
                    plot.point(obs_year(f, k), f.residuals[k][comp], Marker::cross, marker_r + 0.6f, im_color(palette::set_aside, opaque ? 255 : 230), true);
        // Bigger eras first, so the few points of a small era stay visible on top.
        std::vector<std::size_t> eras(s.eras.size()), counts(s.eras.size(), 0);
        for (const FitObservation& o : s.obs) ++counts[o.era];
        for (std::size_t e = 0; e < eras.size(); ++e) eras[e] = e;
        std::sort(eras.begin(), eras.end(), [&](std::size_t x, std::size_t y) { return counts[x] > counts[y]; });
        for (std::size_t e : eras)
            for (std::size_t k = 0; k < s.obs.size(); ++k)
                if (s.obs[k].planet == cell.planet && !s.obs[k].rejected && s.obs[k].era == e)
                    plot.point(obs_year(f, k), f.residuals[k][comp], era_marker(e), marker_r, im_color(era_colour(e), opaque ? 255 : 215), true);
        plot.end_dense();
        plot.end_data();
    }
};

}  // namespace

std::unique_ptr<Panel> make_residuals_panel() { return std::make_unique<ResidualsPanel>(); }

}  // namespace wayward::viewer
