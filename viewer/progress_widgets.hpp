// Progress and message widgets shared by the trainee panels: a progress bar for the sidebar (with a moving
// block when the work cannot say how far along it is), and a message card on the canvas (heading, body text,
// optional progress bar). Pixels only.
#pragma once

#include <algorithm>
#include <cmath>
#include <string>

#include <SFML/Graphics/Rect.hpp>

#include <imgui.h>

#include "viewer/draw_util.hpp"
#include "viewer/palette.hpp"

namespace wayward::viewer {

// A bar across `width` pixels at the cursor in the current window: `fraction` in [0, 1], or < 0 for work of
// unknown length (a block moves along the bar).
inline void progress_bar(double fraction, const std::string& overlay, float width = -1.0f) {
    if (fraction >= 0.0) {
        ImGui::ProgressBar(static_cast<float>(std::clamp(fraction, 0.0, 1.0)), ImVec2(width, 0.0f), overlay.c_str());
        return;
    }
    ImDrawList* list = ImGui::GetWindowDrawList();
    const ImVec2 p = ImGui::GetCursorScreenPos();
    const float w = width > 0 ? width : ImGui::GetContentRegionAvail().x, h = ImGui::GetFrameHeight();
    list->AddRectFilled(p, ImVec2(p.x + w, p.y + h), ImGui::GetColorU32(ImGuiCol_FrameBg), ImGui::GetStyle().FrameRounding);
    const float t = static_cast<float>(std::fmod(ImGui::GetTime() * 0.6, 1.0));
    const float block = w * 0.25f, x0 = p.x + (w + block) * t - block;
    list->AddRectFilled(ImVec2(std::max(p.x, x0), p.y), ImVec2(std::min(p.x + w, x0 + block), p.y + h),
                        ImGui::GetColorU32(ImGuiCol_PlotHistogram), ImGui::GetStyle().FrameRounding);
    const ImVec2 ts = ImGui::CalcTextSize(overlay.c_str());
    list->AddText(ImVec2(p.x + (w - ts.x) * 0.5f, p.y + (h - ts.y) * 0.5f), ImGui::GetColorU32(ImGuiCol_Text), overlay.c_str());
    ImGui::Dummy(ImVec2(w, h));
}

// A card centred in `area`: heading in `accent`, wrapped body text, and a progress bar if fraction is given
// (>= 0 how far, < 0 unknown, NaN none).
inline void draw_card(ImDrawList& list, const FontSet& fonts, float text_size, const sf::FloatRect& area, sf::Color accent,
                      const std::string& heading, const std::string& body, double fraction = NAN, double time_s = 0.0) {
    const float w = std::min(area.width - 60.0f, 620.0f);
    ImFont* big = fonts.fonts[2] ? fonts.fonts[2] : fonts.pick(text_size * 1.35f);
    ImFont* regular = fonts.regular() ? fonts.regular() : fonts.pick(text_size);
    if (!big || !regular) return;
    const ImVec2 body_size = regular->CalcTextSizeA(regular->FontSize, 1e9f, w - 40.0f, body.c_str());
    const bool bar = !std::isnan(fraction);
    const float h = 70.0f + body_size.y + (bar ? 34.0f : 0.0f);
    const ImVec2 p(std::round(area.left + (area.width - w) * 0.5f), std::round(area.top + std::max(20.0f, area.height * 0.38f - h * 0.5f)));
    list.AddRectFilled(p, ImVec2(p.x + w, p.y + h), IM_COL32(20, 25, 40, 240), 8.0f);
    list.AddRect(p, ImVec2(p.x + w, p.y + h), im_color(accent), 8.0f, 0, 2.0f);
    list.AddText(big, big->FontSize, ImVec2(p.x + 20, p.y + 16), im_color(accent), heading.c_str());
    list.AddText(regular, regular->FontSize, ImVec2(p.x + 20, p.y + 56), im_color(palette::text), body.c_str(), nullptr, w - 40.0f);
    if (bar) {
        const ImVec2 a(p.x + 20, p.y + h - 32), b(p.x + w - 20, p.y + h - 18);
        list.AddRectFilled(a, b, IM_COL32(36, 44, 66, 255), 4.0f);
        if (fraction >= 0) {
            list.AddRectFilled(a, ImVec2(a.x + (b.x - a.x) * static_cast<float>(std::clamp(fraction, 0.0, 1.0)), b.y), im_color(accent), 4.0f);
        } else {
            const float t = static_cast<float>(std::fmod(time_s * 0.6, 1.0)), block = (b.x - a.x) * 0.25f;
            const float x0 = a.x + (b.x - a.x + block) * t - block;
            list.AddRectFilled(ImVec2(std::max(a.x, x0), a.y), ImVec2(std::min(b.x, x0 + block), b.y), im_color(accent), 4.0f);
        }
    }
}

// A panel's title at the top left of its canvas and, if given, a dimmer line under it.
inline void draw_panel_title(ImDrawList& list, const FontSet& fonts, float text_size, const sf::FloatRect& canvas, const std::string& title,
                             const std::string& sub) {
    const float pad = 16.0f;
    draw_text(list, fonts, text_size * 1.35f, ImVec2(canvas.left + pad, canvas.top + pad - 4.0f), im_color(palette::text), title, Align::left, true);
    if (!sub.empty())
        draw_text(list, fonts, text_size * 0.85f, ImVec2(canvas.left + pad, canvas.top + pad + text_size * 1.45f), im_color(palette::text_dim), sub,
                  Align::left, true);
}

// What a trainee-only panel shows in author mode: its title and a card saying an exercise folder is needed.
inline void draw_exercise_needed(ImDrawList& list, const FontSet& fonts, float text_size, const sf::FloatRect& canvas, const std::string& title,
                                 const std::string& why) {
    list.PushClipRect(ImVec2(canvas.left, canvas.top), ImVec2(canvas.left + canvas.width, canvas.top + canvas.height), true);
    draw_panel_title(list, fonts, text_size, canvas, title, "");
    draw_card(list, fonts, text_size, canvas, palette::text_dim, "An exercise folder is needed", why);
    list.PopClipRect();
}

}  // namespace wayward::viewer
