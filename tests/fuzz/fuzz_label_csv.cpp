// Fuzz target: a label CSV through the CSV table reader and the point-label reader
// (columns x, y, class, date, group, id in EPSG:4326), then the class selection.
#include <cstddef>
#include <cstdint>

#include "fuzz_input.hpp"
#include "labels/csv_table.hpp"
#include "labels/label_reader.hpp"
#include "util/log.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  tinct::log::set_quiet(true);
  tinct::LabelSourceSettings settings;
  settings.source = tinct::fuzz::input_file("labels.csv", data, size);
  settings.csv = true;
  settings.x_column = "x";
  settings.y_column = "y";
  settings.class_column = "class";
  settings.date_column = "date";
  settings.group_column = "group";
  settings.id_column = "id";
  settings.crs = "EPSG:4326";
  tinct::fuzz::expect_clean_refusal([&] { tinct::read_csv_table(settings.source); });
  tinct::fuzz::expect_clean_refusal([&] {
    tinct::LabelSet set = tinct::read_label_source(settings);
    tinct::select_classes(set, {});
  });
  return 0;
}
