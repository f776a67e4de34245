// Text and colour for the plots: UTF-8 checking (cairo needs valid UTF-8), the font, measuring, wrapping and
// drawing labels, the Okabe–Ito palette and the font's glyph coverage. Part of the plot module (plot.hpp).
#include <cstdint>

#include "sim/report/plot_internal.hpp"

namespace wayward::plot {

namespace detail {

namespace {

constexpr const char* font_family = "DejaVu Sans";

// cairo puts the whole context into an error state on invalid UTF-8, so every label is checked first and
// bad bytes become U+FFFD. Hand-written: cairo's own UTF-8 decoder is not public.
std::string sanitize_utf8(const std::string& s) {
    std::string out;
    out.reserve(s.size());
    const auto* p = reinterpret_cast<const unsigned char*>(s.data());
    const std::size_t n = s.size();
    std::size_t i = 0;
    while (i < n) {
        const unsigned char c = p[i];
        std::size_t len = 0;
        std::uint32_t cp = 0;
        if (c < 0x80) { len = 1; cp = c; }
        else if ((c & 0xE0) == 0xC0) { len = 2; cp = c & 0x1Fu; }
        else if ((c & 0xF0) == 0xE0) { len = 3; cp = c & 0x0Fu; }
        else if ((c & 0xF8) == 0xF0) { len = 4; cp = c & 0x07u; }
        bool ok = len > 0 && i + len <= n;
        for (std::size_t k = 1; ok && k < len; ++k) {
            if ((p[i + k] & 0xC0) != 0x80) ok = false;
            else cp = (cp << 6) | (p[i + k] & 0x3Fu);
        }
        // Reject overlong forms, surrogates, values beyond U+10FFFF and control characters other than tab.
        if (ok) {
            const std::uint32_t min_cp[5] = {0, 0, 0x80, 0x800, 0x10000};
            if (cp < min_cp[len] || (cp >= 0xD800 && cp <= 0xDFFF) || cp > 0x10FFFF) ok = false;
            if (cp < 0x20 && cp != '\t') ok = false;
        }
        if (ok) {
            out.append(s, i, len);
            i += len;
        } else {
            out += "\xEF\xBF\xBD";
            i += 1;
        }
    }
    return out;
}

}  // namespace

void set_font(cairo_t* cr, Font f) {
    cairo_select_font_face(cr, font_family, f.italic ? CAIRO_FONT_SLANT_ITALIC : CAIRO_FONT_SLANT_NORMAL,
                           f.bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
    cairo_set_font_size(cr, f.size);
}

double text_width(cairo_t* cr, const std::string& s, Font f) {
    if (s.empty()) return 0.0;
    set_font(cr, f);
    cairo_text_extents_t e;
    cairo_text_extents(cr, sanitize_utf8(s).c_str(), &e);
    return e.x_advance;
}

double line_height(cairo_t* cr, Font f) {
    set_font(cr, f);
    cairo_font_extents_t fe;
    cairo_font_extents(cr, &fe);
    return fe.ascent + fe.descent;
}

std::vector<std::string> wrap_text(cairo_t* cr, const std::string& s, double max_w, Font f) {
    std::vector<std::string> lines;
    std::string line, word;
    auto flush_word = [&] {
        if (word.empty()) return;
        const std::string joined = line.empty() ? word : line + " " + word;
        if (!line.empty() && text_width(cr, joined, f) > max_w) {
            lines.push_back(line);
            line = word;
        } else {
            line = joined;
        }
        word.clear();
    };
    for (char ch : s) {
        if (ch == ' ') flush_word();
        else word += ch;
    }
    flush_word();
    if (!line.empty() || lines.empty()) lines.push_back(line);
    return lines;
}

void set_color(cairo_t* cr, Color c, double alpha_scale) {
    cairo_set_source_rgba(cr, c.r, c.g, c.b, std::clamp(c.a * alpha_scale, 0.0, 1.0));
}

void draw_text(cairo_t* cr, const std::string& s, double x, double y, Font f, Color c, double halign,
               double valign, double angle) {
    if (s.empty()) return;
    const std::string t = sanitize_utf8(s);
    set_font(cr, f);
    cairo_font_extents_t fe;
    cairo_font_extents(cr, &fe);
    cairo_text_extents_t te;
    cairo_text_extents(cr, t.c_str(), &te);
    cairo_save(cr);
    cairo_translate(cr, x, y);
    cairo_rotate(cr, angle);
    cairo_move_to(cr, -halign * te.x_advance, fe.ascent - valign * (fe.ascent + fe.descent));
    set_color(cr, c);
    cairo_show_text(cr, t.c_str());
    cairo_new_path(cr);
    cairo_restore(cr);
}

}  // namespace detail

using namespace detail;

Color palette(std::size_t i) {
    // Okabe & Ito (2008) colours as 8-bit sRGB (from memory; widely reproduced).
    static const unsigned hex[8] = {0x0072B2, 0xD55E00, 0x009E73, 0xCC79A7, 0xE69F00, 0x56B4E9, 0x000000, 0xF0E442};
    const unsigned h = hex[i % 8];
    return Color{((h >> 16) & 0xFF) / 255.0, ((h >> 8) & 0xFF) / 255.0, (h & 0xFF) / 255.0, 1.0};
}

bool font_has_glyphs(const std::string& utf8) {
    const std::string t = sanitize_utf8(utf8);
    if (t != utf8) return false;
    ContextPtr mc = measuring_context();
    set_font(mc.get(), tick_font);
    cairo_scaled_font_t* sf = cairo_get_scaled_font(mc.get());
    cairo_glyph_t* glyphs = nullptr;
    int count = 0;
    const cairo_status_t st = cairo_scaled_font_text_to_glyphs(sf, 0.0, 0.0, t.c_str(), static_cast<int>(t.size()), &glyphs,
                                                               &count, nullptr, nullptr, nullptr);
    bool ok = st == CAIRO_STATUS_SUCCESS;
    for (int i = 0; ok && i < count; ++i)
        if (glyphs[i].index == 0) ok = false;  // glyph 0 is the font's "missing glyph"
    cairo_glyph_free(glyphs);
    return ok;
}

}  // namespace wayward::plot
