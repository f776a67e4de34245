// "Telescope search": the nights of `wayward search DIR`, read from DIR/search/ (nights.csv, log.csv,
// candidates.csv, rehearsal.toml). Left, the fields searched on the sky night by night (earlier nights dim, the
// chosen night bright) with the solver's predicted centre and 1-sigma ellipse for that night, and below it the
// probability covered so far. Right, one field visit: the team's chart and the exposure side by side (or blinked),
// the candidates (recorded, not in the chart) ringed. The chart and exposure are rebuilt with sim's own sky model
// (rehearsal_sky_model with the search's seed and telescope, and the visit's exposure key), so they hold the
// stars, chart entries and detection draws the rehearsal compared (with the limit and time as log.csv gives them,
// to 0.001 mag and half a minute); the candidates' places are the rehearsal's own. Nothing here reads the answer key: the
// hidden body is marked only after the reveal, from the revealed truth's ephemeris.
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <map>
#include <optional>

#include <toml++/toml.h>

#include "sim/base/units.hpp"
#include "sim/io/fileio.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/night/rehearsal.hpp"
#include "sim/search/region.hpp"
#include "viewer/analysis.hpp"
#include "viewer/draw_util.hpp"
#include "viewer/palette.hpp"
#include "viewer/panels.hpp"
#include "viewer/progress_widgets.hpp"

namespace wayward::viewer {

namespace {

struct NightRow {
    int night = 0;
    double year = 0.0;
    bool clear = true;
    double dark_hours = 0.0, hours = 0.0, covered = 0.0;
    int fields = 0, revisits = 0;
    std::string why;  // why no field was searched ("" when some were)
};

struct VisitRow {
    int night = 0, field = 0, visit = 0;
    double year = 0.0, lon = 0.0, lat = 0.0, limit = 0.0;  // radians for lon, lat
    long detections = 0;
    int candidates = 0, confirmed = 0, rejected = 0;
    std::string outcome;
    std::uint64_t exposure = 0;
};

struct SearchData {
    bool present = false;
    std::string error;
    std::vector<NightRow> nights;
    std::vector<VisitRow> visits;  // exposures only (observed and revisits)
    std::multimap<std::uint64_t, std::pair<double, double>> candidates;  // by exposure key: (lon, lat) radians
    Telescope tel;
    RehearsalOptions options;  // the seed; the sky and chart models at their defaults, as `wayward search` runs them
};

double cell_number(const std::vector<std::string>& c, std::size_t k) { return k < c.size() && !c[k].empty() ? std::stod(c[k]) : 0.0; }

// Reads DIR/search/. The files are our own; a damaged one is reported, not trusted.
SearchData load_search(const std::string& folder) {
    SearchData d;
    const std::filesystem::path dir = std::filesystem::path(folder) / "search";
    std::error_code ec;
    if (!std::filesystem::exists(dir / "rehearsal.toml", ec) || !std::filesystem::exists(dir / "nights.csv", ec)) return d;
    d.present = true;
    try {
        const std::string setup_file = (dir / "rehearsal.toml").string();
        const toml::table setup = detail::parse_toml(detail::read_text_file(setup_file), setup_file);
        d.options.seed = std::stoull(setup["search"]["seed"].value_or(std::string("1")));
        if (const toml::table* t = setup["telescope"].as_table()) {
            detail::TableReader r(*t, setup_file, "telescope");
            d.tel = detail::read_telescope(r);
        }
        auto lines = [&](const char* name) {
            std::vector<std::vector<std::string>> rows;
            const std::string text = detail::read_text_file((dir / name).string());
            std::size_t pos = text.find('\n');  // past the header
            while (pos != std::string::npos && pos + 1 < text.size()) {
                const std::size_t nl = text.find('\n', pos + 1);
                rows.push_back(split_csv_line(text.substr(pos + 1, nl == std::string::npos ? std::string::npos : nl - pos - 1)));
                pos = nl;
            }
            return rows;
        };
        for (const auto& c : lines("nights.csv")) {
            if (c.size() < 9) continue;
            d.nights.push_back({std::stoi(c[0]), cell_number(c, 1), c[2] == "1", cell_number(c, 3), cell_number(c, 6), cell_number(c, 7),
                                std::stoi(c[4]), std::stoi(c[5]), c[8]});
        }
        for (const auto& c : lines("log.csv")) {
            if (c.size() < 17 || c[16].empty()) continue;  // cloudy or idle rows: no exposure
            VisitRow v;
            v.night = std::stoi(c[0]);
            v.year = cell_number(c, 1);
            v.field = std::stoi(c[2]);
            v.visit = std::stoi(c[3]);
            v.lon = cell_number(c, 4) * deg;
            v.lat = cell_number(c, 5) * deg;
            v.limit = cell_number(c, 9);
            v.detections = std::stol(c[10]);
            v.candidates = std::stoi(c[11]);
            v.confirmed = std::stoi(c[12]);
            v.rejected = std::stoi(c[13]);
            v.outcome = c[15];
            v.exposure = std::stoull(c[16]);
            d.visits.push_back(v);
        }
        for (const auto& c : lines("candidates.csv"))
            if (c.size() >= 6) d.candidates.emplace(std::stoull(c[3]), std::make_pair(cell_number(c, 4) * deg, cell_number(c, 5) * deg));
    } catch (const std::exception& e) {
        d.error = e.what();
    }
    return d;
}

ImU32 rgba(sf::Color c, int alpha) { return im_color(c, static_cast<std::uint8_t>(std::clamp(alpha, 0, 255))); }

class SearchPanel final : public Panel {
public:
    const char* name() const override { return "search"; }
    const char* title() const override { return "Telescope search"; }
    void reset_view(ViewerControls&) override {}
    void on_mouse(const sf::Event&, const sf::FloatRect&, ViewerControls&, const ViewerModel&) override {}

