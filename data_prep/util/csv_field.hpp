// Writing one CSV field as RFC 4180 asks: quoted when it holds a comma, quote or
// line break, with quotes doubled.
#pragma once

#include <string>

namespace tinct {

inline void append_csv_field(std::string& out, const std::string& field) {
  if (field.find_first_of(",\"\r\n") == std::string::npos) {
    out += field;
    return;
  }
  out += '"';
  for (const char c : field) {
    if (c == '"') out += '"';
    out += c;
  }
  out += '"';
}

inline std::string csv_field(const std::string& field) {
  std::string out;
  append_csv_field(out, field);
  return out;
}

}  // namespace tinct
