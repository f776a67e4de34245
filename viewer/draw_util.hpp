// Small drawing helpers shared by the panels: colour conversion for ImGui draw lists, aligned text (with an
// optional dark halo for legibility over the star field), grid steps, and legend rows. Pixels only.
#pragma once

#include <cmath>
#include <cstdint>
#include <string>
#include <vector>

#include <SFML/Graphics/Color.hpp>

#include <imgui.h>

#include "sim/report/plot.hpp"
#include "viewer/fonts.hpp"

namespace wayward::viewer {

inline ImU32 im_color(sf::Color c) { return IM_COL32(c.r, c.g, c.b, c.a); }
inline ImU32 im_color(sf::Color c, std::uint8_t alpha) { return IM_COL32(c.r, c.g, c.b, alpha); }

enum class Align { left, centre, right };

// Draws `text` with its top edge at pos.y, aligned on pos.x. Returns the text's size.
inline ImVec2 draw_text(ImDrawList& list, const FontSet& fonts, float size, ImVec2 pos, ImU32 colour, const std::string& text,
                        Align align = Align::left, bool halo = false) {
    ImFont* font = fonts.pick(size);
    const ImVec2 extent = font->CalcTextSizeA(size, 1e9f, 0.0f, text.c_str());
    if (align == Align::centre) pos.x -= extent.x * 0.5f;
    if (align == Align::right) pos.x -= extent.x;
    pos.x = std::round(pos.x);
    pos.y = std::round(pos.y);
    if (halo) {
        const ImU32 shade = IM_COL32(8, 10, 18, 200);
        for (float dx = -1.0f; dx <= 1.0f; dx += 1.0f)
            for (float dy = -1.0f; dy <= 1.0f; dy += 1.0f)
                if (dx != 0.0f || dy != 0.0f) list.AddText(font, size, ImVec2(pos.x + dx, pos.y + dy), shade, text.c_str());
    }
    list.AddText(font, size, pos, colour, text.c_str());
    return extent;
}

// Places labels beside points without overlapping each other or the registered markers, inside the bounds:
// tries a few spots around the point and takes the first free one (or the first inside spot if none is free).
class LabelPlacer {
public:
    LabelPlacer() = default;
    LabelPlacer(ImVec2 lo, ImVec2 hi) : lo_(lo), hi_(hi) {}
    void block(ImVec2 centre, float radius) { taken_.push_back({centre.x - radius, centre.y - radius, centre.x + radius, centre.y + radius}); }
    void block_rect(ImVec2 lo, ImVec2 hi) { taken_.push_back({lo.x, lo.y, hi.x, hi.y}); }
    // Top-left corner for a label of `size` beside a marker of `radius` at `at`.
    ImVec2 place(ImVec2 at, float radius, ImVec2 size) {
        const float g = radius + 5.0f;
        const ImVec2 spots[] = {
            {at.x + g, at.y - size.y * 0.5f},          {at.x + g, at.y - size.y - g * 0.4f},
            {at.x + g, at.y + g * 0.4f},               {at.x - g - size.x, at.y - size.y * 0.5f},
            {at.x - g - size.x, at.y - size.y - g * 0.4f}, {at.x - g - size.x, at.y + g * 0.4f},
            {at.x - size.x * 0.5f, at.y - g - size.y}, {at.x - size.x * 0.5f, at.y + g},
            {at.x + g, at.y + g + size.y},             {at.x + g, at.y - g - 2.0f * size.y},
        };
        for (const ImVec2& p : spots)
            if (inside(p, size) && free(p, size)) return take(p, size);
        for (const ImVec2& p : spots)
            if (inside(p, size)) return take(p, size);
        return take(spots[0], size);
    }

private:
    std::vector<ImVec4> taken_;  // x0, y0, x1, y1
    ImVec2 lo_{-1e9f, -1e9f}, hi_{1e9f, 1e9f};
    bool inside(ImVec2 p, ImVec2 size) const { return p.x >= lo_.x && p.y >= lo_.y && p.x + size.x <= hi_.x && p.y + size.y <= hi_.y; }
    bool free(ImVec2 p, ImVec2 size) const {
        for (const ImVec4& r : taken_)
            if (p.x < r.z && p.x + size.x > r.x && p.y < r.w && p.y + size.y > r.y) return false;
        return true;
    }
    ImVec2 take(ImVec2 p, ImVec2 size) {
        taken_.push_back({p.x - 2, p.y - 1, p.x + size.x + 2, p.y + size.y + 1});
        return p;
    }
};

// Draws a label placed by `placer` beside a marker at `at`.
inline void draw_label(ImDrawList& list, const FontSet& fonts, float size, LabelPlacer& placer, ImVec2 at, float radius,
                       ImU32 colour, const std::string& text) {
    const ImVec2 extent = fonts.pick(size)->CalcTextSizeA(size, 1e9f, 0.0f, text.c_str());
    draw_text(list, fonts, size, placer.place(at, radius, extent), colour, text, Align::left, true);
}

// The smallest of 1, 2, 5 x 10^k not below `at_least` (sim's Heckbert nice number, rounded up).
inline double nice_step(double at_least) { return at_least > 0.0 ? plot::nice_number(at_least, false) : 1.0; }

// A legend row: a swatch (disc or bar) and a label. Returns the y of the next row.
inline float legend_row(ImDrawList& list, const FontSet& fonts, float size, ImVec2 pos, sf::Color colour,
                        const std::string& label, bool bar = false) {
    const float r = size * 0.32f;
    const ImVec2 c(pos.x + r, pos.y + size * 0.55f);
    if (bar)
        list.AddRectFilled(ImVec2(c.x - r, c.y - r * 0.7f), ImVec2(c.x + r, c.y + r * 0.7f), im_color(colour), 2.0f);
    else
        list.AddCircleFilled(c, r, im_color(colour), 20);
    draw_text(list, fonts, size, ImVec2(pos.x + 2.0f * r + 8.0f, pos.y), IM_COL32(225, 228, 235, 255), label);
    return pos.y + size * 1.35f;
}

}  // namespace wayward::viewer
