// libFuzzer harness: the observer ephemeris reader, observer.csv (sim/exercise).
#include "fuzz_common.hpp"
#include "sim/exercise/exercise.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    return wayward::fuzz::check_reader([&] { wayward::parse_observer_csv(wayward::fuzz::text_of(data, size), "observer.csv"); });
}
