#include "raster/scene_date.hpp"

#include <cctype>
#include <cstdio>

#include "util/error.hpp"

namespace tinct {
namespace {

bool is_leap(int year) { return (year % 4 == 0 && year % 100 != 0) || year % 400 == 0; }

int days_in_month(int year, int month) {
  static const int kDays[] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
  return month == 2 && is_leap(year) ? 29 : kDays[month - 1];
}

}  // namespace

std::optional<std::string> parse_date(const std::string& text) {
  if (text.size() < 10) return std::nullopt;
  for (int i : {0, 1, 2, 3, 5, 6, 8, 9}) {
    if (!std::isdigit(static_cast<unsigned char>(text[i]))) return std::nullopt;
  }
  if (!((text[4] == '-' && text[7] == '-') || (text[4] == ':' && text[7] == ':') ||
        (text[4] == '/' && text[7] == '/'))) {
    return std::nullopt;
  }
  if (text.size() > 10 && text[10] != 'T' && text[10] != ' ') return std::nullopt;
  const int year = std::stoi(text.substr(0, 4));
  const int month = std::stoi(text.substr(5, 2));
  const int day = std::stoi(text.substr(8, 2));
  if (month < 1 || month > 12 || day < 1 || day > days_in_month(year, month)) return std::nullopt;
  char iso[32];
  std::snprintf(iso, sizeof(iso), "%04d-%02d-%02d", year, month, day);
  return std::string(iso);
}

std::optional<std::string> date_from_metadata(const Raster& raster) {
  for (const char* key : {"ACQUISITION_DATE", "DATATAKE_1_DATATAKE_SENSING_START", "PRODUCT_START_TIME",
                          "SENSING_TIME", "DATE_ACQUIRED", "TIFFTAG_DATETIME"}) {
    if (auto date = parse_date(raster.metadata(key))) return date;
  }
  return std::nullopt;
}

long days_since_epoch(const std::string& iso_date) {
  const auto parsed = parse_date(iso_date);
  if (!parsed) fail_usage("not a date (expected YYYY-MM-DD): \"" + iso_date + "\"");
  int year = std::stoi(parsed->substr(0, 4));
  const int month = std::stoi(parsed->substr(5, 2));
  const int day = std::stoi(parsed->substr(8, 2));
  // Howard Hinnant's days_from_civil.
  year -= month <= 2;
  const long era = (year >= 0 ? year : year - 399) / 400;
  const long yoe = year - era * 400;
  const long doy = (153 * (month + (month > 2 ? -3 : 9)) + 2) / 5 + day - 1;
  const long doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
  return era * 146097 + doe - 719468;
}

}  // namespace tinct