    void sidebar(ViewerControls&, ViewerModel& m) override {
        ImGui::PushTextWrapPos(0.0f);
        if (m.mode != ViewerMode::trainee) {
            ImGui::TextDisabled("The search rehearsal works on an exercise folder after `wayward search DIR`.");
            ImGui::PopTextWrapPos();
            return;
        }
        ensure_loaded(m);
        if (!data_.present || !data_.error.empty()) {
            ImGui::TextUnformatted(data_.present ? "The search folder could not be read:" : "No search rehearsal in this folder yet.");
            ImGui::TextDisabled("%s", data_.present ? data_.error.c_str() : "Run `wayward search DIR` (after `wayward solve DIR`), then reload.");
            if (ImGui::Button("Reload", ImVec2(-1, 0))) loaded_from_.clear();
            ImGui::PopTextWrapPos();
            return;
        }
        const int last = data_.nights.empty() ? 1 : data_.nights.back().night;
        ImGui::SetNextItemWidth(-1);
        if (ImGui::SliderInt("##night", &night_, 1, last, "night %d")) select_first_visit();
        if (const NightRow* n = night_row(night_)) {
            if (!n->clear) ImGui::TextUnformatted("Cloudy.");
            else if (!n->why.empty()) ImGui::TextWrapped("No field: %s.", n->why.c_str());
            else ImGui::Text("%d fields, %d revisits, %.1f h", n->fields, n->revisits, n->hours);
            ImGui::Text("Probability covered so far: %.1f %%", 100.0 * n->covered);
        }
        ImGui::Checkbox("Blink chart and exposure", &blink_);
        ImGui::Spacing();
        ImGui::TextUnformatted("Field visits tonight:");
        ImGui::BeginChild("visits", ImVec2(0, 170), true);
        for (std::size_t k = 0; k < data_.visits.size(); ++k) {
            const VisitRow& v = data_.visits[k];
            if (v.night != night_) continue;
            char label[96];
            std::snprintf(label, sizeof label, "field %d, %s: %d cand.%s##%zu", v.field, v.visit == 2 ? "revisit" : "first look", v.candidates,
                          v.confirmed > 0 ? ", moved" : "", k);
            if (ImGui::Selectable(label, selected_ == static_cast<int>(k))) selected_ = static_cast<int>(k);
        }
        ImGui::EndChild();
        if (ImGui::Button("Reload", ImVec2(-1, 0))) loaded_from_.clear();
        ImGui::TextDisabled("Pointings are planned away from the star; a real observatory's own safety rules and scheduling tools "
                            "take precedence, and real predictions need cross-checking with the team's own software.");
        ImGui::PopTextWrapPos();
    }

