#include "labels/csv_table.hpp"

#include <fstream>
#include <sstream>

#include "util/error.hpp"

namespace tinct {
namespace {

std::string read_all(const std::filesystem::path& file) {
  std::ifstream in(file, std::ios::binary);
  if (!in) fail_runtime(file.string() + ": cannot read the label file; check the path and its permissions");
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

// Splits `text` into records; `line` counts physical lines (quoted line breaks too).
std::vector<CsvRow> split_records(const std::string& text, const std::string& file) {
  std::vector<CsvRow> rows;
  std::size_t i = text.compare(0, 3, "\xEF\xBB\xBF") == 0 ? 3 : 0;
  int line = 1;
  while (i < text.size()) {
    CsvRow row{line, {std::string()}};
    bool quoted_field = false;  // the current field was quoted (text after its close is an error)
    for (;;) {
      if (i >= text.size()) break;
      const char c = text[i];
      if (c == '\n' || (c == '\r' && i + 1 < text.size() && text[i + 1] == '\n')) {
        i += c == '\r' ? 2 : 1;
        ++line;
        break;
      }
      if (c == ',') {
        row.fields.emplace_back();
        quoted_field = false;
        ++i;
      } else if (c == '"' && row.fields.back().empty() && !quoted_field) {
        const int opened = line;
        quoted_field = true;
        for (++i;; ++i) {
          if (i >= text.size()) {
            fail_runtime(file + " line " + std::to_string(opened) + ": a quoted field is not closed");
          }
          if (text[i] == '"') {
            if (i + 1 < text.size() && text[i + 1] == '"') {
              row.fields.back() += '"';
              ++i;
              continue;
            }
            ++i;
            break;
          }
          if (text[i] == '\n') ++line;
          row.fields.back() += text[i];
        }
        if (i < text.size() && text[i] != ',' && text[i] != '\n' && text[i] != '\r') {
          fail_runtime(file + " line " + std::to_string(line) + ": text after a closing quote");
        }
      } else if (quoted_field || c == '"') {
        fail_runtime(file + " line " + std::to_string(line) + ": a quote inside an unquoted field; "
                     "quote the whole field and double inner quotes");
      } else {
        row.fields.back() += c;
        ++i;
      }
    }
    const bool blank = row.fields.size() == 1 && row.fields.front().empty();
    if (!blank) rows.push_back(std::move(row));
  }
  return rows;
}

}  // namespace

std::optional<std::size_t> CsvTable::column(const std::string& name) const {
  for (std::size_t i = 0; i < header.size(); ++i) {
    if (header[i] == name) return i;
  }
  return std::nullopt;
}

CsvTable read_csv_table(const std::filesystem::path& file) {
  CsvTable table;
  table.file = file;
  std::vector<CsvRow> rows = split_records(read_all(file), file.string());
  if (rows.empty()) fail_runtime(file.string() + ": is empty; a label CSV needs a header row and rows");
  table.header = rows.front().fields;
  for (std::size_t r = 1; r < rows.size(); ++r) {
    if (rows[r].fields.size() != table.header.size()) {
      fail_runtime(file.string() + " line " + std::to_string(rows[r].line) + ": " +
                   std::to_string(rows[r].fields.size()) + " fields, the header has " +
                   std::to_string(table.header.size()));
    }
    table.rows.push_back(std::move(rows[r]));
  }
  return table;
}

}  // namespace tinct
