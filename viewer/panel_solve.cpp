// "Solve": the priors of `wayward solve` (distance free, fixed, Gaussian or from the spacing rule, circular,
// coplanar, prior sigmas, epoch, starts, samples), Run in a worker thread with progress and Cancel, and the
// local minima it found with their chi2. The canvas shows the sky around the selected minimum's prediction
// (its track; for the best minimum also the 1-sigma ellipse and the circle holding 90% of the covariance
// samples) above a chart of the minima (chi2 against semi-major axis; click one to select it). A solution.toml
// already in the folder is loaded at start. Every number is sim's (solve, predict_position, load_solution).
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>

#include "sim/base/units.hpp"
#include "sim/predict/near_star.hpp"
#include "viewer/analysis.hpp"
#include "viewer/calendar.hpp"
#include "viewer/draw_util.hpp"
#include "viewer/palette.hpp"
#include "viewer/panels.hpp"
#include "viewer/plot_widgets.hpp"
#include "viewer/progress_widgets.hpp"
#include "viewer/sky_chart.hpp"

namespace wayward::viewer {

namespace {

// Dimmed text wrapped at spaces only: ImGui's own wrapping also breaks after '.', which splits numbers ("0." /
// "100") and paths; here a word, a number or a path stays whole on its line.
void text_dim_wrapped_at_spaces(const std::string& text) {
    const float width = ImGui::GetContentRegionAvail().x;
    std::string line, word;
    auto flush = [&] {
        if (!line.empty()) ImGui::TextDisabled("%s", line.c_str());
        line.clear();
    };
    std::size_t i = 0;
    while (i <= text.size()) {
        const std::size_t sp = std::min(text.find(' ', i), text.size());
        word = text.substr(i, sp - i);
        const std::string candidate = line.empty() ? word : line + " " + word;
        if (!line.empty() && ImGui::CalcTextSize(candidate.c_str()).x > width) {
            flush();
            line = word;
        } else {
            line = candidate;
        }
        i = sp + 1;
    }
    flush();
}

const char* distance_names[] = {"free", "fixed", "Gaussian", "spacing rule"};

std::string fmt(const char* f, double v) {
    char buf[96];
    std::snprintf(buf, sizeof buf, f, v);
    return buf;
}

// The chart's region of the canvas and the minima chart's, split 62 / 38.
sf::FloatRect sky_part(const sf::FloatRect& c, float header) {
    return {c.left, c.top + header, c.width, (c.height - header) * 0.62f};
}
sf::FloatRect minima_part(const sf::FloatRect& c, float header) {
    const float top = c.top + header + (c.height - header) * 0.62f;
    return {c.left, top, c.width, c.top + c.height - top};
}

class SolvePanel final : public Panel {
public:
    const char* name() const override { return "solve"; }
    const char* title() const override { return "Solve"; }
    void reset_view(ViewerControls&) override {}

    void sidebar(ViewerControls& c, ViewerModel& m) override {
        if (m.mode != ViewerMode::trainee) {
            ImGui::PushTextWrapPos(0.0f);
            ImGui::TextDisabled("This panel works on an exercise folder: make one with `wayward new SCENARIO --out DIR` and open DIR.");
            ImGui::PopTextWrapPos();
            return;
        }
        Analysis& a = *m.analysis;
        const bool running = a.solve_job.running();
        priors_form(a, m, running);
        run_controls(a, running);
        solution_section(c, m, a);
    }

