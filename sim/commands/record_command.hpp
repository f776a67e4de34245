// `wayward import`: a survey record (record.toml, positions.csv, observer.csv) into an exercise folder, and the
// ICRS lines the solve prints for an imported exercise.
#pragma once

#include <ostream>
#include <string>

#include "sim/exercise/exercise.hpp"
#include "sim/predict/predict.hpp"

namespace wayward {

struct ImportArgs {
    std::string record_dir;
    std::string out_dir;
    bool force = false;
};
int run_import(const ImportArgs& args, std::ostream& out);

// For an imported exercise: the prediction in ICRS right ascension and declination at its epoch (TDB), with the
// caution that goes with any real pointing. Empty for an invented exercise.
std::string icrs_pointing_text(const Brief& brief, const Prediction& p);

}  // namespace wayward
