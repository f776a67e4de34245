// Benchmarks of the telescope search rehearsal (sim/night): a 30-night rehearsal's CPU time per night, and how it
// grows with the region's area (the solution's 1-sigma radius) and the star density (the telescope's limit).
#pragma once

namespace wayward::bench {

void register_search_benchmarks();

}  // namespace wayward::bench