    // The solver's priors (disabled while it runs) and the `wayward solve` command they amount to.
    void priors_form(Analysis& a, const ViewerModel& m, bool running) {
        SolveForm& f = a.form;
        ImGui::BeginDisabled(running);
        ImGui::SetNextItemWidth(-110.0f);
        ImGui::Combo("distance", &f.distance, distance_names, 4);
        const double rule = spacing_rule_next(a.exercise().brief);
        if (f.distance == SolveForm::fixed) {
            ImGui::SetNextItemWidth(-110.0f);
            ImGui::InputDouble("a (au)", &f.fixed_au, 1.0, 5.0, "%.2f");
        } else if (f.distance == SolveForm::gauss) {
            ImGui::SetNextItemWidth(-110.0f);
            ImGui::InputDouble("mean a (au)", &f.gauss_au, 1.0, 5.0, "%.2f");
            ImGui::SetNextItemWidth(-110.0f);
            ImGui::InputDouble("\u03c3 a (au)", &f.gauss_sigma_au, 0.5, 2.0, "%.2f");
        } else if (f.distance == SolveForm::spacing) {
            ImGui::SetNextItemWidth(-110.0f);
            ImGui::InputDouble("\u03c3 fraction", &f.spacing_fraction, 0.01, 0.05, "%.3f");
            if (rule > 0) ImGui::TextDisabled("the spacing rule's next distance: %.2f au", rule);
        }
        ImGui::Checkbox("circular", &f.circular);
        ImGui::SameLine();
        ImGui::Checkbox("coplanar", &f.coplanar);
        if (!f.circular) {
            ImGui::SetNextItemWidth(-110.0f);
            ImGui::InputDouble("\u03c3 e (prior)", &f.ecc_sigma, 0.01, 0.05, "%.3f");
        }
        if (!f.coplanar) {
            ImGui::SetNextItemWidth(-110.0f);
            ImGui::InputDouble("\u03c3 tilt (deg)", &f.tilt_sigma_deg, 0.5, 1.0, "%.2f");
        }
        ImGui::SetNextItemWidth(-110.0f);
        ImGui::InputDouble("epoch", &f.epoch_year, 1.0, 10.0, "%.2f");
        ImGui::SetNextItemWidth(-110.0f);
        ImGui::InputInt("starts", &f.starts);
        ImGui::SetNextItemWidth(-110.0f);
        ImGui::InputInt("samples", &f.samples, 50, 100);
        f.starts = std::clamp(f.starts, 1, 32);
        f.samples = std::clamp(f.samples, 10, 100000);
        ImGui::EndDisabled();
        text_dim_wrapped_at_spaces("The same solve from the command line: " + solve_command(f, a.exercise().dir, m.search_epoch_year()));
    }

    // Run or cancel, the run's progress, and why a run or solution.toml was refused.
    void run_controls(Analysis& a, bool running) {
        if (!running) {
            ImGui::BeginDisabled(a.fit_job.running());
            if (ImGui::Button("Run the solver", ImVec2(140, 0))) a.start_solve();
            ImGui::EndDisabled();
        } else {
            const auto [stage, fraction] = a.solve_job.progress();
            ImGui::BeginDisabled(a.solve_job.cancel_requested());
            if (ImGui::Button(a.solve_job.cancel_requested() ? "Cancelling\u2026" : "Cancel", ImVec2(140, 0))) a.solve_job.cancel();
            ImGui::EndDisabled();
            progress_bar(fraction, stage.empty() ? "starting" : stage);
        }
        ImGui::PushTextWrapPos(0.0f);
        if (!a.form_error.empty()) ImGui::TextColored(palette::to_imgui(palette::unobservable), "%s", a.form_error.c_str());
        if (!a.solve_note.empty()) ImGui::TextDisabled("%s", a.solve_note.c_str());
        if (!a.solution_file_problem.empty())
            ImGui::TextColored(palette::to_imgui(palette::unobservable), "solution.toml not used: %s", a.solution_file_problem.c_str());
        ImGui::PopTextWrapPos();
    }

