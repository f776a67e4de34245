// Formatting of input errors: "file:line: field 'name': message".
#include "sim/base/errors.hpp"

#include <sstream>

namespace wayward {

std::string InputError::format(const std::string& file, long line, const std::string& field, const std::string& msg) {
    std::ostringstream s;
    s << file;
    if (line > 0) s << ':' << line;
    s << ": ";
    if (!field.empty()) s << "field '" << field << "': ";
    s << msg;
    return s.str();
}

}  // namespace wayward
