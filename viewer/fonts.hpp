// Fonts for the viewer: DejaVu Sans from assets/fonts/ for both ImGui (with the glyph ranges the labels
// need: Latin-1 for ° and ·, Greek for λ β σ, punctuation for ″ and ′, arrows, minus and other operators,
// geometric shapes for ▶ ◀) and SFML's canvas text.
#pragma once

#include <array>
#include <string>

#include <SFML/Graphics/Font.hpp>

#include <imgui.h>

namespace wayward::viewer {

// The assets folder: $WAYWARD_ASSET_DIR if set, else the source tree's assets/ (fixed at build time).
std::string asset_dir();
std::string font_path();  // asset_dir() + "/fonts/DejaVuSans.ttf"

// The glyph ranges added to the ImGui atlas (a static, zero-terminated array).
const ImWchar* viewer_glyph_ranges();

// The same face at a few pixel sizes, so canvas text of any size is drawn from the nearest one (crisp).
struct FontSet {
    std::array<ImFont*, 3> fonts{};  // small, regular (the ImGui default), large
    ImFont* regular() const { return fonts[1]; }
    ImFont* pick(float size_px) const;
};

// Adds DejaVu Sans at three sizes to the current context's atlas and makes the regular one the default; on
// failure falls back to ImGui's built-in font and returns false (then the non-Latin glyphs show as '?').
bool load_imgui_fonts(FontSet& set, float regular_px, std::string* error = nullptr);

bool load_sfml_font(sf::Font& font, std::string* error = nullptr);

}  // namespace wayward::viewer
