// libFuzzer harness: the campaign spec reader (sim/campaign); scenario paths resolve against the bundled scenarios.
#include "fuzz_common.hpp"
#include "sim/campaign/campaign.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    return wayward::fuzz::check_reader(
        [&] { wayward::parse_campaign_spec(wayward::fuzz::text_of(data, size), "fuzz.toml", WAYWARD_SOURCE_DIR "/scenarios"); });
}
