// The SFML -> ImGui bridge: injected SFML events (clicks, drags, a key pressed and released between two
// frames, wheel, text, modifiers, focus) reach ImGui's io and its widgets. No window or GL context is needed:
// the bridge runs without its renderer here.
#include <doctest/doctest.h>

#include <cfloat>
#include <cstring>

#include "viewer/imgui_sfml_bridge.hpp"
#include "viewer_events.hpp"

using namespace wayward::viewer;
using namespace wayward::testing;

namespace {

struct ImGuiHarness {
    ImGuiContext* context = nullptr;
    ImGuiSfmlBridge bridge;
    ImGuiHarness() {
        context = ImGui::CreateContext();
        ImGuiIO& io = ImGui::GetIO();
        io.IniFilename = nullptr;
        io.Fonts->AddFontDefault();
        unsigned char* pixels = nullptr;
        int w = 0, h = 0;
        io.Fonts->GetTexDataAsRGBA32(&pixels, &w, &h);  // builds the atlas, as a renderer would
        bridge_configure_io(io);
    }
    ~ImGuiHarness() { ImGui::DestroyContext(context); }
    void begin() { bridge_begin_frame(bridge, {800, 600}, 1.0f / 60.0f); }
    void end() { bridge_end_frame(bridge); }
    void send(const sf::Event& e) { bridge_process_event(bridge, e); }
};


sf::Event text_event(sf::Uint32 c) {
    sf::Event e;
    e.type = sf::Event::TextEntered;
    e.text = {c};
    return e;
}

constexpr ImGuiWindowFlags fixed_window = ImGuiWindowFlags_NoTitleBar | ImGuiWindowFlags_NoMove |
                                          ImGuiWindowFlags_NoResize | ImGuiWindowFlags_NoSavedSettings;

void begin_test_window() {
    ImGui::SetNextWindowPos(ImVec2(0, 0));
    ImGui::SetNextWindowSize(ImVec2(400, 300));
    ImGui::Begin("test", nullptr, fixed_window);
}

}  // namespace