    // The solution: where it came from, saving it, the local minima and the selected one's details.
    void solution_section(ViewerControls& c, const ViewerModel& m, Analysis& a) {
        if (!a.solution) return;
        const Solution& s = *a.solution;
        ImGui::Separator();
        ImGui::TextUnformatted(a.source == SolutionSource::file ? "Solution from solution.toml" : "Solution from this run");
        text_dim_wrapped_at_spaces(s.priors);
        if (a.source == SolutionSource::run) {
            if (a.solution_saved) {
                ImGui::TextDisabled("saved to solution.toml");
            } else if (ImGui::Button("Save as solution.toml")) {
                std::error_code ec;
                if (std::filesystem::exists(a.solution_path(), ec)) ImGui::OpenPopup("Replace solution.toml?");
                else a.save_solution(&save_error_);
            }
            if (ImGui::BeginPopupModal("Replace solution.toml?", nullptr, ImGuiWindowFlags_AlwaysAutoResize)) {
                ImGui::Text("%s exists. Replace it with this run's solution?", a.solution_path().c_str());
                if (ImGui::Button("Replace")) {
                    a.save_solution(&save_error_);
                    ImGui::CloseCurrentPopup();
                }
                ImGui::SameLine();
                if (ImGui::Button("Keep the file")) ImGui::CloseCurrentPopup();
                ImGui::EndPopup();
            }
            if (!save_error_.empty()) ImGui::TextColored(palette::to_imgui(palette::unobservable), "%s", save_error_.c_str());
        }

        ImGui::TextUnformatted("Local minima (best first)");
        if (ImGui::BeginTable("minima", 5, ImGuiTableFlags_RowBg | ImGuiTableFlags_SizingStretchProp)) {
            ImGui::TableSetupColumn("#");
            ImGui::TableSetupColumn("a (au)");
            ImGui::TableSetupColumn("mass");
            ImGui::TableSetupColumn("e");
            ImGui::TableSetupColumn("\u03c7\u00b2");
            ImGui::TableHeadersRow();
            for (std::size_t k = 0; k < s.minima.size(); ++k) {
                const Minimum& mn = s.minima[k];
                ImGui::TableNextRow();
                ImGui::TableNextColumn();
                const bool selected = static_cast<std::size_t>(c.selected_minimum) == k;
                if (ImGui::Selectable((std::to_string(k + 1) + "##min").c_str(), selected, ImGuiSelectableFlags_SpanAllColumns))
                    c.selected_minimum = static_cast<int>(k);
                ImGui::TableNextColumn();
                ImGui::Text("%.2f", mn.orbit.semi_major_axis);
                ImGui::TableNextColumn();
                ImGui::Text("%.3g", mn.orbit.mass);
                ImGui::TableNextColumn();
                ImGui::Text("%.3f", std::hypot(mn.orbit.k, mn.orbit.h));
                ImGui::TableNextColumn();
                ImGui::Text("%.1f%s", mn.chi2, mn.converged ? "" : " (nc)");
            }
            ImGui::EndTable();
        }
        ImGui::TextDisabled("(nc): did not converge");
        selected_details(c, m, a, s);
    }

    void on_mouse(const sf::Event& e, const sf::FloatRect&, ViewerControls& c, const ViewerModel&) override {
        if (e.type != sf::Event::MouseButtonPressed || e.mouseButton.button != sf::Mouse::Left) return;
        const ImVec2 at(static_cast<float>(e.mouseButton.x), static_cast<float>(e.mouseButton.y));
        if (const auto k = nearest_point(minima_points_, at, 14.0f)) c.selected_minimum = static_cast<int>(*k);
    }

