// SFML -> Dear ImGui input, frames and OpenGL3 rendering. See imgui_sfml_bridge.hpp (hand-written: there is
// no packaged SFML backend for ImGui).
#include "viewer/imgui_sfml_bridge.hpp"

#include <cfloat>

#include <backends/imgui_impl_opengl3.h>

namespace wayward::viewer {

namespace {

bool valid_key(sf::Keyboard::Key key) { return key >= 0 && key < ImGuiSfmlBridge::key_count; }

void update_modifiers(ImGuiIO& io) {
    using K = sf::Keyboard;
    io.KeyCtrl = io.KeysDown[K::LControl] || io.KeysDown[K::RControl];
    io.KeyShift = io.KeysDown[K::LShift] || io.KeysDown[K::RShift];
    io.KeyAlt = io.KeysDown[K::LAlt] || io.KeysDown[K::RAlt];
    io.KeySuper = io.KeysDown[K::LSystem] || io.KeysDown[K::RSystem];
}

void apply_latched_releases(ImGuiSfmlBridge& bridge) {
    ImGuiIO& io = ImGui::GetIO();
    for (int k = 0; k < ImGuiSfmlBridge::key_count; ++k)
        if (bridge.key_release_pending[k]) {
            io.KeysDown[k] = false;
            bridge.key_release_pending[k] = false;
        }
    for (int b = 0; b < ImGuiSfmlBridge::button_count; ++b)
        if (bridge.button_release_pending[b]) {
            io.MouseDown[b] = false;
            bridge.button_release_pending[b] = false;
        }
    update_modifiers(io);
}

}  // namespace

int imgui_mouse_button(sf::Mouse::Button button) {
    switch (button) {
        case sf::Mouse::Left: return ImGuiMouseButton_Left;
        case sf::Mouse::Right: return ImGuiMouseButton_Right;
        case sf::Mouse::Middle: return ImGuiMouseButton_Middle;
        case sf::Mouse::XButton1: return 3;
        case sf::Mouse::XButton2: return 4;
        default: return -1;
    }
}

void bridge_configure_io(ImGuiIO& io) {
    using K = sf::Keyboard;
    io.BackendPlatformName = "wayward_sfml_bridge";
    io.KeyMap[ImGuiKey_Tab] = K::Tab;
    io.KeyMap[ImGuiKey_LeftArrow] = K::Left;
    io.KeyMap[ImGuiKey_RightArrow] = K::Right;
    io.KeyMap[ImGuiKey_UpArrow] = K::Up;
    io.KeyMap[ImGuiKey_DownArrow] = K::Down;
    io.KeyMap[ImGuiKey_PageUp] = K::PageUp;
    io.KeyMap[ImGuiKey_PageDown] = K::PageDown;
    io.KeyMap[ImGuiKey_Home] = K::Home;
    io.KeyMap[ImGuiKey_End] = K::End;
    io.KeyMap[ImGuiKey_Insert] = K::Insert;
    io.KeyMap[ImGuiKey_Delete] = K::Delete;
    io.KeyMap[ImGuiKey_Backspace] = K::Backspace;
    io.KeyMap[ImGuiKey_Space] = K::Space;
    io.KeyMap[ImGuiKey_Enter] = K::Enter;
    io.KeyMap[ImGuiKey_Escape] = K::Escape;
    io.KeyMap[ImGuiKey_KeyPadEnter] = K::Enter;  // SFML 2.5 reports the keypad's Enter as Enter
    io.KeyMap[ImGuiKey_A] = K::A;
    io.KeyMap[ImGuiKey_C] = K::C;
    io.KeyMap[ImGuiKey_V] = K::V;
    io.KeyMap[ImGuiKey_X] = K::X;
    io.KeyMap[ImGuiKey_Y] = K::Y;
    io.KeyMap[ImGuiKey_Z] = K::Z;
}

bool bridge_init(ImGuiSfmlBridge& bridge, sf::RenderWindow& window) {
    if (!window.setActive(true)) return false;
    bridge_configure_io(ImGui::GetIO());
    // GLSL 1.30 runs on every OpenGL 3.0+ context, including the default compatibility context SFML creates,
    // so SFML's own drawing and ImGui's share one context.
    bridge.renderer_ready = ImGui_ImplOpenGL3_Init("#version 130");
    bridge.clock.restart();
    return bridge.renderer_ready;
}

void bridge_shutdown(ImGuiSfmlBridge& bridge) {
    if (bridge.renderer_ready) ImGui_ImplOpenGL3_Shutdown();
    bridge.renderer_ready = false;
}

bool bridge_process_event(ImGuiSfmlBridge& bridge, const sf::Event& event) {
    ImGuiIO& io = ImGui::GetIO();
    switch (event.type) {
        case sf::Event::KeyPressed: {
            const auto code = event.key.code;
            if (!valid_key(code)) return false;
            io.KeysDown[code] = true;
            bridge.key_pressed_this_frame[code] = true;
            bridge.key_release_pending[code] = false;
            update_modifiers(io);
            return true;
        }
        case sf::Event::KeyReleased: {
            const auto code = event.key.code;
            if (!valid_key(code)) return false;
            if (bridge.key_pressed_this_frame[code])
                bridge.key_release_pending[code] = true;  // let the coming frame see the press first
            else
                io.KeysDown[code] = false;
            update_modifiers(io);
            return true;
        }
        case sf::Event::TextEntered:
            // Control characters arrive as key events; ImGui wants printable text only.
            if (event.text.unicode >= 32 && event.text.unicode != 127) io.AddInputCharacter(event.text.unicode);
            return true;
        case sf::Event::MouseMoved:
            io.MousePos = ImVec2(static_cast<float>(event.mouseMove.x), static_cast<float>(event.mouseMove.y));
            return true;
        case sf::Event::MouseButtonPressed: {
            io.MousePos = ImVec2(static_cast<float>(event.mouseButton.x), static_cast<float>(event.mouseButton.y));
            const int b = imgui_mouse_button(event.mouseButton.button);
            if (b < 0) return false;
            io.MouseDown[b] = true;
            bridge.button_pressed_this_frame[b] = true;
            bridge.button_release_pending[b] = false;
            return true;
        }
        case sf::Event::MouseButtonReleased: {
            io.MousePos = ImVec2(static_cast<float>(event.mouseButton.x), static_cast<float>(event.mouseButton.y));
            const int b = imgui_mouse_button(event.mouseButton.button);
            if (b < 0) return false;
            if (bridge.button_pressed_this_frame[b])
                bridge.button_release_pending[b] = true;
            else
                io.MouseDown[b] = false;
            return true;
        }
        case sf::Event::MouseWheelScrolled:  // (the older MouseWheelMoved duplicates it and is ignored)
            if (event.mouseWheelScroll.wheel == sf::Mouse::VerticalWheel)
                io.MouseWheel += event.mouseWheelScroll.delta;
            else
                io.MouseWheelH += event.mouseWheelScroll.delta;
            return true;
        case sf::Event::MouseLeft:
            io.MousePos = ImVec2(-FLT_MAX, -FLT_MAX);
            return true;
        case sf::Event::GainedFocus:
            io.AddFocusEvent(true);
            return true;
        case sf::Event::LostFocus:
            // Releases that happen while another window has focus never arrive: let go of everything now.
            io.AddFocusEvent(false);
            for (bool& down : io.KeysDown) down = false;
            for (bool& down : io.MouseDown) down = false;
            bridge.key_pressed_this_frame.fill(false);
            bridge.key_release_pending.fill(false);
            bridge.button_pressed_this_frame.fill(false);
            bridge.button_release_pending.fill(false);
            update_modifiers(io);
            return true;
        default:
            return false;
    }
}

void bridge_begin_frame(ImGuiSfmlBridge& bridge, sf::Vector2u size, float dt_seconds) {
    ImGuiIO& io = ImGui::GetIO();
    io.DisplaySize = ImVec2(static_cast<float>(size.x), static_cast<float>(size.y));
    const float measured = bridge.clock.restart().asSeconds();
    const float dt = dt_seconds > 0.0f ? dt_seconds : measured;
    io.DeltaTime = dt > 1e-6f ? dt : 1e-6f;
    if (bridge.renderer_ready) ImGui_ImplOpenGL3_NewFrame();
    ImGui::NewFrame();
    // This frame has now sampled every press so far: releases arriving from here on may apply at once.
    bridge.key_pressed_this_frame.fill(false);
    bridge.button_pressed_this_frame.fill(false);
    bridge.in_frame = true;
}

void bridge_end_frame(ImGuiSfmlBridge& bridge) {
    if (bridge.in_frame) ImGui::EndFrame();
    bridge.in_frame = false;
    apply_latched_releases(bridge);
}

bool bridge_render_list_to_texture(ImDrawList& list, ImVec2 origin, ImVec2 size, sf::RenderTexture& texture) {
    if (!texture.setActive(true)) return false;
    texture.clear(sf::Color::Transparent);
    ImDrawList* lists[] = {&list};
    ImDrawData data;
    data.Valid = true;
    data.CmdLists = lists;
    data.CmdListsCount = 1;
    data.TotalVtxCount = list.VtxBuffer.Size;
    data.TotalIdxCount = list.IdxBuffer.Size;
    data.DisplayPos = origin;
    data.DisplaySize = size;
    data.FramebufferScale = ImVec2(1.0f, 1.0f);
    ImGui_ImplOpenGL3_RenderDrawData(&data);
    texture.display();
    return true;
}

void bridge_render(ImGuiSfmlBridge& bridge, sf::RenderWindow& window) {
    if (bridge.in_frame) {
        ImGui::Render();
        if (bridge.renderer_ready && window.setActive(true)) ImGui_ImplOpenGL3_RenderDrawData(ImGui::GetDrawData());
    }
    bridge.in_frame = false;
    apply_latched_releases(bridge);
}

}  // namespace wayward::viewer
