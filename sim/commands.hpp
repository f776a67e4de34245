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

}  // namespace wayward
