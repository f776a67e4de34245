// The bridge between SFML 2.5 windows and Dear ImGui 1.86: SFML events into ImGuiIO (keys by SFML key code,
// mouse, wheel, text, focus), frame begin/end, and rendering with the OpenGL3 renderer backend packaged in
// libimgui. Hand-written: no packaged library joins SFML to Dear ImGui.
//
// ImGui 1.86 samples io.KeysDown[] and io.MouseDown[] once per NewFrame(), so a press and a release that both
// arrive between two frames would never be seen. The bridge keeps such a key or button down until the frame
// that saw the press has ended, then releases it ("one-frame release latch").
#pragma once

#include <array>

#include <SFML/Graphics/RenderTexture.hpp>
#include <SFML/Graphics/RenderWindow.hpp>
#include <SFML/System/Clock.hpp>
#include <SFML/Window/Event.hpp>
#include <SFML/Window/Keyboard.hpp>

#include <imgui.h>

namespace wayward::viewer {

struct ImGuiSfmlBridge {
    static constexpr int key_count = sf::Keyboard::KeyCount;
    static constexpr int button_count = 5;
    // Pressed since the last frame began (a release must wait for that frame to see the press).
    std::array<bool, key_count> key_pressed_this_frame{};
    std::array<bool, key_count> key_release_pending{};
    std::array<bool, button_count> button_pressed_this_frame{};
    std::array<bool, button_count> button_release_pending{};
    bool renderer_ready = false;  // the OpenGL3 backend was initialised
    bool in_frame = false;        // between begin_frame and end_frame/render
    sf::Clock clock;              // frame-to-frame time when the caller gives none
};

// Fills io.KeyMap (ImGui keys -> SFML key codes) and the backend name. Needs a current ImGui context.
void bridge_configure_io(ImGuiIO& io);

// Creates the OpenGL3 renderer objects for `window` (its context is made current). Needs a current ImGui
// context with the fonts added. Returns false if the backend could not start.
bool bridge_init(ImGuiSfmlBridge& bridge, sf::RenderWindow& window);
void bridge_shutdown(ImGuiSfmlBridge& bridge);

// Passes one SFML event into the current context's io. Returns true if the event is an input event ImGui saw.
bool bridge_process_event(ImGuiSfmlBridge& bridge, const sf::Event& event);

// Starts an ImGui frame for a display of `size` pixels; `dt_seconds` <= 0 takes the time since the last frame
// (ImGui needs DeltaTime > 0, so it is clamped to at least 1 microsecond).
void bridge_begin_frame(ImGuiSfmlBridge& bridge, sf::Vector2u size, float dt_seconds = 0.0f);
// Ends the frame without drawing (ImGui::EndFrame) and applies the latched releases.
void bridge_end_frame(ImGuiSfmlBridge& bridge);
// Ends the frame, draws it into `window` with the OpenGL3 backend (on top of whatever SFML drew), and applies
// the latched releases.
void bridge_render(ImGuiSfmlBridge& bridge, sf::RenderWindow& window);

// Renders one draw list (recorded in window pixels, the box at `origin` of `size` pixels) into `texture` with
// the same OpenGL3 renderer, on a transparent ground; the window's context must be re-activated afterwards.
// Returns false if the texture could not be made active.
bool bridge_render_list_to_texture(ImDrawList& list, ImVec2 origin, ImVec2 size, sf::RenderTexture& texture);

// The ImGuiMouseButton for an SFML button (-1 if ImGui has none).
int imgui_mouse_button(sf::Mouse::Button button);

}  // namespace wayward::viewer
