// Decimal year -> calendar date through ERFA. See calendar.hpp.
#include "viewer/calendar.hpp"

#include <array>
#include <cstdio>

#include <erfa.h>

namespace wayward::viewer {

CalendarDate calendar_date(double decimal_year) {
    CalendarDate d;
    double jd0 = 0.0, jd1 = 0.0;
    eraEpj2jd(decimal_year, &jd0, &jd1);
    d.valid = eraJd2cal(jd0, jd1, &d.year, &d.month, &d.day, &d.day_fraction) == 0;
    return d;
}

std::string format_calendar_date(const CalendarDate& date) {
    static constexpr std::array<const char*, 12> months{"Jan", "Feb", "Mar", "Apr", "May", "Jun",
                                                        "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"};
    if (!date.valid || date.month < 1 || date.month > 12) return "\u2014";
    char buf[48];
    std::snprintf(buf, sizeof buf, "%d %s %d", date.year, months[static_cast<std::size_t>(date.month - 1)], date.day);
    return buf;
}

std::string format_decimal_year(double decimal_year, int decimals) {
    char buf[48];
    std::snprintf(buf, sizeof buf, "%.*f", decimals, decimal_year);
    return buf;
}

}  // namespace wayward::viewer
