// Text tables for people: cells padded to a width counted in displayed characters, not bytes (labels may hold
// Greek letters and other multi-byte signs), and numbers that show "-" when they are not finite.
#pragma once

#include <cmath>
#include <cstdio>
#include <string>

namespace wayward {

// Characters a UTF-8 string shows (continuation bytes do not count).
inline std::size_t display_width(const std::string& s) {
    std::size_t chars = 0;
    for (unsigned char c : s) chars += (c & 0xC0) != 0x80 ? 1 : 0;
    return chars;
}

// `s` padded with spaces to `width` displayed characters: on the left (right-aligned) unless `left_align`.
inline std::string pad(const std::string& s, std::size_t width, bool left_align = false) {
    const std::size_t chars = display_width(s);
    if (chars >= width) return s;
    return left_align ? s + std::string(width - chars, ' ') : std::string(width - chars, ' ') + s;
}

// A number in a printf format, or "-" when it is not finite.
inline std::string table_number(const char* printf_format, double v) {
    if (!std::isfinite(v)) return "-";
    char buf[64];
    std::snprintf(buf, sizeof buf, printf_format, v);
    return buf;
}

}  // namespace wayward
