// libFuzzer harness: the brief reader (sim/exercise).
#include "fuzz_common.hpp"
#include "sim/exercise/exercise.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    return wayward::fuzz::check_reader([&] { wayward::parse_brief(wayward::fuzz::text_of(data, size), "brief.toml"); });
}
