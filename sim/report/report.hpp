// Reports for people and machines: the residual table (CSV), residual plots, and text summaries.
#pragma once

#include <ostream>
#include <string>
#include <vector>

#include "sim/fit/known_fit.hpp"
#include "sim/report/plot.hpp"

namespace wayward {

// residuals.csv: one row per observation, O - C in arcsec with the weights used and whether it was set aside.
std::string residuals_csv(const ModelSetup& setup, const std::vector<std::array<double, 2>>& residuals);
// residuals.png: O - C in lambda cos(beta) and beta against year, one pair of panels per observed planet,
// eras told apart by colour and marker.
void residuals_plot(const ModelSetup& setup, const std::vector<std::array<double, 2>>& residuals, const std::string& path,
                    const std::string& title);
// The figure residuals_plot draws: kept observations by era, those set aside by the clipping in grey, and every
// point beyond the y range (scaled to the kept points' 99th percentile) as a triangle at the edge it lies beyond.
plot::Figure residuals_figure(const ModelSetup& setup, const std::vector<std::array<double, 2>>& residuals, const std::string& title);
// RMS per era and planet, chi2 per degree of freedom.
void print_residual_summary(const KnownFit& fit, std::ostream& out);

}  // namespace wayward
