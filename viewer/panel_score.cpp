// "Reveal and score": the deliberate step that opens the sealed answer key. A confirmation dialog comes first;
// sim's open_answer_key checks the key's SHA-256 against the brief, and a changed key is refused with a clear
// message and nothing revealed. After the reveal: the sky at the prediction's epoch around the hidden body's
// true place (from the answer key) with the trainee's and the solver's predictions, their search fields and
// the separations; below, the luck curve (the separation over epochs either side, with the field radius and
// the epoch marked). Separations, hit or miss, the normalised error and the luck curve are sim's
// score_prediction, exactly as `wayward score` computes them.
#include <algorithm>
#include <cmath>
#include <cstdio>

#include "sim/physics/geometry.hpp"
#include "sim/score/luck_intervals.hpp"
#include "sim/base/units.hpp"
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

constexpr const char* confirm_id = "Reveal the answer key?";

std::string arcmin_text(double v) {
    char buf[48];
    std::snprintf(buf, sizeof buf, "%.3f arcmin", v);
    return buf;
}

std::string verdict(const Score& s) {
    char buf[160];
    std::snprintf(buf, sizeof buf, "%s: %.1f\u2032 from the truth, field radius %.0f\u2032", s.hit ? "HIT" : "MISS", s.separation_arcmin,
                  s.field_radius_deg * 60.0);
    return buf;
}

class ScorePanel final : public Panel {
public:
    const char* name() const override { return "score"; }
    const char* title() const override { return "Reveal and score"; }
    void reset_view(ViewerControls&) override {}

    void sidebar(ViewerControls& c, ViewerModel& m) override {
        if (m.mode != ViewerMode::trainee) {
            ImGui::PushTextWrapPos(0.0f);
            ImGui::TextDisabled("Author mode shows the hidden body already. Scoring works on an exercise folder: make one with "
                                "`wayward new SCENARIO --out DIR` and open DIR.");
            ImGui::PopTextWrapPos();
            return;
        }
        Analysis& a = *m.analysis;
        ImGui::PushTextWrapPos(0.0f);
        if (!m.revealed) {
            if (a.reveal_job.running()) {
                progress_bar(-1.0, "opening the answer key");
                ImGui::PopTextWrapPos();
                return;
            }
            ImGui::TextUnformatted("The answer key is sealed.");
            ImGui::TextDisabled("Revealing opens it (its SHA-256 is checked against the brief) and shows the hidden body. "
                                "It cannot be sealed again in this session.");
            ImGui::Spacing();
            ImGui::TextUnformatted("To be scored:");
            ImGui::Bullet();
            if (c.marker.placed)
                ImGui::TextWrapped("yours: \u03bb %s, \u03b2 %s at %s", format_deg(c.marker.lon, 3).c_str(), format_deg(c.marker.lat, 3).c_str(),
                                   format_decimal_year(m.year(c.marker.epoch_days), 2).c_str());
            else
                ImGui::TextWrapped("yours: none yet (click the sky, or use a solver minimum)");
            ImGui::Bullet();
            if (a.solution)
                ImGui::TextWrapped("the solver's: \u03bb %s, \u03b2 %s at %s", format_deg(a.solution->prediction.lon, 3).c_str(),
                                   format_deg(a.solution->prediction.lat, 3).c_str(), format_decimal_year(a.solution->prediction.epoch_year, 2).c_str());
            else
                ImGui::TextWrapped("the solver's: no solution yet");
            ImGui::Spacing();
            if (ImGui::Button("Reveal the answer key\u2026", ImVec2(-1, 0))) ImGui::OpenPopup(confirm_id);
            if (!a.reveal_error.empty()) {
                ImGui::TextColored(palette::to_imgui(palette::unobservable), "Answer key refused; nothing was revealed.");
                ImGui::TextUnformatted(a.reveal_error.c_str());
            }
            confirm_dialog(m, a);
            ImGui::PopTextWrapPos();
            return;
        }
        const RevealedTruth& t = *m.revealed;
        ImGui::TextColored(palette::to_imgui(palette::bluish_green), "Answer key verified (SHA-256 matches the brief)");
        ImGui::Text("Hidden body %s (true, from the key):", t.key.hidden_name.c_str());
        ImGui::Text("a = %.2f au, e = %.3f, mass %.3g", t.a_au, t.e, t.mass);
        if (a.score_job.running()) progress_bar(-1.0, "scoring");
        if (a.scores) {
            const ScoreSet& s = *a.scores;
            score_block("Your prediction", palette::prediction, s.trainee ? &*s.trainee : nullptr, s.trainee_error, c, m,
                        c.marker.placed ? "" : "none placed: click the sky panel");
            score_block("The solver's prediction", palette::solution, s.solver ? &*s.solver : nullptr, s.solver_error, c, m,
                        a.solution ? "" : "no solution: run the solver");
        }
        ImGui::PopTextWrapPos();
    }

