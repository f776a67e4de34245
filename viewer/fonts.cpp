// Font loading for ImGui and SFML. See fonts.hpp.
#include "viewer/fonts.hpp"

#include <cmath>
#include <cstdlib>
#include <filesystem>

namespace wayward::viewer {

std::string asset_dir() {
    if (const char* env = std::getenv("WAYWARD_ASSET_DIR"); env && *env) return env;
    // An installed viewer (cmake --install) finds its font beside it: BIN/../share/wayward; a viewer run from the
    // build tree falls back to the source tree's assets/.
    std::error_code ec;
    const std::filesystem::path exe = std::filesystem::read_symlink("/proc/self/exe", ec);
    if (!ec) {
        const std::filesystem::path installed = exe.parent_path().parent_path() / WAYWARD_INSTALL_ASSET_SUBDIR;
        if (std::filesystem::is_regular_file(installed / "fonts" / "DejaVuSans.ttf", ec)) return installed.string();
    }
    return WAYWARD_ASSET_DIR;
}

std::string font_path() { return asset_dir() + "/fonts/DejaVuSans.ttf"; }

const ImWchar* viewer_glyph_ranges() {
    static const ImWchar ranges[] = {
        0x0020, 0x00FF,  // Basic Latin + Latin-1 (° U+00B0, · U+00B7, ± U+00B1)
        0x0370, 0x03FF,  // Greek (λ U+03BB, β U+03B2, σ U+03C3, Δ U+0394)
        0x2000, 0x206F,  // General punctuation (′ U+2032, ″ U+2033, – — …)
        0x2190, 0x21FF,  // Arrows
        0x2200, 0x22FF,  // Mathematical operators (− U+2212, ≈ ≤ ≥)
        0x25A0, 0x25FF,  // Geometric shapes (▶ ◀ ●)
        0,
    };
    return ranges;
}

ImFont* FontSet::pick(float size_px) const {
    ImFont* best = nullptr;
    for (ImFont* f : fonts)
        if (f && (!best || std::abs(f->FontSize - size_px) < std::abs(best->FontSize - size_px))) best = f;
    return best ? best : ImGui::GetFont();
}

bool load_imgui_fonts(FontSet& set, float regular_px, std::string* error) {
    ImGuiIO& io = ImGui::GetIO();
    const std::string path = font_path();
    std::error_code ec;
    // (ImGui asserts on a missing font file, so look before asking it to load one.)
    if (std::filesystem::is_regular_file(path, ec)) {
        const std::array<float, 3> sizes{std::round(regular_px * 0.82f), regular_px, std::round(regular_px * 1.4f)};
        bool ok = true;
        for (std::size_t k = 0; k < sizes.size(); ++k) {
            set.fonts[k] = io.Fonts->AddFontFromFileTTF(path.c_str(), sizes[k], nullptr, viewer_glyph_ranges());
            ok = ok && set.fonts[k];
        }
        if (ok) {
            io.FontDefault = set.fonts[1];
            return true;
        }
    }
    if (error) *error = "cannot read the font " + path + " (set WAYWARD_ASSET_DIR to the assets folder)";
    io.Fonts->Clear();
    ImFont* fallback = io.Fonts->AddFontDefault();
    set.fonts = {fallback, fallback, fallback};
    io.FontDefault = fallback;
    return false;
}

bool load_sfml_font(sf::Font& font, std::string* error) {
    const std::string path = font_path();
    if (font.loadFromFile(path)) return true;
    if (error) *error = "cannot read the font " + path + " (set WAYWARD_ASSET_DIR to the assets folder)";
    return false;
}

}  // namespace wayward::viewer
