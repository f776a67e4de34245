// libFuzzer harness: a team's own search plan (sim/search, `wayward search --strategy plan --plan FILE`).
#include "fuzz_common.hpp"
#include "sim/search/strategy.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    return wayward::fuzz::check_reader([&] { wayward::parse_plan_csv(wayward::fuzz::text_of(data, size), "plan.csv"); });
}