    void on_mouse(const sf::Event&, const sf::FloatRect&, ViewerControls&, const ViewerModel&) override {}

    void draw(sf::RenderTarget& target, ImDrawList& list, const sf::FloatRect& canvas, const ViewerControls& c, const ViewerModel& m,
              const DrawContext& ctx) override {
        const ImVec2 lo(canvas.left, canvas.top), hi(canvas.left + canvas.width, canvas.top + canvas.height);
        const float ts = ctx.text_size, header = 64.0f;
        if (m.mode != ViewerMode::trainee) {
            draw_exercise_needed(list, ctx.fonts, ts, canvas, "Reveal and score",
                                 "Author mode already shows the hidden body. To rehearse a prediction and score it, make an exercise with "
                                 "`wayward new scenarios/default.toml --out DIR` and open DIR in the viewer.");
            return;
        }
        const Analysis& a = *m.analysis;
        const ScoreSet* scores = a.scores ? &*a.scores : nullptr;
        const ScoredPrediction* first = scores ? (scores->trainee ? &*scores->trainee : scores->solver ? &*scores->solver : nullptr) : nullptr;
        const sf::FloatRect sky(canvas.left, canvas.top + header, canvas.width, (canvas.height - header) * 0.56f);
        const sf::FloatRect luck(canvas.left, sky.top + sky.height, canvas.width, canvas.top + canvas.height - sky.top - sky.height);
        if (m.revealed && first) {
            double reach = m.field_radius() * 3.0;
            for (const ScoredPrediction* sp : {scores->trainee ? &*scores->trainee : nullptr, scores->solver ? &*scores->solver : nullptr})
                if (sp) reach = std::max(reach, sp->score.separation_arcmin * arcmin * 1.35);
            ViewerControls at = c;
            at.time_days = std::clamp(m.days_at_year(first->score.epoch_year), m.t_begin(), m.t_end());
            at.marker.placed = false;      // drawn below with its field circle
            at.show_solution = false;      // drawn below, the solver's own prediction
            SkyLayers layers;
            layers.tracks = false;
            chart_.draw(target, list, sky, sky_view_around(sky, first->score.true_lon, first->score.true_lat, std::min(reach, pi / 2)), at, m,
                        ctx, layers);
        }
        // Sealed: the predictions that will be scored, on the sky at their epoch (no hidden body anywhere).
        const bool sealed_chart = !m.revealed && !a.reveal_job.running() && a.reveal_error.empty() && (c.marker.placed || a.solution);
        if (sealed_chart) {
            ViewerControls at = c;
            at.selected_minimum = 0;  // the solver's own prediction is the one scored
            double lon, lat, year, reach = m.field_radius() * 3.0;
            if (c.marker.placed) {
                lon = c.marker.lon, lat = c.marker.lat, year = m.year(c.marker.epoch_days);
                reach = std::max(reach, c.marker.radius * 1.6);
            } else {
                const Prediction& p = a.solution->prediction;
                lon = p.lon, lat = p.lat, year = p.epoch_year;
            }
            if (a.solution) {
                const Prediction& p = a.solution->prediction;
                reach = std::max({reach, p.radius90_arcsec * arcsec * 1.15, separation(lon, lat, p.lon, p.lat) * 1.4});
            }
            at.time_days = std::clamp(m.days_at_year(year), m.t_begin(), m.t_end());
            SkyLayers layers;
            layers.tracks = false;
            layers.solution_track_years = 2.0;
            chart_.draw(target, list, sky, sky_view_around(sky, lon, lat, std::min(reach, pi / 2)), at, m, ctx, layers);
        }
        list.PushClipRect(lo, hi, true);
        title_block(list, canvas, ctx, m.revealed ? "the answer key is open: the hidden body " + m.revealed->key.hidden_name + " is shown"
                                                  : "the answer key is sealed");
        if (!m.revealed) {
            if (a.reveal_job.running())
                draw_card(list, ctx.fonts, ts, canvas, palette::sky_blue, "Opening the answer key",
                          "The SHA-256 matched the brief; integrating the true system.", -1.0, ImGui::GetTime());
            else if (!a.reveal_error.empty())
                draw_card(list, ctx.fonts, ts, canvas, palette::unobservable, "Answer key refused: nothing revealed", a.reveal_error);
            else if (sealed_chart)
                draw_card(list, ctx.fonts, ts, luck, palette::text_dim, "The answer key is sealed",
                          "Above: the predictions that will be scored, at their epoch. Reveal the key from the sidebar when they "
                          "are final; you will be asked to confirm. Once open, the hidden body is shown in every panel.");
            else
                draw_card(list, ctx.fonts, ts, canvas, palette::text_dim, "The answer key is sealed",
                          "When your prediction is placed (sky panel) or the solver has one (Solve panel), reveal the key from the "
                          "sidebar. You will be asked to confirm: once open, the hidden body is shown in every panel.");
            list.PopClipRect();
            return;
        }
        if (!scores) {
            draw_card(list, ctx.fonts, ts, canvas, palette::sky_blue, a.score_job.running() ? "Scoring" : "Nothing to score",
                      a.score_job.running() ? "sim is comparing the predictions with the true place." : "Place a prediction on the sky panel or run the solver.",
                      a.score_job.running() ? -1.0 : NAN, ImGui::GetTime());
            list.PopClipRect();
            return;
        }
        if (first) draw_marks(list, c, m, *scores, *first, ctx);
        if (first) summary(list, sky, *scores, ctx);
        draw_luck(list, luck, *scores, ctx);
        list.PopClipRect();
    }

private:
    SkyChart chart_;

