// One number formatted with a printf conversion (e.g. "%.8f"), for the fixed-width fields of CSV and text files.
#pragma once

#include <cstdio>
#include <string>

namespace wayward::detail {

inline std::string fmt(const char* printf_format, double value) {
    char buf[64];
    std::snprintf(buf, sizeof buf, printf_format, value);
    return buf;
}

}  // namespace wayward::detail
