#include "distributed/host_list.hpp"

#include <cctype>

#include "util/error.hpp"

namespace tinct {
namespace {

[[noreturn]] void fail_list(const std::string& list, const std::string& source, const std::string& why) {
  fail_usage(source + " = '" + list + "' is not a host list (" + why +
             "); expected names and bracketed ranges such as node[03-05,09],login2");
}

// Entries at the top level, split on commas outside brackets.
std::vector<std::string> split_entries(const std::string& list, const std::string& source) {
  std::vector<std::string> entries;
  std::string current;
  int depth = 0;
  for (char c : list) {
    if (c == '[') ++depth;
    if (c == ']') --depth;
    if (depth < 0 || depth > 1) fail_list(list, source, depth < 0 ? "']' without '['" : "nested '['");
    if (c == ',' && depth == 0) {
      entries.push_back(current);
      current.clear();
    } else {
      current += c;
    }
  }
  if (depth != 0) fail_list(list, source, "'[' without ']'");
  entries.push_back(current);
  for (const std::string& entry : entries) {
    if (entry.empty()) fail_list(list, source, "an empty name");
  }
  return entries;
}

bool all_digits(const std::string& text) {
  if (text.empty()) return false;
  for (char c : text) {
    if (!std::isdigit(static_cast<unsigned char>(c))) return false;
  }
  return true;
}

std::string padded(unsigned long long value, std::size_t width) {
  std::string digits = std::to_string(value);
  if (digits.size() < width) digits.insert(0, width - digits.size(), '0');
  return digits;
}

// "03-05,09" -> 03 04 05 09
std::vector<std::string> expand_ranges(const std::string& ranges, const std::string& list,
                                       const std::string& source) {
  std::vector<std::string> values;
  std::size_t start = 0;
  while (start <= ranges.size()) {
    const std::size_t comma = std::min(ranges.find(',', start), ranges.size());
    const std::string part = ranges.substr(start, comma - start);
    const std::size_t dash = part.find('-');
    const std::string low = part.substr(0, dash);
    const std::string high = dash == std::string::npos ? low : part.substr(dash + 1);
    if (!all_digits(low) || !all_digits(high) || low.size() > 9 || high.size() > 9) {
      fail_list(list, source, "'" + part + "' in brackets is not a number or a range a-b");
    }
    const unsigned long long first = std::stoull(low), last = std::stoull(high);
    if (last < first) fail_list(list, source, "range '" + part + "' runs backwards");
    if (last - first > 100000) fail_list(list, source, "range '" + part + "' is implausibly long");
    for (unsigned long long value = first; value <= last; ++value) values.push_back(padded(value, low.size()));
    start = comma + 1;
  }
  return values;
}

// One entry such as "r[1-2]n[01-02]-ib": each bracket group multiplies the names so far.
void expand_entry(const std::string& entry, const std::string& list, const std::string& source,
                  std::vector<std::string>& out) {
  std::vector<std::string> names{""};
  std::size_t position = 0;
  while (position < entry.size()) {
    const std::size_t open = entry.find('[', position);
    const std::string literal = entry.substr(position, open == std::string::npos ? std::string::npos : open - position);
    for (std::string& name : names) name += literal;
    if (open == std::string::npos) break;
    const std::size_t close = entry.find(']', open);
    const std::vector<std::string> values = expand_ranges(entry.substr(open + 1, close - open - 1), list, source);
    std::vector<std::string> product;
    for (const std::string& name : names) {
      for (const std::string& value : values) product.push_back(name + value);
    }
    names = std::move(product);
    position = close + 1;
  }
  out.insert(out.end(), names.begin(), names.end());
}

}  // namespace

std::vector<std::string> expand_host_list(const std::string& list, const std::string& source) {
  if (list.empty()) fail_list(list, source, "it is empty");
  std::vector<std::string> hosts;
  for (const std::string& entry : split_entries(list, source)) expand_entry(entry, list, source, hosts);
  return hosts;
}

std::string first_host(const std::string& list, const std::string& source) {
  if (list.empty()) fail_list(list, source, "it is empty");
  std::vector<std::string> hosts;
  expand_entry(split_entries(list, source).front(), list, source, hosts);
  return hosts.front();
}

}  // namespace tinct