TEST_SUITE("viewer_bridge") {

TEST_CASE("a key pressed and released between two frames is seen down for one frame, then released") {
    ImGuiHarness h;
    h.begin();
    h.end();
    h.send(key_event(sf::Event::KeyPressed, sf::Keyboard::Space));
    h.send(key_event(sf::Event::KeyReleased, sf::Keyboard::Space));
    h.begin();
    CHECK(ImGui::IsKeyDown(sf::Keyboard::Space));
    CHECK(ImGui::IsKeyPressed(sf::Keyboard::Space, false));
    h.end();
    CHECK_FALSE(ImGui::GetIO().KeysDown[sf::Keyboard::Space]);  // the latched release applies after that frame
    h.begin();
    CHECK_FALSE(ImGui::IsKeyDown(sf::Keyboard::Space));
    CHECK(ImGui::IsKeyReleased(sf::Keyboard::Space));
    h.end();
    h.begin();
    CHECK_FALSE(ImGui::IsKeyReleased(sf::Keyboard::Space));
    h.end();
}

TEST_CASE("a key held across frames is released at once when its release comes later") {
    ImGuiHarness h;
    h.send(key_event(sf::Event::KeyPressed, sf::Keyboard::A));
    h.begin();
    CHECK(ImGui::IsKeyPressed(sf::Keyboard::A, false));
    h.end();
    h.begin();
    CHECK(ImGui::IsKeyDown(sf::Keyboard::A));
    CHECK_FALSE(ImGui::IsKeyPressed(sf::Keyboard::A, false));
    h.end();
    h.send(key_event(sf::Event::KeyReleased, sf::Keyboard::A));
    CHECK_FALSE(ImGui::GetIO().KeysDown[sf::Keyboard::A]);
    h.begin();
    CHECK(ImGui::IsKeyReleased(sf::Keyboard::A));
    h.end();
}

TEST_CASE("the key map points ImGui's navigation and editing keys at SFML key codes") {
    ImGuiHarness h;
    const ImGuiIO& io = ImGui::GetIO();
    CHECK(io.KeyMap[ImGuiKey_Space] == sf::Keyboard::Space);
    CHECK(io.KeyMap[ImGuiKey_LeftArrow] == sf::Keyboard::Left);
    CHECK(io.KeyMap[ImGuiKey_RightArrow] == sf::Keyboard::Right);
    CHECK(io.KeyMap[ImGuiKey_Backspace] == sf::Keyboard::Backspace);
    CHECK(io.KeyMap[ImGuiKey_Enter] == sf::Keyboard::Enter);
    CHECK(io.KeyMap[ImGuiKey_Z] == sf::Keyboard::Z);
}

TEST_CASE("modifier keys set io.KeyCtrl / KeyShift / KeyAlt") {
    ImGuiHarness h;
    h.send(key_event(sf::Event::KeyPressed, sf::Keyboard::LControl));
    h.send(key_event(sf::Event::KeyPressed, sf::Keyboard::RShift));
    h.begin();
    CHECK(ImGui::GetIO().KeyCtrl);
    CHECK(ImGui::GetIO().KeyShift);
    CHECK_FALSE(ImGui::GetIO().KeyAlt);
    h.end();
    h.send(key_event(sf::Event::KeyReleased, sf::Keyboard::LControl));
    h.send(key_event(sf::Event::KeyPressed, sf::Keyboard::LAlt));
    h.begin();
    CHECK_FALSE(ImGui::GetIO().KeyCtrl);
    CHECK(ImGui::GetIO().KeyAlt);
    h.end();
}

TEST_CASE("a click that starts and ends between two frames presses an ImGui button once") {
    ImGuiHarness h;
    ImVec2 centre;
    int pressed = 0;
    auto frame = [&] {
        h.begin();
        begin_test_window();
        if (ImGui::Button("Press me", ImVec2(120, 40))) ++pressed;
        centre = ImVec2((ImGui::GetItemRectMin().x + ImGui::GetItemRectMax().x) * 0.5f,
                        (ImGui::GetItemRectMin().y + ImGui::GetItemRectMax().y) * 0.5f);
        ImGui::End();
        h.end();
    };
    frame();
    frame();
    const int x = static_cast<int>(centre.x), y = static_cast<int>(centre.y);
    h.send(move_event(x, y));
    frame();
    h.send(button_event(sf::Event::MouseButtonPressed, sf::Mouse::Left, x, y));
    h.send(button_event(sf::Event::MouseButtonReleased, sf::Mouse::Left, x, y));
    for (int k = 0; k < 4; ++k) frame();
    CHECK(pressed == 1);
    CHECK(ImGui::GetIO().MousePos.x == doctest::Approx(x));
    CHECK(ImGui::GetIO().MousePos.y == doctest::Approx(y));
}

TEST_CASE("a click between frames is seen as clicked, then released") {
    ImGuiHarness h;
    h.send(button_event(sf::Event::MouseButtonPressed, sf::Mouse::Right, 30, 40));
    h.send(button_event(sf::Event::MouseButtonReleased, sf::Mouse::Right, 30, 40));
    h.begin();
    CHECK(ImGui::IsMouseClicked(ImGuiMouseButton_Right));
    CHECK(ImGui::IsMouseDown(ImGuiMouseButton_Right));
    h.end();
    h.begin();
    CHECK(ImGui::IsMouseReleased(ImGuiMouseButton_Right));
    CHECK_FALSE(ImGui::IsMouseDown(ImGuiMouseButton_Right));
    h.end();
}

TEST_CASE("dragging across a slider moves its value") {
    ImGuiHarness h;
    float value = 0.0f;
    ImVec2 lo, hi;
    auto frame = [&] {
        h.begin();
        begin_test_window();
        ImGui::SetNextItemWidth(300);
        ImGui::SliderFloat("##drag", &value, 0.0f, 100.0f);
        lo = ImGui::GetItemRectMin();
        hi = ImGui::GetItemRectMax();
        ImGui::End();
        h.end();
    };
    frame();
    frame();
    const int y = static_cast<int>((lo.y + hi.y) * 0.5f);
    const int x0 = static_cast<int>(lo.x + 4), x1 = static_cast<int>(hi.x - 4);
    h.send(move_event(x0, y));
    frame();
    h.send(button_event(sf::Event::MouseButtonPressed, sf::Mouse::Left, x0, y));
    frame();
    CHECK(value < 5.0f);
    CHECK(ImGui::IsMouseDown(ImGuiMouseButton_Left));
    for (int x = x0; x <= x1; x += 40) {
        h.send(move_event(x, y));
        frame();
    }
    h.send(move_event(x1, y));
    frame();
    CHECK(ImGui::IsMouseDragging(ImGuiMouseButton_Left));
    CHECK(ImGui::GetMouseDragDelta(ImGuiMouseButton_Left).x == doctest::Approx(x1 - x0));
    h.send(button_event(sf::Event::MouseButtonReleased, sf::Mouse::Left, x1, y));
    frame();
    frame();
    CHECK(value > 95.0f);
    CHECK_FALSE(ImGui::IsMouseDown(ImGuiMouseButton_Left));
}

TEST_CASE("the wheel reaches io for one frame and scrolls a window") {
    ImGuiHarness h;
    float scroll = 0.0f;
    auto frame = [&] {
        h.begin();
        begin_test_window();
        for (int k = 0; k < 100; ++k) ImGui::Text("line %d", k);
        scroll = ImGui::GetScrollY();
        ImGui::End();
    };
    frame();
    h.end();
    h.send(move_event(200, 150));
    frame();
    h.end();
    h.send(wheel_event(sf::Mouse::VerticalWheel, -2.0f, 200, 150));
    h.send(wheel_event(sf::Mouse::HorizontalWheel, 1.0f, 200, 150));
    frame();
    CHECK(ImGui::GetIO().MouseWheel == doctest::Approx(-2.0f));
    CHECK(ImGui::GetIO().MouseWheelH == doctest::Approx(1.0f));
    h.end();
    frame();
    CHECK(ImGui::GetIO().MouseWheel == doctest::Approx(0.0f));
    CHECK(scroll > 0.0f);
    h.end();
}

TEST_CASE("typed text reaches a focused text field, control characters do not") {
    ImGuiHarness h;
    char buffer[64] = "";
    auto frame = [&](bool focus) {
        h.begin();
        begin_test_window();
        if (focus) ImGui::SetKeyboardFocusHere();
        ImGui::InputText("##text", buffer, sizeof buffer);
        ImGui::End();
        h.end();
    };
    frame(true);
    frame(false);
    h.send(text_event('a'));
    h.send(text_event(0x03BB));  // λ
    h.send(text_event(8));       // backspace arrives as a key event, not as text
    h.send(text_event(127));
    REQUIRE(ImGui::GetIO().InputQueueCharacters.Size == 2);
    CHECK(ImGui::GetIO().InputQueueCharacters[0] == 'a');
    CHECK(ImGui::GetIO().InputQueueCharacters[1] == 0x03BB);
    frame(false);
    frame(false);
    CHECK(std::strcmp(buffer, "a\xce\xbb") == 0);  // "aλ" in UTF-8
    CHECK(ImGui::GetIO().WantTextInput);
}

TEST_CASE("leaving the window invalidates the mouse position") {
    ImGuiHarness h;
    h.send(move_event(10, 10));
    h.begin();
    CHECK(ImGui::IsMousePosValid());
    h.end();
    sf::Event left;
    left.type = sf::Event::MouseLeft;
    h.send(left);
    h.begin();
    CHECK_FALSE(ImGui::IsMousePosValid());
    h.end();
}

TEST_CASE("losing focus releases held keys") {
    ImGuiHarness h;
    h.send(key_event(sf::Event::KeyPressed, sf::Keyboard::D));
    h.begin();
    CHECK(ImGui::IsKeyDown(sf::Keyboard::D));
    h.end();
    sf::Event lost;
    lost.type = sf::Event::LostFocus;
    h.send(lost);
    h.begin();
    CHECK_FALSE(ImGui::IsKeyDown(sf::Keyboard::D));
    h.end();
}

TEST_CASE("frames get the display size and a positive time step") {
    ImGuiHarness h;
    bridge_begin_frame(h.bridge, {1024, 640}, 0.0f);  // 0: measured by the bridge's clock
    CHECK(ImGui::GetIO().DisplaySize.x == doctest::Approx(1024));
    CHECK(ImGui::GetIO().DisplaySize.y == doctest::Approx(640));
    CHECK(ImGui::GetIO().DeltaTime > 0.0f);
    bridge_end_frame(h.bridge);
    bridge_begin_frame(h.bridge, {1024, 640}, 0.0f);  // immediately again: still > 0
    CHECK(ImGui::GetIO().DeltaTime > 0.0f);
    bridge_end_frame(h.bridge);
}

}  // TEST_SUITE
