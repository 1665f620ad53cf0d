// Writing one CSV field as RFC 4180 asks: quoted when it holds a comma, quote or
// line break, with quotes doubled.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

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

// The fields of one RFC 4180 row (without its line ending); nullopt when a quote is not
// closed, text follows a closing quote or a quote stands inside an unquoted field, with
// which of these in `problem` when given.
inline std::optional<std::vector<std::string>> parse_csv_row(std::string_view row, std::string* problem = nullptr) {
  const auto refuse = [&](const char* why) {
    if (problem) *problem = why;
    return std::nullopt;
  };
  std::vector<std::string> fields(1);
  std::size_t i = 0;
  while (i < row.size()) {
    if (row[i] == ',') {
      fields.emplace_back();
      ++i;
    } else if (row[i] != '"') {
      fields.back() += row[i++];
    } else if (!fields.back().empty()) {
      return refuse("a quote inside an unquoted field");
    } else {
      for (++i;; ++i) {
        if (i >= row.size()) return refuse("a quoted field is not closed");
        if (row[i] != '"') {
          fields.back() += row[i];
        } else if (i + 1 < row.size() && row[i + 1] == '"') {
          fields.back() += '"';
          ++i;
        } else {
          break;
        }
      }
      if (++i < row.size() && row[i] != ',') return refuse("text after a closing quote");
    }
  }
  return fields;
}

}  // namespace tinct
