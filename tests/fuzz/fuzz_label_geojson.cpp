// Fuzz target: a GeoJSON label file through OGR (GDAL's /vsimem/ file system, so no disk
// write per input) and the vector label reader (fields class, date, group, id), then the
// class selection. Undeclared CRS falls back to labels.crs EPSG:4326, as a config may say.
#include <gdal.h>
#include <cpl_vsi.h>

#include <cstddef>
#include <cstdint>

#include "fuzz_input.hpp"
#include "labels/label_reader.hpp"
#include "raster/gdal_session.hpp"
#include "util/log.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  tinct::log::set_quiet(true);
  tinct::ensure_gdal();
  const char* name = "/vsimem/tinct-fuzz/labels.geojson";
  // The buffer is the fuzzer's own: /vsimem/ reads it in place and does not free it.
  VSIFCloseL(VSIFileFromMemBuffer(name, const_cast<GByte*>(data), static_cast<vsi_l_offset>(size), FALSE));
  tinct::LabelSourceSettings settings;
  settings.source = name;
  settings.class_column = "class";
  settings.date_column = "date";
  settings.group_column = "group";
  settings.id_column = "id";
  tinct::fuzz::expect_clean_refusal([&] {
    tinct::LabelSet set = tinct::read_label_source(settings);
    tinct::select_classes(set, {});
  });
  VSIUnlink(name);
  return 0;
}
