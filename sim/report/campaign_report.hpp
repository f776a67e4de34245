// A campaign's report for people: summary.txt (success rate per settings and epoch with Wilson intervals,
// separations, calibration of the stated ellipses and radii, the luck fraction, failed cases) and four plots
// (success against epoch, separations, luck fractions, epoch of closest agreement).
#pragma once

#include <string>
#include <vector>

#include "sim/campaign/campaign.hpp"

namespace wayward {

// Writes DIR/summary.txt and the plots for the rows (sorted by case); returns the summary's text.
std::string write_campaign_report(const std::vector<CaseRow>& rows, const CampaignManifest& manifest, const std::string& dir);

}  // namespace wayward
