// Shared by the observation, plausibility and exercise-folder tests: a small scenario with two eras of noisy
// observations (the noise-statistics scenario), a one-place text replacement and fresh temp folders.
#pragma once

#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include <unistd.h>

#include <doctest/doctest.h>

#include "test_helpers.hpp"

namespace wayward::testing {

namespace fs = std::filesystem;

inline const char* kNoisy = R"(
[scenario]
name = "noise test"
epoch0_year = 1800.0
span_years = 120

[star]
name = "S"
mass = 1.0

[[body]]
name = "Obs"
role = "known"
observer = true
mass = 3e-6
a = 1.0
e = 0.01
mean_anomaly_deg = 0

[[body]]
name = "Far"
role = "known"
mass = 5e-5
a = 12.0
e = 0.02
i_deg = 3.0
node_deg = 20
mean_anomaly_deg = 40

[observing]
targets = ["Far"]
elongation_limit_deg = 30.0
search_epoch_year = 1900.0
field_radius_deg = 1.0

[[observing.era]]
label = "old"
start_year = 1800.0
end_year = 1860.0
per_season = 40
sigma_lon_arcsec = 2.0
sigma_lat_arcsec = 3.0
offset_lon_arcsec = 1.5
offset_lat_arcsec = -0.8
drift_lon_arcsec_per_yr = 0.05
drift_lat_arcsec_per_yr = 0.0
precision_arcsec = 0.5
outlier_fraction = 0.05
outlier_sigma_arcsec = 60.0
records_sigma = false

[[observing.era]]
label = "new"
start_year = 1860.0
end_year = 1900.0
per_season = 40
sigma_lon_arcsec = 0.3
sigma_lat_arcsec = 0.3
records_sigma = true
)";

inline std::string replace(std::string s, const std::string& from, const std::string& to) {
    const auto pos = s.find(from);
    REQUIRE(pos != std::string::npos);
    return s.replace(pos, from.size(), to);
}


inline fs::path fresh_dir(const std::string& name) {
    const fs::path p = fs::temp_directory_path() / ("wayward-test-" + name + "-" + std::to_string(::getpid()));
    fs::remove_all(p);
    fs::remove_all(p.string() + "-answer-key");  // a key left by an earlier run under the same pid
    return p;
}

}  // namespace wayward::testing