    void confirm_dialog(ViewerModel& m, Analysis& a) {
        const ImVec2 centre = ImGui::GetMainViewport()->GetCenter();
        ImGui::SetNextWindowPos(centre, ImGuiCond_Appearing, ImVec2(0.5f, 0.5f));
        ImGui::SetNextWindowSize(ImVec2(460, 0));
        if (!ImGui::BeginPopupModal(confirm_id, nullptr, ImGuiWindowFlags_NoResize | ImGuiWindowFlags_NoMove)) return;
        ImGui::PushTextWrapPos(0.0f);
        ImGui::TextUnformatted("This opens the sealed answer key and shows the hidden body in every panel, with its true orbit "
                               "and its true place beside the predictions.");
        ImGui::TextDisabled("It cannot be sealed again in this session. Reveal now?");
        ImGui::PopTextWrapPos();
        ImGui::Spacing();
        if (ImGui::Button("Reveal and score", ImVec2(160, 0))) {
            if (!a.request_reveal(m)) std::fprintf(stderr, "wayward-view: %s\n", a.reveal_error.c_str());
            ImGui::CloseCurrentPopup();
        }
        ImGui::SameLine();
        if (ImGui::Button("Not yet", ImVec2(120, 0))) ImGui::CloseCurrentPopup();
        ImGui::EndPopup();
    }