    void draw(sf::RenderTarget&, ImDrawList& list, const sf::FloatRect& canvas, const ViewerControls&, const ViewerModel& m,
              const DrawContext& ctx) override {
        const float ts = ctx.text_size;
        if (m.mode != ViewerMode::trainee) {
            draw_exercise_needed(list, ctx.fonts, ts, canvas, title(),
                                 "The search rehearsal needs an exercise folder: `wayward new`, `wayward solve` and `wayward search DIR`, then open DIR.");
            return;
        }
        const_cast<SearchPanel*>(this)->ensure_loaded(m);
        list.PushClipRect(ImVec2(canvas.left, canvas.top), ImVec2(canvas.left + canvas.width, canvas.top + canvas.height), true);
        const NightRow* n = night_row(night_);
        char sub[200];
        std::snprintf(sub, sizeof sub, "night %d of %zu%s", night_, data_.nights.size(),
                      m.revealed ? " \u2014 the hidden body is marked (revealed)" : " \u2014 the answer key stays sealed");
        draw_panel_title(list, ctx.fonts, ts, canvas, title(), data_.present && data_.error.empty() ? sub : "");
        if (!data_.present || !data_.error.empty() || !n) {
            draw_card(list, ctx.fonts, ts, canvas, palette::text_dim, data_.present ? "The search folder could not be read" : "No search rehearsal yet",
                      data_.present ? data_.error : "Run `wayward search DIR` on this exercise (after `wayward solve DIR`) and reload.");
            list.PopClipRect();
            return;
        }
        const float top = canvas.top + 70.0f, pad = 16.0f;
        const float left_w = std::floor(canvas.width * 0.52f);
        const sf::FloatRect sky(canvas.left + pad, top, left_w - 2 * pad, canvas.height - (top - canvas.top) - 150.0f);
        const sf::FloatRect curve(canvas.left + pad + 34.0f, sky.top + sky.height + 28.0f, left_w - 2 * pad - 40.0f, 86.0f);
        const sf::FloatRect right(canvas.left + left_w, top, canvas.width - left_w - pad, canvas.height - (top - canvas.top) - pad);
        draw_fields(list, sky, m, ctx);
        draw_coverage(list, curve, ctx);
        draw_visit(list, right, m, ctx);
        list.PopClipRect();
    }

private:
    std::string loaded_from_;
    SearchData data_;
    int night_ = 1;
    int selected_ = -1;
    bool blink_ = false;
    std::optional<std::uint64_t> picture_key_;
    FieldPicture picture_;

    const NightRow* night_row(int night) const {
        for (const NightRow& n : data_.nights)
            if (n.night == night) return &n;
        return nullptr;
    }

    void ensure_loaded(const ViewerModel& m) {
        if (loaded_from_ == m.source) return;
        loaded_from_ = m.source;
        data_ = load_search(m.source);
        picture_key_.reset();
        // Start on the night something moved (a discovery), else the last night that searched a field.
        night_ = 1;
        for (const VisitRow& v : data_.visits) night_ = std::max(night_, v.night);
        for (const VisitRow& v : data_.visits)
            if (v.confirmed > 0) { night_ = v.night; break; }
        select_first_visit();
    }

