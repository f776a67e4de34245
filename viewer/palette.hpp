// The viewer's colours: the Okabe-Ito colour-blind-safe palette (Okabe & Ito 2008, "Color Universal Design")
// for everything that carries meaning, plus the neutral background and grid tones. One colour per body role.
#pragma once

#include <cstdint>

#include <SFML/Graphics/Color.hpp>

#include <imgui.h>

#include "sim/physics/system.hpp"

namespace wayward::viewer::palette {

// Okabe-Ito.
inline const sf::Color orange{230, 159, 0};
inline const sf::Color sky_blue{86, 180, 233};
inline const sf::Color bluish_green{0, 158, 115};
inline const sf::Color yellow{240, 228, 66};
inline const sf::Color blue{0, 114, 178};
inline const sf::Color vermillion{213, 94, 0};
inline const sf::Color reddish_purple{204, 121, 167};

// Neutrals.
inline const sf::Color background{12, 16, 26};
inline const sf::Color panel_background{18, 23, 36};
inline const sf::Color grid{52, 60, 80};
inline const sf::Color grid_strong{80, 90, 115};
inline const sf::Color text{225, 228, 235};
inline const sf::Color text_dim{150, 158, 175};

// Meanings.
inline const sf::Color star = yellow;
inline const sf::Color observer = bluish_green;
inline const sf::Color known = sky_blue;
inline const sf::Color hidden = vermillion;
inline const sf::Color prediction = orange;            // the trainee's own prediction
inline const sf::Color solution = blue;                // the solver's prediction
inline const sf::Color unobservable = reddish_purple;  // the elongation-limit region around the star
inline const sf::Color set_aside{150, 158, 175};       // observations set aside as outliers (= text_dim)

// Observing eras in the residual plots, told apart by colour and marker (palette order).
inline const sf::Color era_colours[] = {sky_blue, orange, bluish_green, yellow, reddish_purple, blue};

inline sf::Color for_body(wayward::Role role, bool is_observer) {
    if (role == wayward::Role::star) return star;
    if (role == wayward::Role::hidden) return hidden;
    return is_observer ? observer : known;
}

inline sf::Color with_alpha(sf::Color c, std::uint8_t alpha) {
    c.a = alpha;
    return c;
}

inline ImVec4 to_imgui(sf::Color c) { return ImVec4(c.r / 255.0f, c.g / 255.0f, c.b / 255.0f, c.a / 255.0f); }

}  // namespace wayward::viewer::palette
