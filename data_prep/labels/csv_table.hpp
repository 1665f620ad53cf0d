// A label table in CSV (RFC 4180: a header row, commas, double quotes, quoted
// line breaks; \n or \r\n; a leading UTF-8 byte order mark is skipped), held
// whole: label files are small. Each row remembers the line it starts on.
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

namespace tinct {

struct CsvRow {
  int line = 0;  // 1-based line of the file where the row starts
  std::vector<std::string> fields;
};

struct CsvTable {
  std::filesystem::path file;
  std::vector<std::string> header;
  std::vector<CsvRow> rows;  // blank lines are skipped

  // The column called `name` (exact match), if any.
  std::optional<std::size_t> column(const std::string& name) const;
};

// Fails (runtime) naming the file and line on a malformed row, or a row whose
// field count differs from the header's.
CsvTable read_csv_table(const std::filesystem::path& file);

}  // namespace tinct
