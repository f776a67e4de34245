// The one CSV quoting routine (csv_cell, split_csv_line) against an independent reader and writer: Python's csv
// module from Debian's python3 package, both ways, on cells with commas, quotes, Greek letters and empty cells;
// and budget.csv, whose labels hold double quotes, read back by that module.
#include <doctest/doctest.h>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include <unistd.h>

#include "sim/base/errors.hpp"
#include "sim/budget/budget.hpp"
#include "sim/io/fileio.hpp"
#include "sim/report/budget_report.hpp"

using namespace wayward;
namespace fs = std::filesystem;

namespace {

std::string hex(const std::string& s) {
    static const char* digits = "0123456789abcdef";
    std::string h;
    for (unsigned char c : s) {
        h += digits[c >> 4];
        h += digits[c & 15];
    }
    return h;
}

std::string unhex(const std::string& h) {
    std::string s;
    for (std::size_t i = 0; i + 1 < h.size(); i += 2) s += static_cast<char>(std::stoi(h.substr(i, 2), nullptr, 16));
    return s;
}

std::string run(const std::string& command) {
    std::string out;
    FILE* p = ::popen(command.c_str(), "r");
    REQUIRE(p != nullptr);
    char buf[4096];
    std::size_t n = 0;
    while ((n = std::fread(buf, 1, sizeof buf, p)) > 0) out.append(buf, n);
    REQUIRE(::pclose(p) == 0);
    return out;
}

// Rows as Python's csv.reader sees the file: one line per row, cells hex-encoded and separated by spaces (so the
// comparison cannot be fooled by our own quoting).
std::vector<std::vector<std::string>> python_rows(const std::string& path) {
    const std::string script =
        "import csv,sys\n"
        "with open(sys.argv[1], newline='', encoding='utf-8') as f:\n"
        "    for row in csv.reader(f):\n"
        "        print(' '.join(c.encode('utf-8').hex() or '-' for c in row))\n";
    const std::string out = run("/usr/bin/python3 -c \"" + script + "\" '" + path + "'");
    std::vector<std::vector<std::string>> rows;
    std::istringstream in(out);
    std::string line;
    while (std::getline(in, line)) {
        std::vector<std::string> row;
        std::istringstream cells(line);
        std::string h;
        while (cells >> h) row.push_back(h == "-" ? "" : unhex(h));
        rows.push_back(row);
    }
    return rows;
}

fs::path scratch(const std::string& name) {
    const fs::path dir = fs::temp_directory_path() / ("wayward-csv-" + std::to_string(::getpid()));
    fs::create_directories(dir);
    return dir / name;
}

const std::vector<std::vector<std::string>> tricky = {
    {"plain", "a,b", "say \"survey\" alone", ""},
    {"\"", ",", "λ₀ β σ", "\"quoted\",and,more"},
    {"", "", "trailing", ""},
};

}  // namespace

TEST_CASE("csv: what csv_cell writes, Python's csv.reader reads back cell for cell") {
    // Reference reader: Python's csv module (Debian python3), dialect "excel" (RFC 4180 quoting).
    const fs::path path = scratch("ours.csv");
    {
        std::ofstream f(path, std::ios::binary);
        for (const auto& row : tricky) {
            for (std::size_t c = 0; c < row.size(); ++c) f << (c ? "," : "") << csv_cell(row[c]);
            f << "\n";
        }
    }
    CHECK(python_rows(path.string()) == tricky);
    fs::remove_all(path.parent_path());
}

TEST_CASE("csv: what Python's csv.writer writes, split_csv_line reads back cell for cell") {
    // Reference writer: Python's csv module (Debian python3), csv.writer with lineterminator "\n".
    const fs::path path = scratch("theirs.csv");
    std::string args;
    for (const auto& row : tricky) {
        std::string joined;
        for (const auto& c : row) joined += (joined.empty() ? "" : ".") + (c.empty() ? std::string("-") : hex(c));
        args += " " + joined;
    }
    const std::string script =
        "import csv,sys\n"
        "w = csv.writer(open(sys.argv[1], 'w', newline='', encoding='utf-8'), lineterminator='\\n')\n"
        "for a in sys.argv[2:]:\n"
        "    w.writerow(['' if h == '-' else bytes.fromhex(h).decode('utf-8') for h in a.split('.')])\n";
    run("/usr/bin/python3 -c \"" + script + "\" '" + path.string() + "'" + args);
    std::ifstream f(path, std::ios::binary);
    std::string line;
    std::vector<std::vector<std::string>> rows;
    while (std::getline(f, line)) rows.push_back(split_csv_line(line, path.string(), static_cast<long>(rows.size() + 1)));
    CHECK(rows == tricky);
    fs::remove_all(path.parent_path());
}

TEST_CASE("csv: a cell's line break becomes a space, so one record stays one line") {
    CHECK(csv_cell("two\nlines") == "two lines");
    CHECK(split_csv_line(csv_cell("a,\nb")) == std::vector<std::string>{"a, b"});
}

TEST_CASE("csv: a broken quoted cell is an input error naming file and line") {
    try {
        split_csv_line("1,\"open", "cases.csv", 7);
        FAIL("no error");
    } catch (const InputError& e) {
        CHECK(e.file() == "cases.csv");
        CHECK(e.line() == 7);
    }
    CHECK_THROWS_AS(split_csv_line("\"closed\"x,2", "f.csv", 3), InputError);
}

TEST_CASE("csv: budget.csv with quotes in its labels reads back through Python's csv.reader") {
    // Reference reader: Python's csv module (Debian python3).
    BudgetResult b;
    b.runs = 2;
    b.seeds = {11, 12};
    BudgetLine l;
    l.key = "random:survey";
    l.label = "random noise of era \"survey\" alone";
    l.separations_arcmin = {1.5, 2.5};
    l.median = 2.0;
    l.p90 = 2.4;
    b.lines.push_back(l);
    const fs::path path = scratch("budget.csv");
    write_file_atomic(path.string(), budget_csv(b));
    const auto rows = python_rows(path.string());
    REQUIRE(rows.size() >= 2);
    REQUIRE(rows[0].size() == rows[1].size());
    CHECK(rows[1][0] == "random:survey");
    CHECK(rows[1][1] == "random noise of era \"survey\" alone");
    for (const auto& r : rows) CHECK(r.size() == rows[0].size());
    fs::remove_all(path.parent_path());
}
