// Notices if floating-point contraction (fused multiply-add) sneaks back into the build: with
// -ffp-contract=off, a*b - c is rounded twice and differs from the fused result for these inputs.
#include <doctest/doctest.h>

#include <cmath>

namespace {
// volatile copies keep the compiler from folding the expression at compile time.
double product_minus(double a, double b, double c) {
    volatile double va = a, vb = b, vc = c;
    return va * vb - vc;
}
}  // namespace

TEST_CASE("no fused multiply-add contraction in the build") {
    const double a = 1.0 + std::ldexp(1.0, -30), b = 1.0 - std::ldexp(1.0, -30), c = 1.0;
    const double separate = product_minus(a, b, c);
    const double fused = std::fma(a, b, -c);
    CHECK(fused == -std::ldexp(1.0, -60));
    CHECK(separate == 0.0);  // a*b rounds to 1 before the subtraction
}