    void draw(sf::RenderTarget& target, ImDrawList& list, const sf::FloatRect& canvas, const ViewerControls& c, const ViewerModel& m,
              const DrawContext& ctx) override {
        minima_points_.clear();
        const ImVec2 lo(canvas.left, canvas.top), hi(canvas.left + canvas.width, canvas.top + canvas.height);
        const float ts = ctx.text_size, header = 64.0f;
        if (m.mode != ViewerMode::trainee) {
            draw_exercise_needed(list, ctx.fonts, ts, canvas, "Solve: the hidden body from the observations",
                                 "The solver works on an exercise's observations. Make one with `wayward new scenarios/default.toml --out DIR` "
                                 "and open DIR in the viewer.");
            return;
        }
        const Analysis& a = *m.analysis;
        bool exact = false;
        const Prediction* p = shown_prediction(m, c, &exact);
        const sf::FloatRect sky = sky_part(canvas, header);
        if (p) {
            // Show the 90% circle (or the search field a few times over) around the prediction.
            const double reach = std::max({exact ? p->radius90_arcsec * arcsec * 1.25 : 0.0, m.field_radius() * 3.0,
                                           exact ? p->semi_major_arcsec * arcsec * 1.6 : 0.0});
            // The sky at the prediction's epoch: the planets and the star's region where they are then.
            SkyLayers layers;
            layers.tracks = false;
            layers.solution_track_years = 3.0;
            ViewerControls at = c;
            at.time_days = std::clamp(m.days_at_year(p->epoch_year), m.t_begin(), m.t_end());
            chart_.draw(target, list, sky, sky_view_around(sky, p->lon, p->lat, reach), at, m, ctx, layers);
        }
        list.PushClipRect(lo, hi, true);
        list.AddLine(ImVec2(sky.left, sky.top + sky.height), ImVec2(sky.left + sky.width, sky.top + sky.height), im_color(palette::grid_strong));
        std::string sub;
        if (a.solution) {
            const Solution& s = *a.solution;
            sub = s.minima.size() == 1 ? "1 local minimum" : std::to_string(s.minima.size()) + " local minima";
            sub += "; prediction for " + format_decimal_year(s.prediction.epoch_year, 2) + " (" + (a.source == SolutionSource::file ? "solution.toml" : "this run") + ")";
        }
        title_block(list, canvas, ctx, sub);
        if (a.solve_job.running()) {
            const auto [stage, fraction] = a.solve_job.progress();
            draw_card(list, ctx.fonts, ts, a.solution ? sky : canvas, palette::sky_blue, "Solving",
                      (stage.empty() ? std::string("starting") : stage) + (fraction >= 0 ? fmt("  (%.0f%%)", 100.0 * fraction) : ""), fraction,
                      ImGui::GetTime());
        } else if (!a.solution) {
            draw_card(list, ctx.fonts, ts, canvas, palette::text_dim, "No solution yet",
                      "Set the priors in the sidebar and press Run the solver. (A solution.toml written by `wayward solve DIR` "
                      "is loaded when the folder opens.)");
        } else if (!p) {
            const std::size_t k = static_cast<std::size_t>(std::max(0, c.selected_minimum));
            draw_card(list, ctx.fonts, ts, sky, palette::text_dim, "Minimum " + std::to_string(k + 1) + ": no track",
                      a.minimum_has_orbit(k) ? (a.minimum_error.empty() ? "predicting its track\u2026" : a.minimum_error)
                                             : "solution.toml keeps only a, mean longitude, mass, e and \u03c7\u00b2 of the other minima, "
                                               "not their full orbits: run the solver here to see their tracks.");
        }
        if (p) sky_legend(list, sky, c, ctx, *p, exact);
        if (a.solution) draw_minima(list, minima_part(canvas, header), c, *a.solution, ctx);
        list.PopClipRect();
    }

private:
    SkyChart chart_;
    std::vector<ImVec2> minima_points_;
    std::string save_error_;

    void title_block(ImDrawList& list, const sf::FloatRect& canvas, const DrawContext& ctx, const std::string& sub) {
        draw_panel_title(list, ctx.fonts, ctx.text_size, canvas, "Solve: the hidden body from the observations", sub);
    }

