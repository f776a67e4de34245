// Benchmarks of a stated region's two figures in score (the truth's rank and the field's share): weighted samples
// through their kernel density against a HEALPix map summed over its pixels, and the cost of reading a map file.
#pragma once

namespace wayward::bench {

void register_region_benchmarks();

}  // namespace wayward::bench
