// Numbers as text that reads back to the same double (shortest round trip), for
// chips.csv, manifest.yaml and resolved configs: map coordinates, statistics and
// config values must survive a write and read exactly (0.9 stays 0.9).
#pragma once

#include <charconv>
#include <cstdio>
#include <string>

namespace tinct {

inline std::string exact_text(double value) {
  char text[32];
  const auto result = std::to_chars(text, text + sizeof(text), value);
  return std::string(text, result.ptr);
}

// The shortest text without an exponent that reads back to the same double: map
// coordinates in files people read (5039140.25, not 5.03914e+06).
inline std::string fixed_text(double value) {
  char text[400];
  const auto result = std::to_chars(text, text + sizeof(text), value, std::chars_format::fixed);
  return std::string(text, result.ptr);
}

// Six significant digits, for messages: 28.49999999927454 reads 28.5.
inline std::string short_text(double value) {
  char text[32];
  std::snprintf(text, sizeof(text), "%.6g", value);
  return text;
}

}  // namespace tinct
