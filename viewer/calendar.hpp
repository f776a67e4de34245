// Calendar-style dates for display: a decimal year (the scenario's epoch 0 plus days / 365.25, as sim's
// decimal_year gives it) read as a Julian epoch and shown as a Gregorian year, month and day. The conversions
// are ERFA's (eraEpj2jd, eraJd2cal); this file only formats. Display only: no physics uses these dates.
#pragma once

#include <string>

namespace wayward::viewer {

struct CalendarDate {
    bool valid = false;   // false before -4799 (outside ERFA's calendar)
    int year = 0;
    int month = 0;        // 1..12
    int day = 0;          // 1..31
    double day_fraction = 0.0;
};

CalendarDate calendar_date(double decimal_year);
// "1843 Mar 14" (or "—" when the date is out of range).
std::string format_calendar_date(const CalendarDate& date);
// "1843.198" with the given number of decimals.
std::string format_decimal_year(double decimal_year, int decimals = 3);

}  // namespace wayward::viewer
