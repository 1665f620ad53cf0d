// Fuzz target: a store's chips.csv through the row index the store reader builds on
// open; the first byte chooses a pair store's or a label store's columns.
#include <cstddef>
#include <cstdint>
#include <string_view>

#include "chips/chip_record.hpp"
#include "fuzz_input.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size == 0) return 0;
  const bool labelled = (data[0] & 1) != 0;
  const std::string_view text(reinterpret_cast<const char*>(data) + 1, size - 1);
  tinct::fuzz::expect_clean_refusal([&] {
    const std::vector<std::size_t> rows = tinct::index_chip_rows(text, labelled, "chips.csv");
    for (std::size_t i = 0; i + 1 < rows.size(); ++i) {
      tinct::parse_chip_row(text.substr(rows[i], rows[i + 1] - rows[i]), labelled, "chips.csv row");
    }
  });
  return 0;
}
