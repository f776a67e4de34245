// Progress reporting; see progress.hpp.
#include "sim/base/progress.hpp"

#include <cmath>
#include <cstdio>
#include <iostream>

#include <unistd.h>

namespace wayward {

Progress::Progress(std::ostream& out, bool quiet)
    : out_(out), quiet_(quiet), terminal_(&out == &std::cerr && ::isatty(STDERR_FILENO)),
      start_(std::chrono::steady_clock::now()), last_draw_(start_) {}

void Progress::update(const std::string& stage, double fraction, long done, long total) {
    if (quiet_) return;
    std::lock_guard<std::mutex> lock(mutex_);
    const auto now = std::chrono::steady_clock::now();
    const double elapsed = std::chrono::duration<double>(now - start_).count();
    fraction = std::fmin(std::fmax(fraction, 0.0), 1.0);
    char tail[128] = "";
    if (done >= 0 && total > 0 && elapsed > 0) {
        const double rate = static_cast<double>(done) / elapsed;
        const double left = rate > 0 ? static_cast<double>(total - done) / rate : 0.0;
        std::snprintf(tail, sizeof tail, " %ld/%ld, %.2f/s, %.0f s left", done, total, rate, left);
    } else if (fraction > 0.02) {
        std::snprintf(tail, sizeof tail, ", %.0f s left", elapsed * (1.0 - fraction) / fraction);
    }
    if (terminal_) {
        if (std::chrono::duration<double>(now - last_draw_).count() < 0.1 && fraction < 1.0 && stage == last_stage_) return;
        last_draw_ = now;
        const int width = 30, filled = static_cast<int>(std::lround(fraction * width));
        out_ << "\r[" << std::string(static_cast<std::size_t>(filled), '#') << std::string(static_cast<std::size_t>(width - filled), ' ')
             << "] " << static_cast<int>(std::lround(fraction * 100)) << "% " << stage << tail << "\x1b[K" << std::flush;
    } else {
        const int decile = static_cast<int>(fraction * 10);
        if (stage == last_stage_ && decile == last_decile_) return;
        last_decile_ = decile;
        out_ << static_cast<int>(std::lround(fraction * 100)) << "% " << stage << tail << "\n" << std::flush;
    }
    last_stage_ = stage;
}

void Progress::finish() {
    if (quiet_) return;
    std::lock_guard<std::mutex> lock(mutex_);
    if (terminal_) out_ << "\n" << std::flush;
}

}  // namespace wayward