    void sky_legend(ImDrawList& list, const sf::FloatRect& sky, const ViewerControls& c, const DrawContext& ctx, const Prediction& p,
                    bool exact) {
        const float ts = ctx.text_size * 0.85f, pad = 12.0f;
        std::vector<std::string> lines;
        lines.push_back((exact ? std::string("best minimum") : "minimum " + std::to_string(c.selected_minimum + 1)) + " at " +
                        format_decimal_year(p.epoch_year, 2) + ": \u03bb " + format_deg(p.lon, 3) + ", \u03b2 " + format_deg(p.lat, 3));
        if (exact) {
            char buf[160];
            std::snprintf(buf, sizeof buf, "1\u03c3 ellipse %s \u00d7 %s; 90%% of samples within %s", format_angle_arcmin(p.semi_major_arcsec / 60).c_str(),
                          format_angle_arcmin(p.semi_minor_arcsec / 60).c_str(), format_angle_arcmin(p.radius90_arcsec / 60).c_str());
            lines.emplace_back(buf);
        } else {
            lines.emplace_back("track only (the planets at their known-fit states); no ellipse for this minimum");
        }
        float w = ts * (exact && !p.sample_lon.empty() ? 26.0f : 20.0f);  // room for the key's second row
        for (const auto& l : lines) w = std::max(w, ctx.fonts.pick(ts)->CalcTextSizeA(ts, 1e9f, 0, l.c_str()).x);
        // Bottom right, clear of the latitude labels on the left edge.
        const float bottom = sky.top + sky.height - pad - ts * 1.5f;  // above the longitude labels
        const std::size_t key_rows = exact ? 2 : 1;  // the symbol key: one row, and one more naming the ellipse and circle
        const ImVec2 a(sky.left + sky.width - pad - w - 10, bottom - ts * 1.35f * static_cast<float>(lines.size() + key_rows) - 4.0f);
        list.AddRectFilled(ImVec2(a.x - 6, a.y - 6), ImVec2(a.x + w + 10, bottom + 2), IM_COL32(10, 13, 22, 215), 6.0f);
        float y = a.y;
        for (const auto& l : lines) {
            draw_text(list, ctx.fonts, ts, ImVec2(a.x, y), im_color(palette::text), l);
            y += ts * 1.35f;
        }
        float x = a.x;
        const float r = ts * 0.3f;
        list.AddCircleFilled(ImVec2(x + r, y + ts * 0.55f), r, im_color(palette::solution));
        x += 2 * r + 6 + draw_text(list, ctx.fonts, ts, ImVec2(x + 2 * r + 6, y), im_color(palette::text), "prediction, track").x + 16;
        list.AddCircle(ImVec2(x + r, y + ts * 0.55f), r + 1, im_color(palette::solution), 16, 1.5f);
        x += 2 * r + 6 + draw_text(list, ctx.fonts, ts, ImVec2(x + 2 * r + 6, y), im_color(palette::text), "search field").x + 16;
        if (c.marker.placed) {
            draw_marker(list, ImVec2(x + r, y + ts * 0.55f), Marker::cross, r + 1, im_color(palette::prediction), true, 2.0f);
            draw_text(list, ctx.fonts, ts, ImVec2(x + 2 * r + 6, y), im_color(palette::text), "yours");
        }
        if (!exact) return;
        // The second row names the two outlines around the prediction: the 1σ ellipse and the 90% circle.
        y += ts * 1.35f;
        x = a.x;
        const ImVec2 ec(x + ts * 0.7f, y + ts * 0.55f);
        list.PathClear();
        for (int k = 0; k < 24; ++k) {
            const float t = 6.2831853f * static_cast<float>(k) / 24.0f;
            list.PathLineTo(ImVec2(ec.x + ts * 0.7f * std::cos(t), ec.y + ts * 0.35f * std::sin(t)));
        }
        list.PathStroke(im_color(palette::solution), ImDrawFlags_Closed, 1.5f);
        x += ts * 1.4f + 6 + draw_text(list, ctx.fonts, ts, ImVec2(x + ts * 1.4f + 6, y), im_color(palette::text), "1\u03c3 ellipse").x + 16;
        list.AddCircle(ImVec2(x + ts * 0.5f, y + ts * 0.55f), ts * 0.5f, im_color(palette::solution), 24, 1.0f);
        x += ts + 6 + draw_text(list, ctx.fonts, ts, ImVec2(x + ts + 6, y), im_color(palette::text), "90% of samples (circle)").x + 16;
        if (!p.sample_lon.empty()) {
            list.AddCircleFilled(ImVec2(x + 2.0f, y + ts * 0.55f), 1.8f, im_color(palette::solution), 6);
            draw_text(list, ctx.fonts, ts, ImVec2(x + 8.0f, y), im_color(palette::text), "virtual bodies");
        }
    }

