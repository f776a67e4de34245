// Validating TOML reader; see toml_reader.hpp.
#include "sim/io/toml_reader.hpp"

#include <cerrno>
#include <cmath>
#include <cstring>
#include <sstream>

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

namespace wayward::detail {

long TableReader::line_of(const std::string& key) const {
    if (const toml::node* n = table_.get(key)) return static_cast<long>(n->source().begin.line);
    return line();
}

const toml::node* TableReader::node(const std::string& key) {
    used_.insert(key);
    return table_.get(key);
}

void TableReader::fail(const std::string& key, const std::string& message) const {
    throw InputError(file_, line_of(key), field(key), message);
}
void TableReader::fail_at(long line, const std::string& key, const std::string& message) const {
    throw InputError(file_, line, field(key), message);
}

std::optional<double> TableReader::number(const std::string& key) {
    const toml::node* n = node(key);
    if (!n) return std::nullopt;
    double v = 0.0;
    if (auto f = n->as_floating_point()) v = f->get();
    else if (auto i = n->as_integer()) v = static_cast<double>(i->get());
    else fail(key, "expected a number");
    if (!std::isfinite(v)) fail(key, "must be a finite number (nan and inf are not allowed)");
    return v;
}

double TableReader::required_number(const std::string& key) {
    auto v = number(key);
    if (!v) fail(key, "is required");
    return *v;
}

std::optional<long long> TableReader::integer(const std::string& key) {
    const toml::node* n = node(key);
    if (!n) return std::nullopt;
    if (auto i = n->as_integer()) return i->get();
    fail(key, "expected an integer");
}

std::optional<long long> TableReader::integer_in(const std::string& key, long long lo, long long hi) {
    const auto v = integer(key);
    if (v && (*v < lo || *v > hi)) fail(key, "must be an integer in [" + std::to_string(lo) + ", " + std::to_string(hi) + "]");
    return v;
}

std::string name_problem(const std::string& text) {
    if (text.empty()) return "is empty";
    if (text.size() > 64) return "is longer than 64 characters";
    for (unsigned char c : text) {
        if (c < 0x20 || c == 0x7f) return "holds a control character (a newline or tab, say)";
        if (c == ',' || c == '"') return "holds a comma or a double quote, which the CSV tables cannot carry";
    }
    return "";
}

std::string TableReader::required_name(const std::string& key) {
    const std::string v = required_string(key);
    const std::string problem = name_problem(v);
    if (!problem.empty()) fail(key, problem);
    return v;
}

std::optional<std::string> TableReader::string(const std::string& key) {
    const toml::node* n = node(key);
    if (!n) return std::nullopt;
    if (auto s = n->as_string()) return s->get();
    fail(key, "expected a string");
}

std::string TableReader::required_string(const std::string& key) {
    auto v = string(key);
    if (!v) fail(key, "is required");
    return *v;
}

std::optional<bool> TableReader::boolean(const std::string& key) {
    const toml::node* n = node(key);
    if (!n) return std::nullopt;
    if (auto b = n->as_boolean()) return b->get();
    fail(key, "expected true or false");
}

std::optional<std::vector<double>> TableReader::numbers(const std::string& key) {
    const toml::node* n = node(key);
    if (!n) return std::nullopt;
    const toml::array* arr = n->as_array();
    if (!arr) fail(key, "expected an array of numbers");
    std::vector<double> out;
    for (const toml::node& e : *arr) {
        double v = 0.0;
        if (auto f = e.as_floating_point()) v = f->get();
        else if (auto i = e.as_integer()) v = static_cast<double>(i->get());
        else fail_at(static_cast<long>(e.source().begin.line), key, "expected an array of numbers");
        if (!std::isfinite(v)) fail_at(static_cast<long>(e.source().begin.line), key, "must hold finite numbers");
        out.push_back(v);
    }
    return out;
}

std::optional<std::vector<std::string>> TableReader::strings(const std::string& key) {
    const toml::node* n = node(key);
    if (!n) return std::nullopt;
    const toml::array* arr = n->as_array();
    if (!arr) fail(key, "expected an array of strings");
    std::vector<std::string> out;
    for (const toml::node& e : *arr) {
        auto s = e.as_string();
        if (!s) fail_at(static_cast<long>(e.source().begin.line), key, "expected an array of strings");
        out.push_back(s->get());
    }
    return out;
}

const toml::table* TableReader::table(const std::string& key) {
    const toml::node* n = node(key);
    if (!n) return nullptr;
    if (auto t = n->as_table()) return t;
    fail(key, "expected a table");
}

std::vector<const toml::table*> TableReader::tables(const std::string& key) {
    const toml::node* n = node(key);
    std::vector<const toml::table*> out;
    if (!n) return out;
    const toml::array* arr = n->as_array();
    if (!arr) fail(key, "expected an array of tables ([[" + field(key) + "]])");
    for (const toml::node& e : *arr) {
        auto t = e.as_table();
        if (!t) fail_at(static_cast<long>(e.source().begin.line), key, "expected an array of tables");
        out.push_back(t);
    }
    return out;
}

void TableReader::finish() const {
    for (auto&& [k, v] : table_) {
        const std::string key(k.str());
        if (!used_.count(key)) throw InputError(file_, static_cast<long>(v.source().begin.line), field(key), "unknown field");
    }
}

toml::table parse_toml(const std::string& text, const std::string& file) {
    try {
        return toml::parse(text, file);
    } catch (const toml::parse_error& err) {
        throw InputError(file, static_cast<long>(err.source().begin.line), "",
                         "malformed TOML: " + std::string(err.description()));
    }
}

std::string read_text_file(const std::string& path) {
    // open(2) and fstat(2) rather than an ifstream: the reason (missing, permission, a folder) reaches the message,
    // and a folder is refused instead of reading as an empty file.
    const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
    if (fd < 0) {
        const int err = errno;
        throw InputError(path, 0, "", std::string("cannot open the file: ") +
                                          (err == ENOENT ? "it does not exist" : err == EACCES ? "permission denied" : std::strerror(err)));
    }
    struct stat st{};
    if (::fstat(fd, &st) != 0 || !S_ISREG(st.st_mode)) {
        const bool dir = S_ISDIR(st.st_mode);
        ::close(fd);
        throw InputError(path, 0, "", dir ? "is a folder, not a file" : "is not a regular file");
    }
    if (st.st_size > max_input_bytes) {
        ::close(fd);
        throw InputError(path, 0, "", "is larger than " + std::to_string(max_input_bytes >> 20) + " MiB; no Wayward input is that large");
    }
    std::string text;
    char buf[65536];
    for (;;) {
        const ssize_t n = ::read(fd, buf, sizeof buf);
        if (n < 0 && errno == EINTR) continue;
        if (n < 0) {
            const int err = errno;
            ::close(fd);
            throw InputError(path, 0, "", std::string("cannot read the file: ") + std::strerror(err));
        }
        if (n == 0) break;
        text.append(buf, static_cast<std::size_t>(n));
        if (static_cast<long long>(text.size()) > max_input_bytes) {
            ::close(fd);
            throw InputError(path, 0, "", "is larger than " + std::to_string(max_input_bytes >> 20) + " MiB; no Wayward input is that large");
        }
    }
    ::close(fd);
    return text;
}

}  // namespace wayward::detail
