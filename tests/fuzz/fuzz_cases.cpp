// libFuzzer harness: the campaign cases table reader, cases.csv (sim/campaign), through a file as a resume reads it.
#include "fuzz_common.hpp"
#include "sim/campaign/campaign.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string path = wayward::fuzz::input_file(wayward::fuzz::text_of(data, size), "cases");
    return wayward::fuzz::check_reader([&] { wayward::read_case_rows(path); });
}
