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

// The cells of one line of a plain CSV table (our tables quote nothing, so a comma always separates).
std::vector<std::string> split_csv_line(const std::string& line);

}  // namespace wayward
