// Numbers as text that reads back to the same double (shortest round trip), for
// chips.csv and manifest.yaml: map coordinates and statistics must survive a
// write and read exactly.
#pragma once

#include <charconv>
#include <string>

namespace tinct {

inline std::string exact_text(double value) {
  char text[32];
  const auto result = std::to_chars(text, text + sizeof(text), value);
  return std::string(text, result.ptr);
}

}  // namespace tinct