    void draw_minima(ImDrawList& list, const sf::FloatRect& area, const ViewerControls& c, const Solution& s, const DrawContext& ctx) {
        if (s.minima.empty()) return;
        double a0 = INFINITY, a1 = 0, c0 = INFINITY, c1 = -INFINITY;
        for (const Minimum& mn : s.minima) {
            a0 = std::min(a0, mn.orbit.semi_major_axis);
            a1 = std::max(a1, mn.orbit.semi_major_axis);
            c0 = std::min(c0, mn.chi2);
            c1 = std::max(c1, mn.chi2);
        }
        PlotAxis x;
        x.log = true;
        x.lo = a0 / 1.35;
        x.hi = a1 * 1.35;
        x.label = "semi-major axis (au)";
        PlotAxis y = padded_axis(c0, c1, 0.18, false, "\u03c7\u00b2 of the minimum");
        const ImVec2 lo(area.left + 8, area.top + 6), hi(area.left + area.width - 8, area.top + area.height - 4);
        Plot plot(list, ctx.fonts, ctx.text_size, lo, hi, x, y, "Local minima: click one to show its track");
        plot.draw_frame();
        plot.begin_data();
        if (s.spacing_rule_au > 0) plot.vline(s.spacing_rule_au, im_color(palette::text_dim, 180), 1.0f, true, "spacing rule");
        for (std::size_t k = 0; k < s.minima.size(); ++k) {
            const Minimum& mn = s.minima[k];
            const bool sel = static_cast<std::size_t>(c.selected_minimum) == k;
            const ImVec2 p = plot.point(mn.orbit.semi_major_axis, mn.chi2, Marker::circle, sel ? 7.0f : 5.5f,
                                        im_color(palette::solution, sel ? 255 : 200), mn.converged);
            if (!mn.converged) list.AddCircle(p, 5.5f, im_color(palette::solution), 16, 1.5f);
            if (sel) list.AddCircle(p, 11.0f, im_color(palette::text), 24, 1.6f);
            minima_points_.push_back(p);
            char buf[96];
            std::snprintf(buf, sizeof buf, "#%zu  %.1f au, \u0394\u03c7\u00b2 %.0f%s", k + 1, mn.orbit.semi_major_axis, mn.chi2 - s.minima.front().chi2,
                          mn.converged ? "" : " (not converged)");
            const float size = ctx.text_size * 0.8f;
            const float w = ctx.fonts.pick(size)->CalcTextSizeA(size, 1e9f, 0, buf).x;
            const bool right = p.x + 14 + w < plot.inner_hi().x - 4;  // else on the left of the point
            draw_text(list, ctx.fonts, size, ImVec2(right ? p.x + 14 : p.x - 14, p.y - size * 0.6f), im_color(palette::text), buf,
                      right ? Align::left : Align::right, true);
        }
        plot.end_data();
    }

