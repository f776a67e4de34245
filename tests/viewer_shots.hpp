// Shared by the viewer render tests: run wayward-view in screenshot mode and load the PNG it writes; count and
// compare its pixels; the Okabe-Ito colours the viewer gives the roles (viewer/palette.hpp).
#pragma once

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <set>
#include <string>
#include <utility>

#include <SFML/Graphics/Image.hpp>

#include <doctest/doctest.h>

#include <unistd.h>

#include "test_helpers.hpp"

namespace wayward::testing {

struct Shot {
    CommandResult run;
    sf::Image image;
    bool loaded = false;
};

// A fresh scratch folder for this test process, named by `tag`.
inline std::filesystem::path fresh_shot_dir(const std::string& tag) {
    const std::filesystem::path d = std::filesystem::temp_directory_path() / (tag + "-" + std::to_string(::getpid()));
    std::filesystem::remove_all(d);
    std::filesystem::remove_all(d.string() + "-answer-key");  // a key left by an earlier run under the same pid
    std::filesystem::create_directories(d);
    return d;
}

inline Shot take_screenshot(const std::filesystem::path& dir, const std::string& args, const std::string& name) {
    const std::filesystem::path png = dir / name;
    std::filesystem::remove(png);
    Shot s;
    s.run = run_command(std::string(WAYWARD_VIEW) + " " + args + " --screenshot " + png.string());
    s.loaded = std::filesystem::exists(png) && s.image.loadFromFile(png.string());
    return s;
}

// The screenshots of one test file, in a scratch folder made on first use.
class ShotFolder {
public:
    explicit ShotFolder(std::string tag) : tag_(std::move(tag)) {}
    const std::filesystem::path& dir() const {
        if (dir_.empty()) dir_ = fresh_shot_dir(tag_);
        return dir_;
    }
    Shot take(const std::string& args, const std::string& name) const { return take_screenshot(dir(), args, name); }

private:
    std::string tag_;
    mutable std::filesystem::path dir_;
};

inline void require_display() {
    const char* d = std::getenv("DISPLAY");
    REQUIRE_MESSAGE((d && *d), "the render tests need an X display: run them under xvfb-run");
}

namespace pixels {

inline bool near(sf::Color p, sf::Color c, int tol) {
    return std::abs(p.r - c.r) <= tol && std::abs(p.g - c.g) <= tol && std::abs(p.b - c.b) <= tol;
}

// Whether a pixel belongs to the drawing: right of the sidebar (min(350 px, half the width), viewer/app.cpp)
// and outside the top-right and bottom-right corners, where the panels put their legends (with a swatch of
// every colour they use).
inline bool in_drawing(const sf::Image& img, unsigned x, unsigned y) {
    const sf::Vector2u size = img.getSize();
    if (x < std::min(350u, size.x / 2)) return false;
    const bool right_corner = x + 240 > size.x;
    return !(right_corner && (y < 140 || y + 140 > size.y));
}

// Pixels within `tol` (per channel) of `c`, optionally only in the drawing.
inline int count_near(const sf::Image& img, sf::Color c, int tol, bool drawing_only = false) {
    int n = 0;
    const sf::Vector2u size = img.getSize();
    for (unsigned y = 0; y < size.y; ++y)
        for (unsigned x = 0; x < size.x; ++x)
            n += near(img.getPixel(x, y), c, tol) && (!drawing_only || in_drawing(img, x, y));
    return n;
}

// Pixels near `c` in `a` and not in `b`: something of that colour moved.
inline int count_moved(const sf::Image& a, const sf::Image& b, sf::Color c, int tol) {
    if (a.getSize() != b.getSize()) return 0;
    int n = 0;
    for (unsigned y = 0; y < a.getSize().y; ++y)
        for (unsigned x = 0; x < a.getSize().x; ++x) n += near(a.getPixel(x, y), c, tol) && !near(b.getPixel(x, y), c, tol);
    return n;
}

// Distinct colours on every other pixel of every other row.
inline std::size_t distinct_colours(const sf::Image& img) {
    std::set<sf::Uint32> colours;
    const sf::Vector2u size = img.getSize();
    for (unsigned y = 0; y < size.y; y += 2)
        for (unsigned x = 0; x < size.x; x += 2) colours.insert(img.getPixel(x, y).toInteger());
    return colours.size();
}

inline double differing_fraction(const sf::Image& a, const sf::Image& b) {
    if (a.getSize() != b.getSize()) return 1.0;
    const sf::Vector2u size = a.getSize();
    double n = 0;
    for (unsigned y = 0; y < size.y; ++y)
        for (unsigned x = 0; x < size.x; ++x) n += a.getPixel(x, y) != b.getPixel(x, y);
    return n / (static_cast<double>(size.x) * size.y);
}

// The Okabe-Ito colours the viewer gives the roles (viewer/palette.hpp).
inline const sf::Color star_yellow{240, 228, 66};
inline const sf::Color hidden_vermillion{213, 94, 0};
inline const sf::Color known_sky_blue{86, 180, 233};
inline const sf::Color solver_blue{0, 114, 178};
inline const sf::Color era_orange{230, 159, 0};
inline const sf::Color era_green{0, 158, 115};
inline const sf::Color refused_purple{204, 121, 167};

}  // namespace pixels

}  // namespace wayward::testing
