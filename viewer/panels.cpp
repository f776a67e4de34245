// The list of panels in this build. See panels.hpp.
#include "viewer/panels.hpp"

namespace wayward::viewer {

std::vector<std::unique_ptr<Panel>> make_panels() {
    std::vector<std::unique_ptr<Panel>> panels;
    panels.push_back(make_system_panel());
    panels.push_back(make_sky_panel());
    panels.push_back(make_residuals_panel());
    panels.push_back(make_solve_panel());
    panels.push_back(make_score_panel());
    panels.push_back(make_search_panel());
    return panels;
}

std::vector<std::string> panel_names() {
    std::vector<std::string> names;
    for (const auto& p : make_panels()) names.emplace_back(p->name());
    return names;
}

}  // namespace wayward::viewer
