// The oracle every reader's fuzz harness shares: a reader may accept its input or refuse it with InputError
// (file, line, field); anything else (another exception, a crash, a sanitizer report, a hang) is a finding.
#pragma once

#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <exception>
#include <string>

#include <unistd.h>

#include "sim/base/errors.hpp"

namespace wayward::fuzz {

template <class F>
int check_reader(F&& read) {
    try {
        read();
    } catch (const InputError&) {
        // A clear refusal is the expected outcome for most inputs.
    } catch (const std::exception& e) {
        std::fprintf(stderr, "reader threw something other than InputError: %s\n", e.what());
        std::abort();
    }
    return 0;
}

inline std::string text_of(const std::uint8_t* data, std::size_t size) { return std::string(reinterpret_cast<const char*>(data), size); }

// Readers that take a path get the input through one file per process (in /dev/shm when there is one).
inline std::string input_file(const std::string& text, const char* name) {
    static const std::string path = [&] {
        const char* dir = ::access("/dev/shm", W_OK) == 0 ? "/dev/shm" : "/tmp";
        return std::string(dir) + "/wayward-fuzz-" + name + "-" + std::to_string(::getpid());
    }();
    std::FILE* f = std::fopen(path.c_str(), "wb");
    if (!f) std::abort();
    std::fwrite(text.data(), 1, text.size(), f);
    std::fclose(f);
    return path;
}

}  // namespace wayward::fuzz
