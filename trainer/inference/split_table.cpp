#include "inference/split_table.hpp"

#include <charconv>
#include <fstream>
#include <sstream>

#include "util/csv_field.hpp"
#include "util/error.hpp"
#include "util/number_text.hpp"

namespace tinct {
namespace {

const char* const kHeader = "store,index,scene,source_id,x,y,class,unit,fold,role,reason";

template <typename Number>
Number number_field(const std::string& text, const std::string& where) {
  Number value{};
  const auto result = std::from_chars(text.data(), text.data() + text.size(), value);
  if (text.empty() || result.ec != std::errc() || result.ptr != text.data() + text.size()) {
    fail_runtime(where + ": \"" + text + "\" is not a number; the run's split.csv is damaged");
  }
  return value;
}

SplitRow parse_row(const std::string& line, const std::string& where) {
  const auto fields = parse_csv_row(line);
  if (!fields || fields->size() != 11) fail_runtime(where + ": not a split.csv row of 11 fields");
  const auto& f = *fields;
  SplitRow row;
  row.store = f[0];
  row.index = number_field<std::int64_t>(f[1], where);
  row.scene = f[2];
  row.source_id = f[3];
  row.x = number_field<double>(f[4], where);
  row.y = number_field<double>(f[5], where);
  row.label = f[6];
  row.unit = f[7];
  row.fold = number_field<int>(f[8], where);
  row.role = f[9];
  row.reason = f[10];
  return row;
}

}  // namespace

std::string split_table_csv(const std::vector<SplitRow>& rows) {
  std::string text = std::string(kHeader) + "\n";
  for (const SplitRow& r : rows) {
    for (const std::string& field : {r.store, std::to_string(r.index), r.scene, r.source_id, fixed_text(r.x),
                                     fixed_text(r.y), r.label, r.unit, std::to_string(r.fold), r.role}) {
      append_csv_field(text, field);
      text += ',';
    }
    append_csv_field(text, r.reason);
    text += '\n';
  }
  return text;
}

std::vector<SplitRow> read_split_table(const std::filesystem::path& file) {
  std::ifstream in(file);
  if (!in) fail_runtime(file.string() + ": cannot be read");
  std::string line;
  std::getline(in, line);
  if (!line.empty() && line.back() == '\r') line.pop_back();
  if (line != kHeader) fail_runtime(file.string() + ": not a split.csv (its header is not \"" + kHeader + "\")");
  std::vector<SplitRow> rows;
  for (int number = 2; std::getline(in, line); ++number) {
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.empty()) continue;
    rows.push_back(parse_row(line, file.string() + " line " + std::to_string(number)));
  }
  return rows;
}

std::string chip_identity(const std::string& scene, const std::string& source_id, double x, double y) {
  return scene + '\n' + source_id + '\n' + exact_text(x) + '\n' + exact_text(y);
}

std::map<std::string, std::string> roles_by_identity(const std::vector<SplitRow>& rows) {
  std::map<std::string, std::string> roles;
  for (const SplitRow& r : rows) roles[chip_identity(r.scene, r.source_id, r.x, r.y)] = r.role;
  return roles;
}

}  // namespace tinct
