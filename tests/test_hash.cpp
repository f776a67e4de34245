// SHA-256 (sim/io/hash): a published test vector.
#include <doctest/doctest.h>

#include "sim/io/hash.hpp"

using namespace wayward;

TEST_CASE("SHA-256 of a known message") {
    // Source: FIPS 180-2, appendix B.1 example ("abc").
    CHECK(sha256_hex("abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
}