    void score_block(const char* heading, sf::Color colour, const ScoredPrediction* sp, const std::string& error, const ViewerControls& c,
                     const ViewerModel& m, const char* absent) {
        ImGui::Separator();
        ImGui::TextColored(palette::to_imgui(colour), "%s", heading);
        if (!sp) {
            if (!error.empty()) ImGui::TextColored(palette::to_imgui(palette::unobservable), "%s", error.c_str());
            else ImGui::TextDisabled("%s", absent);
            return;
        }
        const Score& s = sp->score;
        ImGui::Text("at %s: \u03bb %s, \u03b2 %s", format_decimal_year(s.epoch_year, 2).c_str(), format_deg(s.predicted_lon, 3).c_str(),
                    format_deg(s.predicted_lat, 3).c_str());
        ImGui::Text("truth:  \u03bb %s, \u03b2 %s", format_deg(s.true_lon, 3).c_str(), format_deg(s.true_lat, 3).c_str());
        ImGui::Text("Separation: %s", arcmin_text(s.separation_arcmin).c_str());
        ImGui::TextColored(palette::to_imgui(s.hit ? palette::bluish_green : palette::text_dim), "%s against the field radius (%.0f\u2032)",
                           s.hit ? "HIT" : "MISS", s.field_radius_deg * 60.0);
        if (s.mahalanobis) ImGui::Text("normalised error %.2f\u03c3", *s.mahalanobis);
        if (s.map_truth_rank)  // the virtual bodies' map, where it is not linear (sim's score)
            ImGui::TextDisabled("truth's rank in the map %.0f%%; field covered %.0f%%", 100.0 * *s.map_truth_rank,
                                100.0 * s.map_field_probability.value_or(0.0));
        if (sp->who == "your prediction" && c.marker.placed && c.marker.radius > 0)
            ImGui::TextDisabled("%s your own circle (r = %s)", s.separation_arcmin * arcmin <= c.marker.radius ? "inside" : "outside",
                                format_deg(c.marker.radius, 2).c_str());
        ImGui::TextDisabled("luck: inside the field %.1f%% of \u00b160 yr (%s); closest %.1f\u2032 in %.2f", 100.0 * s.luck_fraction_inside,
                            s.luck_from_track ? "predicted track" : "fixed point", s.closest_arcmin, s.closest_year);
        (void)m;
    }

    void title_block(ImDrawList& list, const sf::FloatRect& canvas, const DrawContext& ctx, const std::string& sub) {
        draw_panel_title(list, ctx.fonts, ctx.text_size, canvas, "Reveal and score", sub);
    }

