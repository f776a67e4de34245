// The commands of the `wayward` tool as library functions (the CLI only parses arguments into these structs),
// so tests and the viewer can run exactly what a user runs.
#pragma once

#include <cstdint>
#include <ostream>
#include <string>
#include <vector>

namespace wayward {

struct EphemerisArgs {
    std::string scenario;
    std::vector<double> days;
    std::uint64_t seed = 1;
    std::string method = "rkf78";
};
int run_ephemeris(const EphemerisArgs& args, std::ostream& out);

struct NewArgs {
    std::string scenario;
    std::uint64_t seed = 1;
    std::string out_dir;
    std::string key_dir;  // default: OUT/answer-key
    bool force = false;
};
// Makes an exercise folder and prints its summary.
int run_new(const NewArgs& args, std::ostream& out);

}  // namespace wayward