    // The night's visit that confirmed a mover, else the one with the most candidates.
    void select_first_visit() {
        selected_ = -1;
        int best = -1;
        for (std::size_t k = 0; k < data_.visits.size(); ++k) {
            const VisitRow& v = data_.visits[k];
            if (v.night != night_) continue;
            const int score = v.confirmed > 0 ? 1000 : v.candidates;
            if (score > best) { best = score; selected_ = static_cast<int>(k); }
        }
    }

    const FieldPicture& picture_of(const VisitRow& v, const ViewerModel& m) {
        if (picture_key_ != v.exposure) {
            SkyModel sky = rehearsal_sky_model(data_.tel, data_.options);
            const double t_mid = days_from_year(m.facts.epoch0_year, v.year) + 0.5 * data_.tel.exposure_min / 1440.0;
            picture_ = {};
            sky.expose(v.lon, v.lat, t_mid, v.limit, v.exposure, BodyInField{}, &picture_);
            picture_key_ = v.exposure;
        }
        return picture_;
    }

    // The fields of every night so far on a tangent-plane chart (east to the left), the predicted centre and
    // 1-sigma ellipse of the chosen night, and after the reveal the body's true place.
    void draw_fields(ImDrawList& list, const sf::FloatRect& a, const ViewerModel& m, const DrawContext& ctx) {
        const float ts = ctx.text_size;
        list.AddRectFilled(ImVec2(a.left, a.top), ImVec2(a.left + a.width, a.top + a.height), im_color(palette::panel_background), 4.0f);
        double cl = 0.0, cb = 0.0, sx = 0.0, sy = 0.0, sz = 0.0;
        for (const VisitRow& v : data_.visits) {
            const Vec3 u = unit_vector(v.lon, v.lat);
            sx += u.x(), sy += u.y(), sz += u.z();
        }
        const Solution* sol = m.analysis && m.analysis->solution ? m.analysis->solution.get() : nullptr;
        std::optional<SearchRegion> region;
        if (sol) region = region_from_solution(*sol, 0, 1);
        const double night_year = night_row(night_)->year + 0.5 / julian_year_days;
        if (data_.visits.empty() && region) {
            region_centre(*region, night_year, cl, cb);
        } else {
            cl = wrap_two_pi(std::atan2(sy, sx));
            cb = std::atan2(sz, std::hypot(sx, sy));
        }
        const double half = 0.5 * data_.tel.field_of_view_deg * deg;
        double extent = 3.0 * half;
        for (const VisitRow& v : data_.visits) {
            double xi = 0.0, eta = 0.0;
            to_tangent(cl, cb, v.lon, v.lat, xi, eta);
            extent = std::max(extent, std::max(std::abs(xi), std::abs(eta)) + 1.5 * half);
        }
        const float cx = a.left + a.width * 0.5f, cy = a.top + a.height * 0.5f;
        const double scale = std::min(a.width, a.height) * 0.5 / extent;
        auto at = [&](double lon, double lat) {
            double xi = 0.0, eta = 0.0;
            to_tangent(cl, cb, lon, lat, xi, eta);
            return ImVec2(cx - static_cast<float>(xi * scale), cy - static_cast<float>(eta * scale));
        };
        const float side = static_cast<float>(half * scale);
        auto field = [&](const VisitRow& v, ImU32 fill, ImU32 edge, float width) {
            const ImVec2 p = at(v.lon, v.lat);
            if (data_.tel.shape == FieldShape::square) {
                list.AddRectFilled(ImVec2(p.x - side, p.y - side), ImVec2(p.x + side, p.y + side), fill);
                list.AddRect(ImVec2(p.x - side, p.y - side), ImVec2(p.x + side, p.y + side), edge, 0.0f, 0, width);
            } else {
                list.AddCircleFilled(p, side, fill, 40);
                list.AddCircle(p, side, edge, 40, width);
            }
        };
        for (const VisitRow& v : data_.visits)
            if (v.night < night_) field(v, rgba(palette::sky_blue, 40), rgba(palette::sky_blue, 110), 1.0f);
        for (const VisitRow& v : data_.visits)
            if (v.night == night_) field(v, rgba(palette::orange, 70), rgba(palette::orange, 230), 1.5f);
        if (selected_ >= 0) field(data_.visits[static_cast<std::size_t>(selected_)], rgba(palette::yellow, 40), im_color(palette::yellow), 3.0f);
        if (region && sol) {  // the predicted track, and tonight's centre with its 1-sigma ellipse
            std::vector<ImVec2> track;
            for (const TrackPoint& p : sol->prediction.track)
                if (std::abs(p.year - night_year) < 0.25) track.push_back(at(p.lon, p.lat));
            if (track.size() >= 2) list.AddPolyline(track.data(), static_cast<int>(track.size()), rgba(palette::solution, 200), 0, 1.5f);
            double pl = 0.0, pb = 0.0;
            region_centre(*region, night_year, pl, pb);
            std::vector<ImVec2> ring;
            for (int k = 0; k < 72; ++k) {
                const double t = two_pi * k / 72.0, c = std::cos(region->orientation), s = std::sin(region->orientation);
                const double x = region->sigma_major * std::cos(t), y = region->sigma_minor * std::sin(t);
                double lon = 0.0, lat = 0.0;
                from_tangent(pl, pb, c * x - s * y, s * x + c * y, lon, lat);
                ring.push_back(at(lon, lat));
            }
            list.AddPolyline(ring.data(), static_cast<int>(ring.size()), im_color(palette::solution), ImDrawFlags_Closed, 2.0f);
            list.AddCircleFilled(at(pl, pb), 4.0f, im_color(palette::solution));
        }
        if (m.revealed && m.revealed->truth) {
            const TrackPoint t = m.revealed->truth->at_year(night_year);
            const ImVec2 p = at(t.lon, t.lat);
            list.AddLine(ImVec2(p.x - 8, p.y - 8), ImVec2(p.x + 8, p.y + 8), im_color(palette::hidden), 2.5f);
            list.AddLine(ImVec2(p.x - 8, p.y + 8), ImVec2(p.x + 8, p.y - 8), im_color(palette::hidden), 2.5f);
        }
        // Scale bar and legend.
        const double bar_deg = nice_step(extent / deg * 0.4);
        const float bar = static_cast<float>(bar_deg * deg * scale);
        const ImVec2 b0(a.left + a.width - 20.0f - bar, a.top + a.height - 18.0f);
        list.AddLine(b0, ImVec2(b0.x + bar, b0.y), im_color(palette::text), 2.0f);
        char lab[32];
        std::snprintf(lab, sizeof lab, "%g\u00b0", bar_deg);
        draw_text(list, ctx.fonts, ts * 0.8f, ImVec2(b0.x + bar * 0.5f, b0.y - ts), im_color(palette::text_dim), lab, Align::centre);
        float y = a.top + 8.0f;
        const ImVec2 lp(a.left + 10.0f, 0.0f);
        y = legend_row(list, ctx.fonts, ts * 0.8f, ImVec2(lp.x, y), palette::orange, "fields tonight", true);
        y = legend_row(list, ctx.fonts, ts * 0.8f, ImVec2(lp.x, y), palette::sky_blue, "earlier nights", true);
        if (sol) y = legend_row(list, ctx.fonts, ts * 0.8f, ImVec2(lp.x, y), palette::solution, "predicted centre, 1\u03c3");
        if (m.revealed) legend_row(list, ctx.fonts, ts * 0.8f, ImVec2(lp.x, y), palette::hidden, "hidden body (revealed)");
        draw_text(list, ctx.fonts, ts * 0.8f, ImVec2(a.left + 10.0f, a.top + a.height - ts - 6.0f), im_color(palette::text_dim),
                  "east \u2190   (tangent plane about the fields)");
    }

