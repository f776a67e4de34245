// Shared by the viewer tests that feed the window's events without a window: SFML events built by hand.
#pragma once

#include <SFML/Window/Event.hpp>

namespace wayward::testing {

inline sf::Event key_event(sf::Event::EventType type, sf::Keyboard::Key code) {
    sf::Event e;
    e.type = type;
    e.key = {code, false, false, false, false};
    return e;
}

inline sf::Event button_event(sf::Event::EventType type, sf::Mouse::Button b, int x, int y) {
    sf::Event e;
    e.type = type;
    e.mouseButton = {b, x, y};
    return e;
}

inline sf::Event move_event(int x, int y) {
    sf::Event e;
    e.type = sf::Event::MouseMoved;
    e.mouseMove = {x, y};
    return e;
}

inline sf::Event wheel_event(sf::Mouse::Wheel wheel, float delta, int x, int y) {
    sf::Event e;
    e.type = sf::Event::MouseWheelScrolled;
    e.mouseWheelScroll = {wheel, delta, x, y};
    return e;
}

inline sf::Event press(sf::Mouse::Button b, int x, int y) { return button_event(sf::Event::MouseButtonPressed, b, x, y); }
inline sf::Event release(sf::Mouse::Button b, int x, int y) { return button_event(sf::Event::MouseButtonReleased, b, x, y); }

}  // namespace wayward::testing
