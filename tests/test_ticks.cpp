// Axis ticks for plots drawn outside sim/report (sim/report/ticks): linear axes take the PNG figures' nice
// ticks, log axes decades with 2 and 5 between them over short ranges, labels with the decimals the spacing needs.
#include <doctest/doctest.h>

#include <string>
#include <vector>

#include "sim/report/plot.hpp"
#include "sim/report/ticks.hpp"

using namespace wayward;

TEST_CASE("axis ticks: linear ticks are the figures' nice ticks, log ticks are decades with 2 and 5 when short") {
    CHECK(axis_ticks(0.0, 10.0, 6, false) == plot::nice_ticks(0.0, 10.0, 6).values);
    CHECK(axis_ticks(-3.7, 12.2, 5, false) == plot::nice_ticks(-3.7, 12.2, 5).values);
    // 1 to 100: two decades, so 1 2 5 10 20 50 100 (1-2-5 sequence, common practice).
    CHECK(axis_ticks(1.0, 100.0, 6, true) == std::vector<double>{1, 2, 5, 10, 20, 50, 100});
    // 0.01 to 1e4: six decades, decades only.
    CHECK(axis_ticks(0.01, 1e4, 6, true) == std::vector<double>{0.01, 0.1, 1, 10, 100, 1000, 10000});
    CHECK(axis_ticks(0.0, 10.0, 6, true).empty());   // a log axis needs a positive start
    CHECK(axis_ticks(5.0, 5.0, 6, false).empty());   // an empty range
}

TEST_CASE("axis tick labels: as many decimals as the spacing needs, a true minus sign") {
    CHECK(axis_tick_label(0.5, 0.5, false) == "0.5");
    CHECK(axis_tick_label(20.0, 10.0, false) == "20");
    CHECK(axis_tick_label(-2.0, 1.0, false) == "\u22122");
    CHECK(axis_tick_label(0.05, 0.0, true) == "0.05");  // on a log axis each tick is its own spacing
    CHECK(axis_tick_label(100.0, 0.0, true) == "100");
}