    // The predictions, their search fields and separations over the chart; the true track around the epoch.
    void draw_marks(ImDrawList& list, const ViewerControls& c, const ViewerModel& m, const ScoreSet& s, const ScoredPrediction& first,
                    const DrawContext& ctx) {
        const SkyMap& map = chart_.map();
        const double field = m.field_radius();
        // The hidden body's true track, 18 months either side of the epoch (the model's samples of it).
        const std::size_t n = m.body_count(), hidden = n - 1;
        const double t = m.days_at_year(first.score.epoch_year), span = 1.5 * julian_year_days;
        std::vector<TrackPoint> truth;
        for (std::size_t k = m.nearest_sample(std::max(m.t_begin(), t - span)); k <= m.nearest_sample(std::min(m.t_end(), t + span)); ++k)
            truth.push_back({m.year(m.sample_times[k]), m.sample_lon[k * n + hidden], m.sample_lat[k * n + hidden]});
        chart_.draw_track(list, truth, im_color(palette::hidden, 150), 1.6f);
        auto one = [&](const ScoredPrediction& sp, sf::Color colour, bool solver) {
            const Score& sc = sp.score;
            const ImU32 col = im_color(colour);
            if (solver && sp.prediction.radius90_arcsec > 0) chart_.draw_ellipse(list, sp.prediction, im_color(colour, 50), col);
            if (solver) {
                const double e = sp.prediction.epoch_year;
                chart_.draw_track(list, shown_track(m, c, sp.prediction), im_color(colour, 200), 1.4f, false, e - 1.5, e + 1.5);
            }
            chart_.fill_circle(list, sc.predicted_lon, sc.predicted_lat, field, im_color(colour, 26), im_color(colour, 230), 1.6f);
            if (!solver && c.marker.placed && c.marker.radius > 0 && std::abs(c.marker.radius - field) > 1e-9)
                chart_.fill_circle(list, sc.predicted_lon, sc.predicted_lat, c.marker.radius, 0, im_color(colour, 130), 1.0f);
            const ImVec2 p = map.to_screen(sc.predicted_lon, sc.predicted_lat), q = map.to_screen(sc.true_lon, sc.true_lat);
            // The separation as a dashed segment (a straight line on the chart, the great circle's length in the label).
            const float len = std::hypot(q.x - p.x, q.y - p.y);
            for (float d = 0; d < len; d += 10.0f) {
                const float e = std::min(len, d + 6.0f);
                list.AddLine(ImVec2(p.x + (q.x - p.x) * d / len, p.y + (q.y - p.y) * d / len),
                             ImVec2(p.x + (q.x - p.x) * e / len, p.y + (q.y - p.y) * e / len), im_color(colour, 220), 1.5f);
            }
            if (solver) list.AddCircleFilled(p, 4.5f, col, 16);
            else chart_.draw_cross(list, sc.predicted_lon, sc.predicted_lat, col, 10.0f);
            chart_.labels().block(p, 8.0f);
            char buf[64];
            std::snprintf(buf, sizeof buf, "%.1f\u2032", sc.separation_arcmin);
            draw_text(list, ctx.fonts, ctx.text_size * 0.85f, ImVec2((p.x + q.x) * 0.5f + 6.0f, (p.y + q.y) * 0.5f - ctx.text_size * 0.5f), col,
                      buf, Align::left, true);
            draw_label(list, ctx.fonts, ctx.text_size * 0.85f, chart_.labels(), p, 8.0f, im_color(palette::text),
                       solver ? "solver" : "you");
        };
        if (s.solver) one(*s.solver, palette::solution, true);
        if (s.trainee) one(*s.trainee, palette::prediction, false);
        // The truth at the first prediction's epoch (sim's score), on top.
        const ImVec2 q = map.to_screen(first.score.true_lon, first.score.true_lat);
        list.AddCircle(q, 11.0f, im_color(palette::hidden), 24, 2.2f);
        list.AddCircleFilled(q, 5.5f, im_color(palette::hidden), 20);
        chart_.labels().block(q, 12.0f);
        draw_label(list, ctx.fonts, ctx.text_size * 0.9f, chart_.labels(), q, 12.0f, im_color(palette::hidden),
                   "true place, " + format_decimal_year(first.score.epoch_year, 2));
    }

    void summary(ImDrawList& list, const sf::FloatRect& sky, const ScoreSet& s, const DrawContext& ctx) {
        const float ts = ctx.text_size * 0.9f, pad = 12.0f;
        struct Line {
            sf::Color colour;
            std::string text;
        };
        std::vector<Line> lines;
        if (s.trainee) lines.push_back({palette::prediction, "you: " + verdict(s.trainee->score)});
        if (s.solver) {
            std::string t = "solver: " + verdict(s.solver->score);
            if (s.solver->score.mahalanobis) {
                char buf[48];
                std::snprintf(buf, sizeof buf, ", %.2f\u03c3", *s.solver->score.mahalanobis);
                t += buf;
            }
            lines.push_back({palette::solution, t});
        }
        float w = 0;
        for (const Line& l : lines) w = std::max(w, ctx.fonts.pick(ts)->CalcTextSizeA(ts, 1e9f, 0, l.text.c_str()).x);
        const ImVec2 a(sky.left + pad, sky.top + pad);
        list.AddRectFilled(ImVec2(a.x - 6, a.y - 6), ImVec2(a.x + w + 30, a.y + ts * 1.4f * static_cast<float>(lines.size()) + 2), IM_COL32(10, 13, 22, 215),
                           6.0f);
        float y = a.y;
        for (const Line& l : lines) {
            list.AddCircleFilled(ImVec2(a.x + 5, y + ts * 0.55f), 4.5f, im_color(l.colour), 16);
            draw_text(list, ctx.fonts, ts, ImVec2(a.x + 16, y), im_color(palette::text), l.text);
            y += ts * 1.4f;
        }
    }

