// Validating TOML reader; see toml_reader.hpp.
#include "sim/io/toml_reader.hpp"

#include <algorithm>
#include <cctype>
#include <cerrno>
#include <charconv>
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

namespace {
bool float_char(char c) { return (c >= '0' && c <= '9') || c == '.' || c == 'e' || c == 'E' || c == '+' || c == '-' || c == '_'; }

// `token` rewritten in its shortest round-trip form when it is a whole TOML float (a '.' or an exponent); else as is.
std::string shortest_float_token(const std::string& token) {
    if (token.find_first_of(".eE") == std::string::npos || token.find('_') != std::string::npos) return token;
    const char* begin = token.data() + (token[0] == '+' ? 1 : 0);
    double v = 0.0;
    const auto [end, ec] = std::from_chars(begin, token.data() + token.size(), v);
    if (ec != std::errc() || end != token.data() + token.size() || !std::isfinite(v)) return token;
    char buf[64];
    const auto res = std::to_chars(buf, buf + sizeof buf, v);
    std::string out(buf, res.ptr);
    if (out.find_first_of(".e") == std::string::npos) out += ".0";  // TOML: a float needs a fraction or an exponent
    return out;
}
}  // namespace

std::string shortest_toml_floats(const std::string& text) {
    std::string out;
    out.reserve(text.size());
    std::size_t i = 0;
    bool value_side = false;  // after '=': only values are rewritten, never bare keys
    int depth = 0;            // arrays and inline tables open on the value side (they may span lines)
    while (i < text.size()) {
        const char c = text[i];
        if (c == '"' || c == '\'') {  // a string, basic or literal (possibly multi-line): copied as it is
            const std::string quote = text.compare(i, 3, std::string(3, c)) == 0 ? std::string(3, c) : std::string(1, c);
            std::size_t j = i + quote.size();
            while (j < text.size() && text.compare(j, quote.size(), quote) != 0) j += (c == '"' && text[j] == '\\') ? 2 : 1;
            j = std::min(text.size(), j + quote.size());
            out.append(text, i, j - i);
            i = j;
        } else if (c == '#') {
            const std::size_t j = std::min(text.size(), text.find('\n', i));
            out.append(text, i, j - i);
            i = j;
        } else if (value_side && float_char(c) && (i == 0 || !float_char(text[i - 1])) && c != '_' &&
                   (i == 0 || !(std::isalnum(static_cast<unsigned char>(text[i - 1])) || text[i - 1] == '_'))) {
            std::size_t j = i;
            while (j < text.size() && float_char(text[j])) ++j;
            const bool word = j < text.size() && (std::isalpha(static_cast<unsigned char>(text[j])) || text[j] == ':');
            const std::string token = text.substr(i, j - i);
            out += word ? token : shortest_float_token(token);
            i = j;
        } else {
            if (c == '=') value_side = true;
            if (value_side && (c == '[' || c == '{')) ++depth;
            if (value_side && (c == ']' || c == '}') && depth > 0) --depth;
            if (c == '\n' && depth == 0) value_side = false;
            out += c;
            ++i;
        }
    }
    return out;
}

namespace {
// toml++ prints a long array one element per line; arrays of plain numbers or booleans (a solution's track holds
// thousands) are joined here, several to a line of at most about 100 characters.
std::string compact_scalar_arrays(const std::string& text) {
    std::istringstream in(text);
    std::vector<std::string> lines;
    for (std::string l; std::getline(in, l);) lines.push_back(l);
    auto scalar = [](const std::string& l) {
        const std::size_t a = l.find_first_not_of(' ');
        if (a == std::string::npos) return false;
        for (std::size_t k = a; k < l.size(); ++k)
            if (!(std::isalnum(static_cast<unsigned char>(l[k])) || l[k] == '.' || l[k] == '-' || l[k] == '+' || l[k] == '_' ||
                  (l[k] == ',' && k + 1 == l.size())))
                return false;
        return true;
    };
    std::string out;
    for (std::size_t i = 0; i < lines.size(); ++i) {
        const std::string& l = lines[i];
        std::size_t j = i + 1;
        if (l.size() >= 3 && l.compare(l.size() - 3, 3, "= [") == 0) {
            while (j < lines.size() && scalar(lines[j])) ++j;
            const std::size_t close = j < lines.size() ? lines[j].find_first_not_of(' ') : std::string::npos;
            if (j > i + 1 && close != std::string::npos && lines[j].substr(close) == "]") {
                const std::string indent = lines[i + 1].substr(0, lines[i + 1].find_first_not_of(' '));
                out += l + "\n" + indent;
                std::size_t width = indent.size();
                for (std::size_t k = i + 1; k < j; ++k) {
                    std::string v = lines[k].substr(indent.size());
                    if (!v.empty() && v.back() == ',') v.pop_back();
                    if (k > i + 1) {
                        if (width + v.size() + 2 > 100) {
                            out += ",\n" + indent;
                            width = indent.size();
                        } else {
                            out += ", ";
                            width += 2;
                        }
                    }
                    out += v;
                    width += v.size();
                }
                out += "\n" + lines[j] + "\n";
                i = j;
                continue;
            }
        }
        out += l + "\n";
    }
    if (!text.empty() && text.back() != '\n' && !out.empty()) out.pop_back();
    return out;
}
}  // namespace

std::string toml_text_shortest(const toml::table& t) {
    std::ostringstream ss;
    ss << t;
    return compact_scalar_arrays(shortest_toml_floats(ss.str()));
}

}  // namespace wayward::detail
