// libFuzzer harness: a team's stated region as a HEALPix map in FITS (sim/score/stated_sky_map, `sky_map = "FILE"` in
// a prediction file), read in the invented exercise's frame and, the same bytes, as an imported record's ICRS map.
#include <Eigen/Core>

#include "fuzz_common.hpp"
#include "sim/score/stated_sky_map.hpp"

// cfitsio sizes some buffers from header cards and checks what calloc returns (a NULL is its MEMORY_ALLOCATION
// error, which the reader turns into InputError). AddressSanitizer would instead abort on a request above its own
// ceiling (a one-minute run found a 2e16-byte calloc from a mangled header; the release build refuses that file
// with exit status 2), so here, as in the product, an impossible allocation returns NULL. Real overruns, leaks and
// undefined behaviour are still findings.
extern "C" const char* __asan_default_options() { return "allocator_may_return_null=1"; }

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string path = wayward::fuzz::input_file(wayward::fuzz::text_of(data, size), "sky_map");
    const Eigen::Matrix3d turn = Eigen::Matrix3d::Identity();
    wayward::fuzz::check_reader([&] { (void)wayward::read_stated_sky_map(path, nullptr); });
    wayward::fuzz::check_reader([&] { (void)wayward::read_stated_sky_map(path, &turn); });
    return 0;
}
