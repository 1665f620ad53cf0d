// Reading the "case,field,values..." CSV files that the reference scripts write into
// $TINCT_TEST_DATA: each row holds one field of one numbered case. Test-only helpers.
#pragma once

#include <catch2/catch.hpp>

#include <cstdlib>
#include <fstream>
#include <map>
#include <sstream>
#include <string>
#include <vector>

namespace tinct_reference {

using Fields = std::map<std::string, std::vector<std::string>>;  // field -> values

inline std::string reference_path(const std::string& name) {
  const char* folder = std::getenv("TINCT_TEST_DATA");
  if (folder == nullptr) FAIL("TINCT_TEST_DATA is not set: run through ctest (it makes " << name << ")");
  return std::string(folder) + "/" + name;
}

// Rows split at commas, header skipped.
inline std::vector<std::vector<std::string>> read_rows(const std::string& name) {
  const std::string path = reference_path(name);
  std::ifstream in(path);
  if (!in) FAIL("cannot read " << path << ": run its make_*_reference.py first (ctest does)");
  std::vector<std::vector<std::string>> rows;
  std::string line;
  std::getline(in, line);
  while (std::getline(in, line)) {
    std::stringstream row(line);
    std::vector<std::string> cells;
    for (std::string cell; std::getline(row, cell, ',');) cells.push_back(cell);
    rows.push_back(cells);
  }
  return rows;
}

inline std::map<int, Fields> read_cases(const std::string& name) {
  std::map<int, Fields> cases;
  for (const auto& cells : read_rows(name)) {
    std::vector<std::string>& values = cases[std::stoi(cells.at(0))][cells.at(1)];
    values.assign(cells.begin() + 2, cells.end());
  }
  return cases;
}

inline double to_number(const std::string& text) { return std::strtod(text.c_str(), nullptr); }

inline std::vector<double> numbers(const Fields& fields, const std::string& name) {
  std::vector<double> out;
  for (const std::string& text : fields.at(name)) out.push_back(to_number(text));
  return out;
}

inline std::vector<int> integers(const Fields& fields, const std::string& name) {
  std::vector<int> out;
  for (const std::string& text : fields.at(name)) out.push_back(std::stoi(text));
  return out;
}

inline bool has(const Fields& fields, const std::string& name) { return fields.count(name) > 0; }

}  // namespace tinct_reference