    void draw_luck(ImDrawList& list, const sf::FloatRect& area, const ScoreSet& s, const DrawContext& ctx) {
        double x0 = INFINITY, x1 = -INFINITY, y0 = INFINITY, y1 = 0, field = 0, epoch = 0;
        for (const ScoredPrediction* sp : {s.trainee ? &*s.trainee : nullptr, s.solver ? &*s.solver : nullptr}) {
            if (!sp) continue;
            field = sp->score.field_radius_deg * 60.0;
            epoch = sp->score.epoch_year;
            for (const LuckPoint& l : sp->score.luck) {
                x0 = std::min(x0, l.year);
                x1 = std::max(x1, l.year);
                y0 = std::min(y0, std::max(l.separation_arcmin, 1e-3));
                y1 = std::max(y1, l.separation_arcmin);
            }
        }
        if (!(x1 > x0)) return;
        PlotAxis x = padded_axis(x0, x1, 0.0, false, "year");
        PlotAxis y;
        y.log = true;
        y.lo = std::pow(10.0, std::floor(std::log10(std::min(y0, field) * 0.8)));
        y.hi = std::pow(10.0, std::ceil(std::log10(std::max(y1, field) * 1.25)));
        y.label = "separation from the true place (arcmin)";
        Plot plot(list, ctx.fonts, ctx.text_size, ImVec2(area.left + 8, area.top + 8), ImVec2(area.left + area.width - 8, area.top + area.height - 4),
                  x, y, "Luck of the epoch: the same prediction judged at other epochs");
        plot.draw_frame();
        plot.begin_data();
        std::vector<LegendEntry> legend;
        for (const ScoredPrediction* sp : {s.solver ? &*s.solver : nullptr, s.trainee ? &*s.trainee : nullptr}) {
            if (!sp) continue;
            const bool solver = sp == (s.solver ? &*s.solver : nullptr);
            const sf::Color col = solver ? palette::solution : palette::prediction;
            std::vector<double> xs, ys;
            for (const LuckPoint& l : sp->score.luck) {
                xs.push_back(l.year);
                ys.push_back(std::max(l.separation_arcmin, 1e-3));
            }
            for (const Interval& in : inside_field_intervals(sp->score)) plot.x_band(in.from, in.to, im_color(col, 40));
            plot.line(xs, ys, im_color(col), 2.0f);
            legend.push_back({std::string(solver ? "solver" : "you") + (sp->score.luck_from_track ? " (its predicted track)" : " (fixed point)"),
                              im_color(col), Marker::circle, true, true});
        }
        plot.hline(field, im_color(palette::bluish_green), 1.6f, true, "field radius " + std::to_string(static_cast<int>(std::lround(field))) + "\u2032");
        plot.vline(epoch, im_color(palette::text_dim), 1.2f, true, "epoch " + format_decimal_year(epoch, 2));
        plot.end_data();
        legend.push_back({"inside the field (shaded)", im_color(palette::text_dim), Marker::square, true, false});
        plot.legend(legend, false, true);
    }
};

}  // namespace

std::unique_ptr<Panel> make_score_panel() { return std::make_unique<ScorePanel>(); }

}  // namespace wayward::viewer
