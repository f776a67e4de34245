// The search rehearsal's picture: the fields searched drawn over the probability map (the region's samples, in
// the tangent plane about the predicted centre), the found place, and the probability covered night by night.
#pragma once

#include <string>

#include "sim/night/rehearsal.hpp"

namespace wayward {

// Written atomically; std::runtime_error naming the path on failure.
void save_search_png(const RehearsalResult& r, const Telescope& tel, double epoch0_year, const std::string& path);

}  // namespace wayward
