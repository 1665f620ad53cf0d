#include "runs/metrics_log.hpp"

#include <cstdio>
#include <cstdlib>
#include <fstream>

#include "util/atomic_file.hpp"
#include "util/error.hpp"

namespace tinct {

std::string metric_text(double value) {
  char text[40];
  for (int precision = 6; precision <= 17; ++precision) {
    std::snprintf(text, sizeof(text), "%.*g", precision, value);
    if (std::strtod(text, nullptr) == value) break;
  }
  return text;
}

MetricsLog::MetricsLog(std::filesystem::path file, std::vector<std::string> columns)
    : file_(std::move(file)), columns_(std::move(columns)) {}

void MetricsLog::resume(std::int64_t up_to_step) {
  rows_.clear();
  std::ifstream in(file_);
  std::string line;
  if (!std::getline(in, line)) return;  // header
  while (std::getline(in, line)) {
    if (line.empty()) continue;
    if (std::strtoll(line.c_str(), nullptr, 10) <= up_to_step) rows_.push_back(line);
  }
}

void MetricsLog::add(const std::vector<std::string>& values) {
  if (values.size() != columns_.size()) {
    fail_runtime("internal: metrics row has " + std::to_string(values.size()) + " values for " +
                 std::to_string(columns_.size()) + " columns");
  }
  std::string row;
  for (std::size_t i = 0; i < values.size(); ++i) row += (i ? "," : "") + values[i];
  rows_.push_back(row);
}

void MetricsLog::flush() const {
  std::string text;
  for (std::size_t i = 0; i < columns_.size(); ++i) text += (i ? "," : "") + columns_[i];
  text += "\n";
  for (const auto& row : rows_) text += row + "\n";
  write_file_atomic(file_, text);
}

}  // namespace tinct
