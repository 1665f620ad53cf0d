#include "chips/chip_record.hpp"

#include <charconv>

#include "util/csv_field.hpp"
#include "util/error.hpp"
#include "util/number_text.hpp"

namespace tinct {
namespace {

constexpr const char* kHint = "; the store's chips.csv is damaged or was edited: rebuild the store";

std::string_view without_line_ending(std::string_view row) {
  if (!row.empty() && row.back() == '\n') row.remove_suffix(1);
  if (!row.empty() && row.back() == '\r') row.remove_suffix(1);
  return row;
}

std::vector<std::string> split_fields(std::string_view row, const std::string& where) {
  std::string problem;
  auto fields = parse_csv_row(row, &problem);
  if (!fields) fail_runtime(where + ": " + problem + kHint);
  return std::move(*fields);
}

template <typename Number>
Number parse_field(const std::string& text, const char* column, const std::string& where) {
  Number value{};
  const auto result = std::from_chars(text.data(), text.data() + text.size(), value);
  if (text.empty() || result.ec != std::errc() || result.ptr != text.data() + text.size()) {
    fail_runtime(where + ": column " + column + " holds \"" + text + "\", not a number" + kHint);
  }
  return value;
}

// The end of the row that starts at `begin`: just after its \n, or the end of the text.
std::size_t row_end(std::string_view text, std::size_t begin) {
  bool quoted = false;
  for (std::size_t i = begin; i < text.size(); ++i) {
    if (text[i] == '"') quoted = !quoted;  // a doubled quote toggles twice
    if (text[i] == '\n' && !quoted) return i + 1;
  }
  return text.size();
}

std::int64_t count_lines(std::string_view text) {
  std::int64_t lines = 0;
  for (const char c : text) lines += c == '\n';
  return lines;
}

}  // namespace

std::string chip_csv_header(bool labelled) {
  std::string header = "index,scene,col,row,x,y,date,valid_fraction,block";
  if (labelled) header += ",label,group,source_id";
  return header;
}

void append_chip_row(std::string& out, const ChipRecord& record, bool labelled) {
  out += std::to_string(record.index);
  out += ',';
  append_csv_field(out, record.scene);
  out += ',' + std::to_string(record.col) + ',' + std::to_string(record.row) + ',';
  out += exact_text(record.x) + ',' + exact_text(record.y) + ',';
  append_csv_field(out, record.date);
  out += ',' + exact_text(record.valid_fraction) + ',';
  append_csv_field(out, record.block);
  if (labelled) {
    for (const std::string* field : {&record.label, &record.group, &record.source_id}) {
      out += ',';
      append_csv_field(out, *field);
    }
  }
  out += '\n';
}

ChipRecord parse_chip_row(std::string_view row, bool labelled, const std::string& where) {
  const std::vector<std::string> fields = split_fields(without_line_ending(row), where);
  const std::size_t expected = labelled ? 12 : 9;
  if (fields.size() != expected) {
    fail_runtime(where + ": expected " + std::to_string(expected) + " fields, found " +
                 std::to_string(fields.size()) + kHint);
  }
  ChipRecord record;
  record.index = parse_field<std::int64_t>(fields[0], "index", where);
  record.scene = fields[1];
  record.col = parse_field<int>(fields[2], "col", where);
  record.row = parse_field<int>(fields[3], "row", where);
  record.x = parse_field<double>(fields[4], "x", where);
  record.y = parse_field<double>(fields[5], "y", where);
  record.date = fields[6];
  record.valid_fraction = parse_field<double>(fields[7], "valid_fraction", where);
  record.block = fields[8];
  if (labelled) {
    record.label = fields[9];
    record.group = fields[10];
    record.source_id = fields[11];
  }
  return record;
}

std::vector<std::size_t> index_chip_rows(std::string_view text, bool labelled, const std::string& file) {
  const std::size_t header_end = row_end(text, 0);
  const std::string expected = chip_csv_header(labelled);
  if (without_line_ending(text.substr(0, header_end)) != expected) {
    fail_runtime(file + " line 1: expected the header " + expected + kHint);
  }
  std::vector<std::size_t> offsets;
  std::int64_t line = 2;
  for (std::size_t begin = header_end; begin < text.size();) {
    const std::size_t end = row_end(text, begin);
    const std::string_view row = text.substr(begin, end - begin);
    const std::string where = file + " line " + std::to_string(line);
    const ChipRecord record = parse_chip_row(row, labelled, where);
    const auto position = static_cast<std::int64_t>(offsets.size());
    if (record.index != position) {
      fail_runtime(where + ": index " + std::to_string(record.index) + " where " +
                   std::to_string(position) + " was expected" + kHint);
    }
    offsets.push_back(begin);
    line += count_lines(row);
    begin = end;
  }
  offsets.push_back(text.size());
  return offsets;
}

}  // namespace tinct
