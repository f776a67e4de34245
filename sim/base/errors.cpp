// Formatting of input errors: "file:line: field 'name': message", or "option '--name': message" for a command-line
// option (no file), so a message never starts with an empty file name.
#include "sim/base/errors.hpp"

#include <sstream>

namespace wayward {

std::string InputError::format(const std::string& file, long line, const std::string& field, const std::string& msg) {
    std::ostringstream s;
    if (file.empty()) {
        if (!field.empty()) s << (field.rfind("--", 0) == 0 ? "option '" : "field '") << field << "': ";
        s << msg;
        return s.str();
    }
    s << file;
    if (line > 0) s << ':' << line;
    s << ": ";
    if (!field.empty()) s << "field '" << field << "': ";
    s << msg;
    return s.str();
}

}  // namespace wayward
