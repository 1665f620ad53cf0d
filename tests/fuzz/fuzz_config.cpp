// Fuzz target: a YAML config through ConfigNode into the readers of pair and label
// configs (the plain C++ config readers; the training configs build on the same
// ConfigNode getters). The config lies in the fuzzer's scratch folder beside a small
// real scene (scene/blue.tif ... nir.tif, generic sensor) and a label CSV, so inputs
// that name them get past the file checks into the band and label settings.
#include <cstddef>
#include <cstdint>
#include <fstream>
#include <vector>

#include "fuzz_input.hpp"
#include "labels/label_config.hpp"
#include "pairing/pair_config.hpp"
#include "raster/crs.hpp"
#include "raster/geotiff_writer.hpp"
#include "util/config_node.hpp"
#include "util/log.hpp"

namespace {

void write_band(const std::filesystem::path& file, std::uint16_t base) {
  constexpr int kSize = 32;
  tinct::GeoTiffSpec spec;
  spec.width = spec.height = kSize;
  spec.type = tinct::PixelType::uint16;
  spec.bands = {tinct::OutputBand{}};
  spec.crs_wkt = tinct::crs_as_wkt("EPSG:32633", "fuzz scene");
  spec.geotransform = {500000, 10, 0, 5800000, 0, -10};
  spec.block_size = 128;  // the smallest tile GDAL takes without a warning
  std::vector<std::uint16_t> ramp(kSize * kSize);
  for (int i = 0; i < kSize * kSize; ++i) ramp[i] = static_cast<std::uint16_t>(base + 7 * i);
  tinct::GeoTiffWriter writer(file, spec);
  writer.write_rows(ramp.data(), kSize);
  writer.finish();
}

void write_fixtures(const std::filesystem::path& folder) {
  std::filesystem::create_directories(folder / "scene");
  const char* names[] = {"blue", "green", "red", "nir"};
  for (int band = 0; band < 4; ++band) {
    write_band(folder / "scene" / (std::string(names[band]) + ".tif"), static_cast<std::uint16_t>(400 + 300 * band));
  }
  std::ofstream(folder / "sites.csv") << "id,class,x,y,date\n1,reed,500080,5799920,2026-06-14\n"
                                         "2,water,500200,5799800,2026-06-14\n";
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const bool ready = [] {
    tinct::log::set_quiet(true);
    write_fixtures(tinct::fuzz::scratch_folder());
    return true;
  }();
  (void)ready;
  const auto file = tinct::fuzz::input_file("config.yaml", data, size);
  tinct::fuzz::expect_clean_refusal([&] { tinct::read_pair_config(tinct::ConfigNode::load(file)); });
  tinct::fuzz::expect_clean_refusal([&] { tinct::read_label_config(tinct::ConfigNode::load(file)); });
  return 0;
}
