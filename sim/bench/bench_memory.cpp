// Counting global operator new/delete. See bench_memory.hpp. Hand-written because
// no Debian package offers a heap high-water mark for a region of code (mallinfo2 gives only the arena in use,
// which freed-but-kept memory blurs; valgrind's massif is far too slow for these runs).
#include "sim/bench/bench_memory.hpp"

#include <atomic>
#include <cstdlib>
#include <new>

namespace {

std::atomic<std::int64_t> live{0}, peak{0}, allocations{0}, total{0};
constexpr std::size_t header = 16;  // keeps the block aligned for any fundamental type

void* counted_alloc(std::size_t n) {
    void* p = std::malloc(n + header);
    if (!p) return nullptr;
    *static_cast<std::size_t*>(p) = n;
    const std::int64_t now = live.fetch_add(static_cast<std::int64_t>(n), std::memory_order_relaxed) + static_cast<std::int64_t>(n);
    std::int64_t seen = peak.load(std::memory_order_relaxed);
    while (now > seen && !peak.compare_exchange_weak(seen, now, std::memory_order_relaxed)) {
    }
    allocations.fetch_add(1, std::memory_order_relaxed);
    total.fetch_add(static_cast<std::int64_t>(n), std::memory_order_relaxed);
    return static_cast<char*>(p) + header;
}

void counted_free(void* q) noexcept {
    if (!q) return;
    void* p = static_cast<char*>(q) - header;
    live.fetch_sub(static_cast<std::int64_t>(*static_cast<std::size_t*>(p)), std::memory_order_relaxed);
    std::free(p);
}

void* counted_new(std::size_t n) {
    void* p = counted_alloc(n == 0 ? 1 : n);
    if (!p) throw std::bad_alloc();
    return p;
}

}  // namespace

void* operator new(std::size_t n) { return counted_new(n); }
void* operator new[](std::size_t n) { return counted_new(n); }
void* operator new(std::size_t n, const std::nothrow_t&) noexcept { return counted_alloc(n == 0 ? 1 : n); }
void* operator new[](std::size_t n, const std::nothrow_t&) noexcept { return counted_alloc(n == 0 ? 1 : n); }
void operator delete(void* p) noexcept { counted_free(p); }
void operator delete[](void* p) noexcept { counted_free(p); }
void operator delete(void* p, std::size_t) noexcept { counted_free(p); }
void operator delete[](void* p, std::size_t) noexcept { counted_free(p); }
void operator delete(void* p, const std::nothrow_t&) noexcept { counted_free(p); }
void operator delete[](void* p, const std::nothrow_t&) noexcept { counted_free(p); }

namespace wayward::bench {

std::int64_t heap_live_bytes() { return live.load(); }
std::int64_t heap_peak_bytes() { return peak.load(); }
void reset_heap_peak() { peak.store(live.load()); }

}  // namespace wayward::bench
