// Plots with ImGui draw lists. See plot_widgets.hpp.
#include "viewer/plot_widgets.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "sim/report/ticks.hpp"
#include "viewer/draw_util.hpp"
#include "viewer/imgui_sfml_bridge.hpp"
#include "viewer/palette.hpp"

namespace wayward::viewer {

void draw_marker(ImDrawList& list, ImVec2 c, Marker m, float r, ImU32 col, bool filled, float th) {
    switch (m) {
        case Marker::circle:
            if (filled) list.AddCircleFilled(c, r, col, 12);
            else list.AddCircle(c, r, col, 12, th);
            break;
        case Marker::square: {
            const float s = r * 0.88f;
            if (filled) list.AddRectFilled(ImVec2(c.x - s, c.y - s), ImVec2(c.x + s, c.y + s), col);
            else list.AddRect(ImVec2(c.x - s, c.y - s), ImVec2(c.x + s, c.y + s), col, 0.0f, 0, th);
            break;
        }
        case Marker::triangle:
        case Marker::triangle_down: {
            const float d = m == Marker::triangle ? 1.0f : -1.0f;
            const ImVec2 a(c.x, c.y - d * r * 1.15f), b(c.x - r * 1.05f, c.y + d * r * 0.7f), e(c.x + r * 1.05f, c.y + d * r * 0.7f);
            if (filled) list.AddTriangleFilled(a, b, e, col);
            else list.AddTriangle(a, b, e, col, th);
            break;
        }
        case Marker::diamond: {
            const float s = r * 1.2f;
            const ImVec2 a(c.x, c.y - s), b(c.x + s, c.y), e(c.x, c.y + s), f(c.x - s, c.y);
            if (filled) list.AddQuadFilled(a, b, e, f, col);
            else list.AddQuad(a, b, e, f, col, th);
            break;
        }
        case Marker::cross: {
            const float s = r * 0.85f;
            list.AddLine(ImVec2(c.x - s, c.y - s), ImVec2(c.x + s, c.y + s), col, th);
            list.AddLine(ImVec2(c.x - s, c.y + s), ImVec2(c.x + s, c.y - s), col, th);
            break;
        }
    }
}

PlotAxis padded_axis(double lo, double hi, double margin, bool symmetric, const std::string& label) {
    PlotAxis a;
    a.label = label;
    if (!std::isfinite(lo) || !std::isfinite(hi)) lo = 0, hi = 1;
    if (symmetric) {
        const double r = std::max({std::abs(lo), std::abs(hi), 1e-12}) * (1.0 + margin);
        a.lo = -r;
        a.hi = r;
        return a;
    }
    if (hi <= lo) {
        const double w = std::max(std::abs(lo) * 0.1, 1e-9);
        lo -= w;
        hi += w;
    }
    const double pad = (hi - lo) * margin;
    a.lo = lo - pad;
    a.hi = hi + pad;
    return a;
}

namespace {

double axis_fraction(const PlotAxis& a, double v) {
    if (a.log) return (std::log10(v) - std::log10(a.lo)) / (std::log10(a.hi) - std::log10(a.lo));
    return (v - a.lo) / (a.hi - a.lo);
}

double axis_value(const PlotAxis& a, double f) {
    return a.log ? std::pow(10.0, std::log10(a.lo) + f * (std::log10(a.hi) - std::log10(a.lo))) : a.lo + f * (a.hi - a.lo);
}

}  // namespace

PlotGeometry::PlotGeometry(ImVec2 box_lo, ImVec2 box_hi, float ts, PlotAxis x_axis, PlotAxis y_axis, bool has_title)
    : outer_lo(box_lo), outer_hi(box_hi), x(std::move(x_axis)), y(std::move(y_axis)) {
    const float small = ts * 0.8f;
    const float left = small * 3.6f;
    const float top = (has_title ? ts * 1.5f : small * 0.6f) + (y.label.empty() ? 0.0f : small * 1.3f);
    const float bottom = small * 1.5f + (x.label.empty() ? 0.0f : small * 1.3f);
    lo = ImVec2(std::round(box_lo.x + left), std::round(box_lo.y + top));
    hi = ImVec2(std::round(std::max(lo.x + 10.0f, box_hi.x - 8.0f)), std::round(std::max(lo.y + 10.0f, box_hi.y - bottom)));
}

ImVec2 PlotGeometry::to_screen(double xv, double yv) const {
    return {static_cast<float>(lo.x + axis_fraction(x, xv) * (hi.x - lo.x)), static_cast<float>(hi.y - axis_fraction(y, yv) * (hi.y - lo.y))};
}

double PlotGeometry::x_at(float sx) const { return axis_value(x, (sx - lo.x) / (hi.x - lo.x)); }
double PlotGeometry::y_at(float sy) const { return axis_value(y, (hi.y - sy) / (hi.y - lo.y)); }

ImVec2 PlotGeometry::marker_at(double xv, double yv, float r, int* beyond) const {
    ImVec2 p = to_screen(xv, (y.log && yv <= 0) ? y.lo : yv);
    if (beyond) *beyond = 0;
    if (p.y < lo.y + r) {
        p.y = lo.y + r + 1.0f;
        if (beyond) *beyond = 1;
    } else if (p.y > hi.y - r) {
        p.y = hi.y - r - 1.0f;
        if (beyond) *beyond = -1;
    }
    return p;
}

Plot::Plot(ImDrawList& list, const FontSet& fonts, float ts, ImVec2 lo, ImVec2 hi, PlotAxis x, PlotAxis y, std::string title)
    : list_(list), fonts_(fonts), ts_(ts), g_(lo, hi, ts, std::move(x), std::move(y), !title.empty()), title_(std::move(title)) {}

void Plot::draw_frame() {
    const float small = ts_ * 0.8f;
    list_.AddRectFilled(g_.lo, g_.hi, IM_COL32(14, 18, 30, 255), 3.0f);
    const ImU32 grid = im_color(palette::grid, 120), label = im_color(palette::text_dim);
    // About one tick per 75 px across and per 32 px up.
    const std::vector<double> xt = axis_ticks(g_.x.lo, g_.x.hi, std::max(2, static_cast<int>((g_.hi.x - g_.lo.x) / 75.0f)) + 1, g_.x.log);
    const std::vector<double> yt = axis_ticks(g_.y.lo, g_.y.hi, std::max(2, static_cast<int>((g_.hi.y - g_.lo.y) / 32.0f)) + 1, g_.y.log);
    const double xs = xt.size() >= 2 ? xt[1] - xt[0] : 1.0, ys = yt.size() >= 2 ? yt[1] - yt[0] : 1.0;
    for (double v : xt) {
        const float sx = std::round(to_screen(v, g_.y.log ? g_.y.lo : 0.0).x) + 0.5f;
        list_.AddLine(ImVec2(sx, g_.lo.y), ImVec2(sx, g_.hi.y), grid);
        draw_text(list_, fonts_, small, ImVec2(sx, g_.hi.y + 3.0f), label, axis_tick_label(v, xs, g_.x.log), Align::centre);
    }
    for (double v : yt) {
        const float sy = std::round(to_screen(g_.x.log ? g_.x.lo : 0.0, v).y) + 0.5f;
        const bool zero = !g_.y.log && v == 0.0;
        list_.AddLine(ImVec2(g_.lo.x, sy), ImVec2(g_.hi.x, sy), zero ? im_color(palette::grid_strong, 220) : grid, zero ? 1.3f : 1.0f);
        draw_text(list_, fonts_, small, ImVec2(g_.lo.x - 5.0f, sy - small * 0.6f), label, axis_tick_label(v, ys, g_.y.log), Align::right);
    }
    list_.AddRect(g_.lo, g_.hi, im_color(palette::grid_strong, 200), 3.0f);
    if (!title_.empty()) draw_text(list_, fonts_, ts_ * 0.95f, ImVec2(g_.lo.x, g_.outer_lo.y + 1.0f), im_color(palette::text), title_);
    if (!g_.x.label.empty())
        draw_text(list_, fonts_, small, ImVec2((g_.lo.x + g_.hi.x) * 0.5f, g_.hi.y + small * 1.45f), label, g_.x.label, Align::centre);
    if (!g_.y.label.empty()) {
        // Vertical text is not available with ImGui's fonts: the y label sits above the axis, left-aligned.
        draw_text(list_, fonts_, small, ImVec2(g_.outer_lo.x, g_.lo.y - small * 1.35f), label, g_.y.label, Align::left);
    }
}

void Plot::begin_data() {
    list_.PushClipRect(ImVec2(g_.lo.x + 1, g_.lo.y + 1), ImVec2(g_.hi.x - 1, g_.hi.y - 1), true);
    saved_flags_ = list_.Flags;
}
void Plot::end_data() {
    list_.Flags = saved_flags_;
    list_.PopClipRect();
}

void Plot::begin_dense() { list_.Flags &= ~ImDrawListFlags_AntiAliasedFill; }
void Plot::end_dense() { list_.Flags = saved_flags_; }

void Plot::line(const std::vector<double>& x, const std::vector<double>& y, ImU32 colour, float width) {
    std::vector<ImVec2> pts;
    auto flush = [&] {
        if (pts.size() >= 2) list_.AddPolyline(pts.data(), static_cast<int>(pts.size()), colour, 0, width);
        pts.clear();
    };
    for (std::size_t k = 0; k < x.size() && k < y.size(); ++k) {
        if (!std::isfinite(x[k]) || !std::isfinite(y[k]) || (g_.x.log && x[k] <= 0) || (g_.y.log && y[k] <= 0)) {
            flush();
            continue;
        }
        pts.push_back(to_screen(x[k], y[k]));
    }
    flush();
}

void Plot::dashed_line(ImVec2 a, ImVec2 b, ImU32 colour, float width) {
    const float len = std::hypot(b.x - a.x, b.y - a.y);
    if (len < 1.0f) return;
    const float dash = 7.0f, gap = 5.0f;
    for (float s = 0.0f; s < len; s += dash + gap) {
        const float e = std::min(len, s + dash);
        list_.AddLine(ImVec2(a.x + (b.x - a.x) * s / len, a.y + (b.y - a.y) * s / len),
                      ImVec2(a.x + (b.x - a.x) * e / len, a.y + (b.y - a.y) * e / len), colour, width);
    }
}

void Plot::hline(double y, ImU32 colour, float width, bool dashed, const std::string& label) {
    if (g_.y.log && y <= 0) return;
    const float sy = to_screen(g_.x.log ? g_.x.lo : 0.0, y).y;
    if (sy < g_.lo.y || sy > g_.hi.y) return;
    if (dashed) dashed_line(ImVec2(g_.lo.x, sy), ImVec2(g_.hi.x, sy), colour, width);
    else list_.AddLine(ImVec2(g_.lo.x, sy), ImVec2(g_.hi.x, sy), colour, width);
    if (!label.empty()) draw_text(list_, fonts_, ts_ * 0.8f, ImVec2(g_.hi.x - 6.0f, sy - ts_ * 1.05f), colour, label, Align::right, true);
}

void Plot::vline(double x, ImU32 colour, float width, bool dashed, const std::string& label) {
    if (g_.x.log && x <= 0) return;
    const float sx = to_screen(x, g_.y.log ? g_.y.lo : 0.0).x;
    if (sx < g_.lo.x || sx > g_.hi.x) return;
    if (dashed) dashed_line(ImVec2(sx, g_.lo.y), ImVec2(sx, g_.hi.y), colour, width);
    else list_.AddLine(ImVec2(sx, g_.lo.y), ImVec2(sx, g_.hi.y), colour, width);
    if (!label.empty()) draw_text(list_, fonts_, ts_ * 0.8f, ImVec2(sx + 5.0f, g_.lo.y + 4.0f), colour, label, Align::left, true);
}

void Plot::x_band(double x0, double x1, ImU32 fill) {
    const float a = std::clamp(to_screen(x0, g_.y.log ? g_.y.lo : 0.0).x, g_.lo.x, g_.hi.x);
    const float b = std::clamp(to_screen(x1, g_.y.log ? g_.y.lo : 0.0).x, g_.lo.x, g_.hi.x);
    if (b > a) list_.AddRectFilled(ImVec2(a, g_.lo.y + 1), ImVec2(b, g_.hi.y - 1), fill);
}

ImVec2 Plot::point(double x, double y, Marker marker, float r, ImU32 colour, bool filled) {
    int beyond = 0;
    const ImVec2 p = g_.marker_at(x, y, r, &beyond);
    // Beyond the range: an arrowhead on that edge, pointing out.
    if (beyond) draw_marker(list_, p, beyond > 0 ? Marker::triangle : Marker::triangle_down, r + 0.8f, colour, false, 1.2f);
    else draw_marker(list_, p, marker, r, colour, filled);
    return p;
}

void Plot::legend(const std::vector<LegendEntry>& entries, bool left, bool bottom) {
    if (entries.empty()) return;
    const float size = ts_ * 0.8f, row = size * 1.35f, sw = size * 1.6f;
    float width = 0.0f;
    for (const LegendEntry& e : entries) width = std::max(width, fonts_.pick(size)->CalcTextSizeA(size, 1e9f, 0.0f, e.label.c_str()).x);
    width += sw + 16.0f;
    const float height = row * static_cast<float>(entries.size()) + 8.0f;
    const ImVec2 a(left ? g_.lo.x + 8.0f : g_.hi.x - 8.0f - width, bottom ? g_.hi.y - 8.0f - height : g_.lo.y + 8.0f);
    list_.AddRectFilled(a, ImVec2(a.x + width, a.y + height), IM_COL32(10, 13, 22, 215), 4.0f);
    float y = a.y + 4.0f;
    for (const LegendEntry& e : entries) {
        const ImVec2 c(a.x + 6.0f + sw * 0.5f, y + row * 0.5f);
        if (e.line) list_.AddLine(ImVec2(c.x - sw * 0.5f, c.y), ImVec2(c.x + sw * 0.5f, c.y), e.colour, 2.0f);
        else draw_marker(list_, c, e.marker, size * 0.3f, e.colour, e.filled);
        draw_text(list_, fonts_, size, ImVec2(a.x + 10.0f + sw, y + (row - size) * 0.45f), im_color(palette::text), e.label);
        y += row;
    }
}

PlotImageCache::PlotImageCache() = default;
PlotImageCache::~PlotImageCache() = default;
PlotImageCache::PlotImageCache(PlotImageCache&&) noexcept = default;
PlotImageCache& PlotImageCache::operator=(PlotImageCache&&) noexcept = default;

bool PlotImageCache::ready(std::uint64_t key, ImVec2 lo, ImVec2 hi) const {
    return valid_ && key == key_ && lo.x == lo_.x && lo.y == lo_.y && hi.x == hi_.x && hi.y == hi_.y;
}

ImDrawList& PlotImageCache::record(ImVec2 lo, ImVec2 hi) {
    valid_ = false;
    lo_ = ImVec2(std::floor(lo.x), std::floor(lo.y));
    hi_ = ImVec2(std::ceil(hi.x), std::ceil(hi.y));
    list_ = std::make_unique<ImDrawList>(ImGui::GetDrawListSharedData());
    list_->_ResetForNewFrame();
    list_->PushTextureID(ImGui::GetIO().Fonts->TexID);
    list_->PushClipRect(lo_, hi_, false);
    list_->Flags = ImGui::GetBackgroundDrawList()->Flags;
    key_ = 0;
    return *list_;
}

bool PlotImageCache::finish(std::uint64_t key, sf::RenderTarget& window) {
    const auto w = static_cast<unsigned>(hi_.x - lo_.x), h = static_cast<unsigned>(hi_.y - lo_.y);
    if (!list_ || w == 0 || h == 0) return false;
    if (!texture_ || texture_->getSize() != sf::Vector2u(w, h)) {
        texture_ = std::make_unique<sf::RenderTexture>();
        if (!texture_->create(w, h)) {
            texture_.reset();
            window.setActive(true);
            return false;
        }
    }
    const bool ok = bridge_render_list_to_texture(*list_, lo_, ImVec2(static_cast<float>(w), static_cast<float>(h)), *texture_);
    window.setActive(true);
    if (!ok) return false;
    key_ = key;
    valid_ = true;
    return true;
}

void PlotImageCache::draw(ImDrawList& list) const {
    if (!valid_ || !texture_) return;
    const auto id = reinterpret_cast<ImTextureID>(static_cast<std::uintptr_t>(texture_->getTexture().getNativeHandle()));
    // The render texture holds the first row at the bottom (OpenGL's convention): flip it back.
    list.AddImage(id, lo_, hi_, ImVec2(0, 1), ImVec2(1, 0));
}

std::optional<std::size_t> nearest_point(const std::vector<ImVec2>& points, ImVec2 mouse, float max_px) {
    std::optional<std::size_t> best;
    float best_d2 = max_px * max_px;
    for (std::size_t k = 0; k < points.size(); ++k) {
        const ImVec2& p = points[k];
        if (!std::isfinite(p.x) || !std::isfinite(p.y)) continue;
        const float d2 = (p.x - mouse.x) * (p.x - mouse.x) + (p.y - mouse.y) * (p.y - mouse.y);
        if (d2 <= best_d2) {
            best_d2 = d2;
            best = k;
        }
    }
    return best;
}

}  // namespace wayward::viewer