    // Probability covered against night; cloudy nights as grey ticks, the chosen night marked.
    void draw_coverage(ImDrawList& list, const sf::FloatRect& a, const DrawContext& ctx) {
        const float ts = ctx.text_size * 0.8f;
        const int last = data_.nights.back().night;
        list.AddRect(ImVec2(a.left, a.top), ImVec2(a.left + a.width, a.top + a.height), im_color(palette::grid));
        auto px = [&](double night) { return a.left + static_cast<float>((night - 0.5) / std::max(1, last)) * a.width; };
        auto py = [&](double p) { return a.top + a.height - static_cast<float>(p) * a.height; };
        std::vector<ImVec2> line;
        for (const NightRow& n : data_.nights) {
            if (!n.clear) list.AddRectFilled(ImVec2(px(n.night) - 2, a.top + a.height - 6), ImVec2(px(n.night) + 2, a.top + a.height), im_color(palette::text_dim));
            line.push_back(ImVec2(px(n.night), py(n.covered)));
        }
        if (line.size() >= 2) list.AddPolyline(line.data(), static_cast<int>(line.size()), im_color(palette::bluish_green), 0, 2.0f);
        if (const NightRow* n = night_row(night_)) list.AddCircleFilled(ImVec2(px(n->night), py(n->covered)), 5.0f, im_color(palette::orange));
        draw_text(list, ctx.fonts, ts, ImVec2(a.left, a.top - ts - 4.0f), im_color(palette::text),
                  "probability covered so far (grey ticks: cloudy nights)");
        draw_text(list, ctx.fonts, ts, ImVec2(a.left - 6.0f, a.top - 2.0f), im_color(palette::text_dim), "1", Align::right);
        draw_text(list, ctx.fonts, ts, ImVec2(a.left - 6.0f, a.top + a.height - ts), im_color(palette::text_dim), "0", Align::right);
        char lab[32];
        std::snprintf(lab, sizeof lab, "night %d", last);
        draw_text(list, ctx.fonts, ts, ImVec2(a.left + a.width, a.top + a.height + 2.0f), im_color(palette::text_dim), lab, Align::right);
    }

