// The luck curve of a score as a table (CSV: year, separation, inside the field) and a plot.
#pragma once

#include <string>

#include "sim/score/score.hpp"

namespace wayward {

// Writes luck.csv and luck.png beside each other.
void write_luck(const Score& s, const std::string& csv_path, const std::string& png_path, const std::string& title);

}  // namespace wayward
