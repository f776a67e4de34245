// Output files are written atomically: to a fresh temporary file beside the target, flushed, then renamed over it,
// so an interrupted run never leaves a half-written file that looks complete. The temporary is created the way
// mkstemp(3) does (O_CREAT|O_EXCL, an unpredictable name), so a link planted in the folder is never followed, and
// a symbolic link at the output name itself is refused: nothing is ever written outside the output folder.
#pragma once

#include <string>
#include <vector>

#include <sys/types.h>

namespace wayward {

// Writes `content` to `path` atomically with permissions `mode`. Throws InputError naming the path when the
// output name is a symbolic link or a folder, std::runtime_error naming the path and the reason on a system failure.
void write_file_atomic(const std::string& path, const std::string& content, mode_t mode = 0644);

// Throws InputError (field `field`) if `path` exists and is a symbolic link or not a regular file.
void refuse_link_at(const std::string& path, const std::string& field = "");

// Every temporary of ours carries this marker in its name (".NAME.wayward-tmp-XXXXXX"), so that leftovers of a
// killed run can be told apart from anything else in the folder.
inline constexpr const char* temporary_marker = ".wayward-tmp-";
// Removes leftover temporaries of ours (regular files whose name carries the marker, and folders so named with the
// files in them) from `dir`; returns how many.
// Call it only while holding the folder's lock, so a concurrent writer's temporary is never taken for a leftover.
int remove_stale_temporaries(const std::string& dir);

// An exclusive advisory lock (flock) on DIR/.wayward.lock, held for the object's lifetime. The lock file is
// opened with O_NOFOLLOW, so a planted link is refused. Throws InputError naming `field` when another run holds it:
// at once (`fail`, for runs that write for long: new, campaigns), or after waiting up to `max_wait_seconds`
// (`wait`, for commands that hold the lock only while they write their few files and sweep leftovers).
enum class LockWait { fail, wait };
class WriterLock {
public:
    WriterLock(const std::string& dir, const std::string& field, LockWait how = LockWait::fail, double max_wait_seconds = 120.0);
    ~WriterLock();
    WriterLock(const WriterLock&) = delete;
    WriterLock& operator=(const WriterLock&) = delete;

private:
    int fd_ = -1;
};

// The one CSV quoting routine (RFC 4180): every CSV table Wayward writes builds its cells with csv_cell and every
// CSV it reads splits its lines with split_csv_line. A cell holding a comma or a double quote is written between
// double quotes with each inner quote doubled; line breaks inside a cell become spaces, so one record is one line
// (the readers, the torn-row repair of cases.csv and line numbers in errors rely on that). Hand-written because
// the rule is a few lines and no Debian C++ CSV library is in the dependency set.
std::string csv_cell(const std::string& text);

// The cells of one line of a CSV table: quoted cells unquoted ("" inside them is one quote), others as they are.
// Throws InputError(file, line, "") when a quoted cell is not closed or text follows its closing quote.
std::vector<std::string> split_csv_line(const std::string& line, const std::string& file = "", long line_number = 0);

// The data rows of a CSV table with a fixed header: the header line must equal `header` (a UTF-8 byte-order mark,
// which some spreadsheet programs write, and CR line ends are allowed), blank lines are skipped, every row must
// have `columns` cells. Each row keeps its line number for errors. InputError(file, line, field) otherwise.
struct CsvRow {
    long line = 0;
    std::vector<std::string> cells;
};
std::vector<CsvRow> read_csv_rows(const std::string& text, const std::string& file, const std::string& header, std::size_t columns);

}  // namespace wayward
