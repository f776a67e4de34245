// libFuzzer harness: the telescope file reader (sim/exercise, `wayward search --telescope FILE`).
#include "fuzz_common.hpp"
#include "sim/exercise/telescope.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    return wayward::fuzz::check_reader([&] { wayward::parse_telescope(wayward::fuzz::text_of(data, size), "telescope.toml"); });
}
