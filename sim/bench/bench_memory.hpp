// Heap accounting for the benchmarks: the bench executable replaces the global operator new and delete with
// counting versions (a size header in front of each block), so a benchmark can report the peak of live heap
// bytes over its run (reset_heap_peak before, heap_peak_bytes - the live bytes before, after). Heap only: stacks and mapped files are not counted. Counting costs two relaxed atomic operations per
// allocation, so benchmarks measured beside it are slowed alike.
#pragma once

#include <cstdint>

namespace wayward::bench {

// Live heap bytes now, and the peak since the last reset_heap_peak().
std::int64_t heap_live_bytes();
std::int64_t heap_peak_bytes();
void reset_heap_peak();

}  // namespace wayward::bench
