// Atomic, link-safe file output and the folder lock; see fileio.hpp.
#include "sim/io/fileio.hpp"

#include <algorithm>
#include <cerrno>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <sstream>
#include <stdexcept>

#include <fcntl.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include "sim/base/errors.hpp"

namespace wayward {

namespace fs = std::filesystem;

namespace {

[[noreturn]] void fail_system(const std::string& path, int err) {
    throw std::runtime_error("cannot write " + path + ": " + std::strerror(err));
}

bool write_all(int fd, const std::string& content) {
    std::size_t done = 0;
    while (done < content.size()) {
        const ssize_t n = ::write(fd, content.data() + done, content.size() - done);
        if (n < 0) {
            if (errno == EINTR) continue;
            return false;
        }
        done += static_cast<std::size_t>(n);
    }
    return true;
}

}  // namespace

void refuse_link_at(const std::string& path, const std::string& field) {
    struct stat st{};
    if (::lstat(path.c_str(), &st) != 0) return;  // absent: fine
    if (S_ISLNK(st.st_mode))
        throw InputError(path, 0, field, "is a symbolic link; Wayward never writes through a link (remove it, or choose another folder)");
    if (!S_ISREG(st.st_mode))
        throw InputError(path, 0, field, S_ISDIR(st.st_mode) ? "is a folder, not a file" : "is not a regular file");
}

void write_file_atomic(const std::string& path, const std::string& content, mode_t mode) {
    refuse_link_at(path);
    const fs::path target(path);
    const fs::path dir = target.has_parent_path() ? target.parent_path() : fs::path(".");
    // mkostemps (glibc) opens with O_CREAT|O_EXCL|O_RDWR and a random six-character name, retrying on a clash:
    // an existing name, link or not, is never opened. The suffix-free template keeps the name recognisable.
    std::string name = (dir / ("." + target.filename().string() + temporary_marker + "XXXXXX")).string();
    const int fd = ::mkostemp(name.data(), O_CLOEXEC);
    if (fd < 0) fail_system(path, errno);
    auto fail = [&](int err) {
        ::close(fd);
        ::unlink(name.c_str());
        fail_system(path, err);
    };
    if (::fchmod(fd, mode) != 0) fail(errno);
    if (!write_all(fd, content)) fail(errno);
    if (::fsync(fd) != 0) fail(errno);
    if (::close(fd) != 0) {
        const int err = errno;
        ::unlink(name.c_str());
        fail_system(path, err);
    }
    // rename(2) replaces whatever is at the name (a link planted since the check above included) without following it.
    if (::rename(name.c_str(), path.c_str()) != 0) {
        const int err = errno;
        ::unlink(name.c_str());
        fail_system(path, err);
    }
}

int remove_stale_temporaries(const std::string& dir) {
    int removed = 0;
    std::error_code ec;
    for (fs::directory_iterator it(dir, ec), end; !ec && it != end; it.increment(ec)) {
        const std::string name = it->path().filename().string();
        if (name.empty() || name[0] != '.' || name.find(temporary_marker) == std::string::npos) continue;
        if (it->is_symlink(ec)) continue;
        if (it->is_directory(ec)) {
            // A private folder a FITS writer left (see write_sky_map_fits): its files go (a link inside is unlinked,
            // never followed), then the folder if it is empty; a folder within it is left alone.
            for (fs::directory_iterator in(it->path(), ec), stop; !ec && in != stop; in.increment(ec))
                if (!in->is_directory(ec) || in->is_symlink(ec)) fs::remove(in->path(), ec);
            ec.clear();
            if (fs::remove(it->path(), ec)) ++removed;
            ec.clear();
            continue;
        }
        if (!it->is_regular_file(ec)) continue;
        if (fs::remove(it->path(), ec)) ++removed;
    }
    return removed;
}

WriterLock::WriterLock(const std::string& dir, const std::string& field, LockWait how, double max_wait_seconds) {
    const std::string path = dir + "/.wayward.lock";
    fd_ = ::open(path.c_str(), O_RDWR | O_CREAT | O_NOFOLLOW | O_CLOEXEC, 0600);
    if (fd_ < 0) {
        const int err = errno;
        if (err == ELOOP) refuse_link_at(path, field);
        throw InputError(path, 0, field, std::string("cannot open the folder's lock file: ") + std::strerror(err));
    }
    struct stat st{};
    if (::fstat(fd_, &st) != 0 || !S_ISREG(st.st_mode)) {
        ::close(fd_);
        throw InputError(path, 0, field, "the folder's lock file is not a regular file");
    }
    // Waiting polls the non-blocking lock: a bounded wait never hangs behind a run that holds the folder forever.
    const int polls = how == LockWait::wait ? static_cast<int>(std::max(0.0, max_wait_seconds) * 10.0) : 0;
    int rc = ::flock(fd_, LOCK_EX | LOCK_NB);
    for (int k = 0; rc != 0 && errno == EWOULDBLOCK && k < polls; ++k) {
        ::usleep(100000);
        rc = ::flock(fd_, LOCK_EX | LOCK_NB);
    }
    if (rc != 0) {
        const int err = errno;
        ::close(fd_);
        if (err == EWOULDBLOCK)
            throw InputError(dir, 0, field, "another wayward run is writing in this folder; wait for it to finish, or choose another folder");
        throw InputError(path, 0, field, std::string("cannot lock the folder: ") + std::strerror(err));
    }
}

WriterLock::~WriterLock() {
    if (fd_ >= 0) ::close(fd_);  // closing releases the flock
}

std::string csv_cell(const std::string& text) {
    std::string cell;
    cell.reserve(text.size());
    bool quote = false;
    for (char c : text) {
        if (c == '\n' || c == '\r') c = ' ';
        if (c == ',' || c == '"') quote = true;
        cell += c;
        if (c == '"') cell += '"';
    }
    return quote ? '"' + cell + '"' : cell;
}

std::vector<std::string> split_csv_line(const std::string& line, const std::string& file, long line_number) {
    std::vector<std::string> cells;
    std::size_t i = 0;
    for (;;) {
        std::string cell;
        if (i < line.size() && line[i] == '"') {
            ++i;
            for (;;) {
                if (i >= line.size()) throw InputError(file, line_number, "", "a quoted cell is not closed on its line");
                if (line[i] == '"') {
                    if (i + 1 < line.size() && line[i + 1] == '"') {
                        cell += '"';
                        i += 2;
                        continue;
                    }
                    ++i;
                    break;
                }
                cell += line[i++];
            }
            if (i < line.size() && line[i] != ',')
                throw InputError(file, line_number, "", "text follows the closing quote of a cell (a quote inside a cell is written \"\")");
        } else {
            const std::size_t comma = line.find(',', i);
            const std::size_t end = comma == std::string::npos ? line.size() : comma;
            cell = line.substr(i, end - i);
            i = end;
        }
        cells.push_back(std::move(cell));
        if (i >= line.size()) break;
        ++i;  // the comma
        if (i == line.size()) {
            cells.emplace_back();
            break;
        }
    }
    return cells;
}

std::vector<CsvRow> read_csv_rows(const std::string& text, const std::string& file, const std::string& header, std::size_t columns) {
    std::vector<CsvRow> rows;
    std::istringstream in(text);
    std::string line;
    long row = 0;
    while (std::getline(in, line)) {
        ++row;
        if (!line.empty() && line.back() == '\r') line.pop_back();
        if (row == 1 && line.rfind("\xEF\xBB\xBF", 0) == 0) line.erase(0, 3);
        if (row == 1) {
            if (line != header) throw InputError(file, 1, "header", "expected the header \"" + header + "\"");
            continue;
        }
        if (line.empty()) continue;
        std::vector<std::string> cells = split_csv_line(line, file, row);
        if (cells.size() != columns)
            throw InputError(file, row, "row", "expected " + std::to_string(columns) + " columns, found " + std::to_string(cells.size()));
        rows.push_back({row, std::move(cells)});
    }
    if (row == 0) throw InputError(file, 1, "header", "the file is empty");
    return rows;
}

}  // namespace wayward
