// libFuzzer harness: the solution reader (load_solution in sim/solve), through a file as the commands read it.
#include "fuzz_common.hpp"
#include "sim/solve/solve.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string path = wayward::fuzz::input_file(wayward::fuzz::text_of(data, size), "solution");
    return wayward::fuzz::check_reader([&] { wayward::load_solution(path); });
}
