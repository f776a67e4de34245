// Small helpers shared by the tests: paths, whole-file reads and writes, and running the CLI.
#pragma once

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

namespace wayward::testing {

inline std::string source_path(const std::string& rel) { return std::string(WAYWARD_SOURCE_DIR) + "/" + rel; }

// The whole file as bytes (empty if it cannot be read).
inline std::string read(const std::filesystem::path& p) {
    std::ifstream in(p, std::ios::binary);
    std::ostringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

inline void write(const std::filesystem::path& p, const std::string& text) { std::ofstream(p, std::ios::binary) << text; }

struct CommandResult {
    int status = -1;
    std::string output;  // stdout and stderr together
};

inline CommandResult run_command(const std::string& cmd) {
    CommandResult r;
    FILE* p = popen((cmd + " 2>&1").c_str(), "r");
    if (!p) return r;
    char buf[4096];
    std::size_t n;
    while ((n = fread(buf, 1, sizeof buf, p)) > 0) r.output.append(buf, n);
    const int st = pclose(p);
    r.status = WIFEXITED(st) ? WEXITSTATUS(st) : -1;
    return r;
}

inline CommandResult run_cli(const std::string& args) { return run_command(std::string(WAYWARD_CLI) + " " + args); }

}  // namespace wayward::testing