    void selected_details(ViewerControls& c, const ViewerModel& m, const Analysis& a, const Solution& s) {
        const auto k = static_cast<std::size_t>(std::max(0, c.selected_minimum));
        if (k >= s.minima.size()) return;
        ImGui::Separator();
        const HiddenOrbit& o = k == 0 ? s.best : s.minima[k].orbit;
        ImGui::Text("Minimum %zu%s", k + 1, k == 0 ? " (best)" : "");
        // Every line wraps at the sidebar's edge: the numbers are too long for a 1280-pixel window's sidebar.
        ImGui::PushTextWrapPos(0.0f);
        if (k == 0) {
            // One quantity group per line: ImGui may break a wrapped line at a decimal point.
            ImGui::Text("a = %.2f \u00b1 %.2f au", o.semi_major_axis, s.distance_sigma_au);
            ImGui::Text("mass = %.3g \u00b1 %.2g (solar masses)", o.mass, s.mass_sigma);
            ImGui::Text("e = %.3f, i = %.2f\u00b0, \u03c7\u00b2/dof = %.3f", std::hypot(o.k, o.h), o.inclination / deg,
                        s.chi2 / static_cast<double>(std::max<std::size_t>(s.dof, 1)));
            const Prediction& p = s.prediction;
            ImGui::Text("at %s: \u03bb %s, \u03b2 %s, %.1f au", format_decimal_year(p.epoch_year, 2).c_str(), format_deg(p.lon, 3).c_str(),
                        format_deg(p.lat, 3).c_str(), p.distance_au);
            ImGui::Text("1\u03c3 ellipse %s \u00d7 %s at PA %.1f\u00b0", format_angle_arcmin(p.semi_major_arcsec / 60).c_str(),
                        format_angle_arcmin(p.semi_minor_arcsec / 60).c_str(), position_angle_deg(p.orientation_deg));
            ImGui::Text("90%% of samples within %s", format_angle_arcmin(p.radius90_arcsec / 60).c_str());
            ImGui::TextDisabled("PA: from north (+\u03b2) through east (+\u03bb)");
            const DetectionTest& d = s.detection;
            if (d.threshold > 0.0)
                ImGui::TextColored(d.detected() ? ImVec4(0.55f, 0.85f, 0.55f, 1.0f) : ImVec4(1.0f, 0.6f, 0.3f, 1.0f),
                                   "%s: the body lowers χ² by %.1f; a detection needs %.1f",
                                   d.detected() ? "Detected" : "NOT detected (the record does not demand a hidden body)",
                                   std::max(0.0, d.delta_chi2), d.threshold);
            if (s.goodness.poor())
                ImGui::TextColored(ImVec4(1.0f, 0.6f, 0.3f, 1.0f),
                                   "Poor fit: with every \u03c3 recorded, \u03c7\u00b2 this high has probability %.2g (a wrong minimum or "
                                   "unmodelled systematics)%s",
                                   s.goodness.p_value, s.covariance_widened ? "; the region is widened by \u03c7\u00b2/dof" : "");
            if (s.shape_screens > 0)
                ImGui::TextDisabled("After a poor fit (\u03c7\u00b2 %.1f) from the circular starts, %d eccentric or tilted orbits were "
                                    "screened and %d more fits started; the best is %s",
                                    s.shape_fallback_chi2, s.shape_screens, s.shape_starts,
                                    s.shape_start_won ? "from one of them" : "still the circular start's");
            if (const std::string near = near_star_caution(near_star(a.exercise().brief, p), p.epoch_year); !near.empty())
                ImGui::TextColored(ImVec4(1.0f, 0.6f, 0.3f, 1.0f), "%s", near.c_str());
        } else {
            ImGui::Text("a = %.2f au, mass = %.3g, e = %.3f", o.semi_major_axis, o.mass, std::hypot(o.k, o.h));
            ImGui::Text("mean longitude %.2f\u00b0, \u03c7\u00b2 %.1f (\u0394 %.1f)", wrap_two_pi(o.mean_longitude) / deg, s.minima[k].chi2,
                        s.minima[k].chi2 - s.minima.front().chi2);
            if (a.minimum_has_orbit(k))
                ImGui::TextDisabled("Its track is predicted with the planets at their known-fit states: the solver keeps each "
                                    "minimum's hidden orbit, not its corrections to the planets. No ellipse for this minimum.");
            else
                ImGui::TextDisabled("solution.toml keeps only a, mean longitude, mass, e and \u03c7\u00b2 of this minimum, not its "
                                    "tilt or perihelion: no track can be drawn. Run the solver here to see it.");
        }
        bool exact = false;
        if (const Prediction* p = shown_prediction(m, c, &exact)) {
            if (ImGui::Button("Use as my prediction")) {
                c.marker.placed = true;
                c.marker.lon = p->lon;
                c.marker.lat = p->lat;
                c.marker.epoch_days = std::clamp(m.days_at_year(p->epoch_year), m.t_begin(), m.t_end());
                if (!(c.marker.radius > 0)) c.marker.radius = m.field_radius();
            }
            ImGui::TextDisabled("(copies \u03bb, \u03b2 and the epoch to your marker)");
        }
        ImGui::PopTextWrapPos();
    }
};

}  // namespace

std::unique_ptr<Panel> make_solve_panel() { return std::make_unique<SolvePanel>(); }

}  // namespace wayward::viewer
