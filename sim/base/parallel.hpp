// A minimal parallel loop over indices with std::thread: each index is processed exactly once, results are
// written by index, so the outcome never depends on the number of threads (nor on how many could be started).
#pragma once

#include <algorithm>
#include <atomic>
#include <cstddef>
#include <exception>
#include <mutex>
#include <thread>
#include <vector>

namespace wayward {

inline unsigned default_threads() { return std::max(1u, std::thread::hardware_concurrency()); }

template <class Fn>
void parallel_for(std::size_t n, unsigned threads, Fn&& fn) {
    threads = std::max(1u, std::min<unsigned>(threads, static_cast<unsigned>(std::max<std::size_t>(n, 1))));
    std::atomic<std::size_t> next{0};
    std::exception_ptr error;
    std::mutex error_mutex;
    auto worker = [&] {
        for (;;) {
            const std::size_t i = next.fetch_add(1);
            if (i >= n) return;
            try {
                fn(i);
            } catch (...) {
                std::lock_guard<std::mutex> lock(error_mutex);
                if (!error) error = std::current_exception();
                next = n;
                return;
            }
        }
    };
    // The calling thread works too. When the system cannot start another thread (no memory, a process limit), the
    // loop goes on with those it has: the results are the same, and no thread is left unjoined to abort the run.
    std::vector<std::thread> pool;
    try {
        pool.reserve(threads - 1);
        for (unsigned t = 1; t < threads; ++t) pool.emplace_back(worker);
    } catch (...) {
    }
    worker();
    for (auto& t : pool) t.join();
    if (error) std::rethrow_exception(error);
}

}  // namespace wayward
