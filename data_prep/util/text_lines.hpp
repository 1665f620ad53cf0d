// Lists of names kept as one text of lines (in model archives, where a string is
// simpler to store than a list).
#pragma once

#include <string>
#include <vector>

namespace tinct {

inline std::string join_lines(const std::vector<std::string>& items) {
  std::string text;
  for (const auto& item : items) text += (text.empty() ? "" : "\n") + item;
  return text;
}

inline std::vector<std::string> split_lines(const std::string& text) {
  std::vector<std::string> items;
  std::size_t start = 0;
  while (true) {
    const std::size_t end = text.find('\n', start);
    items.push_back(text.substr(start, end == std::string::npos ? std::string::npos : end - start));
    if (end == std::string::npos) return items;
    start = end + 1;
  }
}

}  // namespace tinct
