// Atomic file output; see fileio.hpp.
#include "sim/io/fileio.hpp"

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <stdexcept>

#include <fcntl.h>
#include <unistd.h>

namespace wayward {

std::string temporary_path_for(const std::string& path) {
    return path + ".tmp-" + std::to_string(::getpid());
}

void commit_file(const std::string& from, const std::string& to) {
    if (std::rename(from.c_str(), to.c_str()) != 0) {
        const std::string why = std::strerror(errno);
        std::remove(from.c_str());
        throw std::runtime_error("cannot write " + to + ": " + why);
    }
}

void write_file_atomic(const std::string& path, const std::string& content) {
    const std::string tmp = temporary_path_for(path);
    const int fd = ::open(tmp.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
    if (fd < 0) throw std::runtime_error("cannot write " + path + ": " + std::strerror(errno));
    std::size_t done = 0;
    while (done < content.size()) {
        const ssize_t n = ::write(fd, content.data() + done, content.size() - done);
        if (n < 0) {
            if (errno == EINTR) continue;
            const std::string why = std::strerror(errno);
            ::close(fd);
            std::remove(tmp.c_str());
            throw std::runtime_error("cannot write " + path + ": " + why);
        }
        done += static_cast<std::size_t>(n);
    }
    if (::fsync(fd) != 0 || ::close(fd) != 0) {
        std::remove(tmp.c_str());
        throw std::runtime_error("cannot write " + path + ": " + std::strerror(errno));
    }
    commit_file(tmp, path);
}

std::vector<std::string> split_csv_line(const std::string& line) {
    std::vector<std::string> cells;
    std::size_t start = 0;
    for (;;) {
        const std::size_t comma = line.find(',', start);
        cells.push_back(line.substr(start, comma == std::string::npos ? std::string::npos : comma - start));
        if (comma == std::string::npos) break;
        start = comma + 1;
    }
    return cells;
}

}  // namespace wayward