    // One visit: the chart and the exposure of the field side by side (or blinked), candidates ringed.
    void draw_visit(ImDrawList& list, const sf::FloatRect& a, const ViewerModel& m, const DrawContext& ctx) {
        const float ts = ctx.text_size;
        if (selected_ < 0) {
            draw_text(list, ctx.fonts, ts, ImVec2(a.left + 10.0f, a.top + 10.0f), im_color(palette::text_dim), "No field was observed on this night.");
            return;
        }
        const VisitRow& v = data_.visits[static_cast<std::size_t>(selected_)];
        const FieldPicture& pic = picture_of(v, m);
        const float gap = 14.0f;
        const bool both = !blink_;
        const float box = std::min(both ? (a.width - gap) * 0.5f : a.width, a.height - 150.0f);
        const double half = 0.5 * data_.tel.field_of_view_deg * deg;
        const double scale = box * 0.5 / (half * 1.04);
        const auto range = data_.candidates.equal_range(v.exposure);
        const TrackPoint* body = nullptr;
        TrackPoint truth;
        if (m.revealed && m.revealed->truth) {
            truth = m.revealed->truth->at_year(v.year + 0.5 * data_.tel.exposure_min / 1440.0 / julian_year_days);
            body = &truth;
        }
        auto panel = [&](float x0, const std::vector<Star>& objects, const char* heading, bool exposure) {
            const ImVec2 lo(x0, a.top + 26.0f), hi(x0 + box, a.top + 26.0f + box);
            const ImVec2 c((lo.x + hi.x) * 0.5f, (lo.y + hi.y) * 0.5f);
            list.AddRectFilled(lo, hi, IM_COL32(4, 6, 12, 255));
            list.AddRect(lo, hi, im_color(palette::grid_strong));
            auto at = [&](double lon, double lat) {
                double xi = 0.0, eta = 0.0;
                to_tangent(v.lon, v.lat, lon, lat, xi, eta);
                return ImVec2(c.x - static_cast<float>(xi * scale), c.y - static_cast<float>(eta * scale));
            };
            list.PushClipRect(lo, hi, true);
            for (const Star& s : objects) {
                const float r = std::clamp(0.6f + 0.3f * static_cast<float>(v.limit + 1.0 - s.mag), 0.6f, 3.2f);
                list.AddCircleFilled(at(s.lon, s.lat), r, exposure ? IM_COL32(235, 238, 245, 235) : IM_COL32(200, 205, 215, 200), 10);
            }
            for (auto it = range.first; it != range.second; ++it) {
                const ImVec2 p = at(it->second.first, it->second.second);
                if (exposure) list.AddCircleFilled(p, 2.2f, IM_COL32(235, 238, 245, 235), 10);
                list.AddCircle(p, 9.0f, im_color(palette::yellow), 24, 2.0f);
            }
            if (body) {
                const ImVec2 p = at(body->lon, body->lat);
                list.AddCircle(p, 14.0f, im_color(palette::hidden), 24, 2.0f);
            }
            list.PopClipRect();
            draw_text(list, ctx.fonts, ts * 0.9f, ImVec2(lo.x, a.top), im_color(palette::text), heading);
        };
        char h1[96], h2[96];
        std::snprintf(h1, sizeof h1, "chart (%zu entries)", pic.chart.size());
        std::snprintf(h2, sizeof h2, "exposure (%ld recorded)", v.detections);
        const bool show_chart = both || std::fmod(ImGui::GetTime(), 1.4) < 0.7;
        if (both || show_chart) panel(a.left, pic.chart, h1, false);
        if (both) panel(a.left + box + gap, pic.recorded, h2, true);
        else if (!show_chart) panel(a.left, pic.recorded, h2, true);
        float y = a.top + 40.0f + box;
        char line[200];
        std::snprintf(line, sizeof line, "Night %d, field %d, %s at %.4f: limit %.1f mag", v.night, v.field,
                      v.visit == 2 ? "revisit" : "first look", v.year, v.limit);
        draw_text(list, ctx.fonts, ts * 0.9f, ImVec2(a.left, y), im_color(palette::text), line);
        y += ts * 1.3f;
        std::snprintf(line, sizeof line, "%d candidate%s (recorded, not in the chart)", v.candidates, v.candidates == 1 ? "" : "s");
        draw_text(list, ctx.fonts, ts * 0.9f, ImVec2(a.left, y), im_color(palette::text), line);
        y += ts * 1.3f;
        if (v.visit == 2) {
            std::snprintf(line, sizeof line, "revisit: %d moved like a body beyond the planets,", v.confirmed);
            draw_text(list, ctx.fonts, ts * 0.9f, ImVec2(a.left, y), im_color(palette::text), line);
            y += ts * 1.2f;
            std::snprintf(line, sizeof line, "%d stayed put or vanished", v.rejected);
            draw_text(list, ctx.fonts, ts * 0.9f, ImVec2(a.left, y), im_color(palette::text), line);
            y += ts * 1.3f;
        }
        y = legend_row(list, ctx.fonts, ts * 0.8f, ImVec2(a.left, y), palette::yellow, "candidate");
        if (body) y = legend_row(list, ctx.fonts, ts * 0.8f, ImVec2(a.left, y), palette::hidden, "hidden body, true place (revealed)");
        // The caution, wherever pointings are shown.
        ImFont* font = ctx.fonts.pick(ts * 0.8f);
        const char* caution = "Caution: a rehearsal. Pointings are planned away from the star; a real observatory's own safety rules and "
                              "scheduling tools take precedence, and real predictions need cross-checking with the team's own software.";
        list.AddText(font, ts * 0.8f, ImVec2(a.left, std::max(y + 8.0f, a.top + a.height - 4.0f * ts)), im_color(palette::text_dim), caution,
                     nullptr, a.width);
    }
};

}  // namespace

std::unique_ptr<Panel> make_search_panel() { return std::make_unique<SearchPanel>(); }

}  // namespace wayward::viewer
