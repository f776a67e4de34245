// Progress on long work, written to stderr: a redrawn bar with rate and time left on a terminal, plain lines
// (at most one per 10% or per stage change) otherwise. Thread-safe. No packaged C++ progress library exists in
// Debian 12, hence this small one.
#pragma once

#include <chrono>
#include <mutex>
#include <ostream>
#include <string>

namespace wayward {

class Progress {
public:
    explicit Progress(std::ostream& out, bool quiet = false);
    // fraction in [0, 1]; `done`/`total` optional counts (for a rate).
    void update(const std::string& stage, double fraction, long done = -1, long total = -1);
    void finish();

private:
    std::ostream& out_;
    bool quiet_;
    bool terminal_;
    std::mutex mutex_;
    std::string last_stage_;
    int last_decile_ = -1;
    std::chrono::steady_clock::time_point start_, last_draw_;
};

}  // namespace wayward
