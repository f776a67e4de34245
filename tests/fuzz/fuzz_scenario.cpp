// libFuzzer harness: the scenario TOML reader (sim/scenario).
#include "fuzz_common.hpp"
#include "sim/scenario/scenario.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    return wayward::fuzz::check_reader([&] { wayward::parse_scenario(wayward::fuzz::text_of(data, size), "fuzz.toml"); });
}
