// A thin reader over toml++ tables that validates as it reads: every value is type-checked, every key that
// was not read is reported as unknown, and every error names the file, the line and the dotted field path.
#pragma once

#include <optional>
#include <set>
#include <string>
#include <vector>

#include <toml++/toml.h>

#include "sim/base/errors.hpp"

namespace wayward::detail {

class TableReader {
public:
    TableReader(const toml::table& table, std::string file, std::string path)
        : table_(table), file_(std::move(file)), path_(std::move(path)) {}

    const std::string& file() const { return file_; }
    std::string field(const std::string& key) const { return path_.empty() ? key : path_ + "." + key; }
    long line_of(const std::string& key) const;
    long line() const { return static_cast<long>(table_.source().begin.line); }
    bool has(const std::string& key) const { return table_.contains(key); }
    const toml::node* node(const std::string& key);

    std::optional<double> number(const std::string& key);
    double number_or(const std::string& key, double fallback) { return number(key).value_or(fallback); }
    double required_number(const std::string& key);
    std::optional<long long> integer(const std::string& key);
    // An integer checked against [lo, hi] before anyone narrows it (4294967297 must not become 1 in an int).
    std::optional<long long> integer_in(const std::string& key, long long lo, long long hi);
    // A name that lands in our CSV tables and printed lists: 1 to 64 characters, no comma, quote or control character.
    std::string required_name(const std::string& key);
    std::optional<std::string> string(const std::string& key);
    std::string required_string(const std::string& key);
    std::optional<bool> boolean(const std::string& key);
    std::optional<std::vector<double>> numbers(const std::string& key);
    std::optional<std::vector<std::string>> strings(const std::string& key);
    const toml::table* table(const std::string& key);
    // Array of tables ([[key]]); empty when absent.
    std::vector<const toml::table*> tables(const std::string& key);

    // Throws for every key present in the table but never read.
    void finish() const;
    [[noreturn]] void fail(const std::string& key, const std::string& message) const;
    [[noreturn]] void fail_at(long line, const std::string& key, const std::string& message) const;

private:
    const toml::table& table_;
    std::string file_;
    std::string path_;
    std::set<std::string> used_;
};

// Why `text` cannot be a name (empty when it can): 1 to 64 bytes, no comma, double quote or control character.
std::string name_problem(const std::string& text);

// Parses TOML text, turning toml++'s parse errors into InputError with file and line.
toml::table parse_toml(const std::string& text, const std::string& file);
// Reads a whole file, byte for byte; throws InputError (line 0) naming the reason if it
// cannot be read, is a folder, or is larger than max_input_bytes.
inline constexpr long long max_input_bytes = 256LL << 20;
std::string read_text_file(const std::string& path);

// A table as TOML text with every float in its shortest form that reads back to the same double (0.96, not
// 0.95999999999999996): Debian's toml++ prints floats with max_digits10 digits (its charconv path is off under
// GCC), so the printed text is rewritten here with std::to_chars, which gives the shortest round-trip form.
std::string toml_text_shortest(const toml::table& t);
// The same rewrite on TOML text: floats outside strings and comments become their shortest round-trip form.
std::string shortest_toml_floats(const std::string& text);

}  // namespace wayward::detail
