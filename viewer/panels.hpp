// The viewer's panels: one class per view, behind one small interface, and the list of panels this build has.
// A panel adds its own widgets to the sidebar, takes the canvas's mouse events that ImGui does not want, and
// draws into the canvas: SFML for bulk point sprites (the star field), ImGui's background draw list for
// anti-aliased lines, discs and text. Panels read the model (sim's numbers) and the controls; they compute no
// physics. Panels: system, sky (both modes), residuals, solve, score, search (trainee mode; in author mode they say what
// they need).
#pragma once

#include <memory>
#include <string>
#include <vector>

#include <SFML/Graphics/Rect.hpp>
#include <SFML/Graphics/RenderTarget.hpp>
#include <SFML/Graphics/Texture.hpp>
#include <SFML/Window/Event.hpp>

#include <imgui.h>

#include "viewer/controls.hpp"
#include "viewer/fonts.hpp"
#include "viewer/model.hpp"

namespace wayward::viewer {

// What panels draw with, owned by the app.
struct DrawContext {
    const sf::Texture* glow = nullptr;  // soft round sprite for stars
    FontSet fonts;                      // ImGui fonts for canvas text (DejaVu Sans)
    float text_size = 16.0f;            // the regular size, pixels
};

class Panel {
public:
    virtual ~Panel() = default;
    virtual const char* name() const = 0;   // the --panel name
    virtual const char* title() const = 0;  // shown in the sidebar and on the canvas
    // Widgets for this panel in the sidebar (inside the sidebar window).
    virtual void sidebar(ViewerControls& controls, ViewerModel& model) = 0;
    // A mouse event over the canvas (or during a drag that began there). `canvas` is in window pixels.
    virtual void on_mouse(const sf::Event& event, const sf::FloatRect& canvas, ViewerControls& controls,
                          const ViewerModel& model) = 0;
    // Draws the canvas. `target` has a view whose coordinates are window pixels clipped to `canvas`.
    virtual void draw(sf::RenderTarget& target, ImDrawList& list, const sf::FloatRect& canvas,
                      const ViewerControls& controls, const ViewerModel& model, const DrawContext& context) = 0;
    // Returns the view to its default.
    virtual void reset_view(ViewerControls& controls) = 0;
};

std::unique_ptr<Panel> make_system_panel();
std::unique_ptr<Panel> make_sky_panel();
std::unique_ptr<Panel> make_residuals_panel();
std::unique_ptr<Panel> make_solve_panel();
std::unique_ptr<Panel> make_score_panel();
std::unique_ptr<Panel> make_search_panel();  // viewer/panel_search.cpp: the nights of `wayward search`

// Every panel of this build, in sidebar order.
std::vector<std::unique_ptr<Panel>> make_panels();
// Their --panel names.
std::vector<std::string> panel_names();

}  // namespace wayward::viewer
