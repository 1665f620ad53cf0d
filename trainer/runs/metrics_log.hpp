// metrics.csv of a run: one row per logged step, kept in memory and rewritten
// atomically on flush (at validations, checkpoints and the end), so the file on
// disk is always whole. On resume, rows after the checkpoint's step are dropped.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

namespace tinct {

class MetricsLog {
 public:
  MetricsLog(std::filesystem::path file, std::vector<std::string> columns);
  // Reads an existing file, keeping rows whose first column (step) <= up_to_step.
  void resume(std::int64_t up_to_step);
  // Values in column order; empty strings for columns without a value this row.
  void add(const std::vector<std::string>& values);
  void flush() const;
  std::size_t rows() const { return rows_.size(); }

 private:
  std::filesystem::path file_;
  std::vector<std::string> columns_;
  std::vector<std::string> rows_;
};

std::string metric_text(double value);  // shortest text that reads back the same double

}  // namespace tinct
