// The Residuals panel's pieces that tests use without a window: the layout of its plots (one row per observed
// planet, O−C in λ·cos β and in β against year), where each observation is drawn, which one is under the
// mouse, the hover text. The residuals and their RMS table are sim's (fit_known, residual_summary).
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include <SFML/Graphics/Rect.hpp>

#include <imgui.h>

#include "sim/fit/known_fit.hpp"
#include "sim/fit/residual_summary.hpp"
#include "viewer/plot_widgets.hpp"

namespace wayward::viewer {

struct ResidualCell {
    std::size_t planet = 0;  // index into ModelSetup::planets
    int component = 0;       // 0: λ·cos β, 1: β
    ImVec2 lo, hi;           // the cell's box, window pixels
    PlotAxis x, y;
    std::string title;
};

struct ResidualLayout {
    std::vector<ResidualCell> cells;
    float legend_y = 0.0f;   // top of the legend row
};

ResidualLayout residual_layout(const KnownFit& fit, const sf::FloatRect& canvas, float text_size);
// The observation's marker centre in its cell (NaN if it is not drawn, e.g. set aside and hidden).
std::vector<ImVec2> residual_positions(const KnownFit& fit, const ResidualLayout& layout, const ResidualCell& cell,
                                       float text_size, bool show_set_aside);
// The observation under the mouse (within 8 px of its marker), if any.
std::optional<std::size_t> residual_under(const KnownFit& fit, const ResidualLayout& layout, float text_size, bool show_set_aside,
                                          ImVec2 mouse);
// The hover text: year and date, target, era, O−C in both coordinates, σ in use, and whether it was set aside.
std::vector<std::string> describe_observation(const KnownFit& fit, std::size_t k);

// The sidebar's RMS table by planet and era is sim's residual_summary (sim/fit/residual_summary.hpp).

}  // namespace wayward::viewer
