// One row of chips.csv: where a chip came from (scene, pixel and map position,
// date), how much of it is valid, its spatial block and, in label stores, its
// label. CSV follows RFC 4180 quoting; rows end in \n (\r\n is accepted).
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace tinct {

struct ChipRecord {
  std::int64_t index = 0;  // the chip's position in the store
  std::string scene;       // a scene id of the manifest
  int col = 0, row = 0;    // the chip's top-left pixel in the scene
  double x = 0, y = 0;     // map coordinates of the chip centre, in the scene's CRS
  std::string date;
  double valid_fraction = 0;
  std::string block;
  std::string label, group, source_id;  // label stores only
};

// The header line, without its line ending.
std::string chip_csv_header(bool labelled);
// Appends one row and its \n; numbers are written so that they read back exactly.
void append_chip_row(std::string& out, const ChipRecord& record, bool labelled);

// Parses one row (its line ending may be included). `where` ("FILE line N") starts
// every error message.
ChipRecord parse_chip_row(std::string_view row, bool labelled, const std::string& where);

// The byte offset of each row after the header in a whole chips.csv text, plus the
// end offset; checks the header and parses every row, so errors carry line numbers.
std::vector<std::size_t> index_chip_rows(std::string_view text, bool labelled,
                                         const std::string& file);

}  // namespace tinct
