// Writes one GeoTIFF with tinct's GeoTiffWriter from a YAML spec and a raw file of
// band-major values (bands x height x width, little-endian, the file's type), in
// row blocks of `rows_per_write`; the reference script checks it with GDAL.
#include <yaml-cpp/yaml.h>

#include <algorithm>
#include <cstdint>
#include <fstream>
#include <iostream>
#include <map>
#include <stdexcept>
#include <string>
#include <vector>

#include "raster/geotiff_writer.hpp"
#include "util/error.hpp"

namespace {

tinct::PixelType pixel_type(const std::string& name) {
  if (name == "uint8") return tinct::PixelType::uint8;
  if (name == "int16") return tinct::PixelType::int16;
  if (name == "uint16") return tinct::PixelType::uint16;
  return tinct::PixelType::float32;
}

std::map<std::string, std::string> text_map(const YAML::Node& node) {
  std::map<std::string, std::string> out;
  for (const auto& item : node) out[item.first.as<std::string>()] = item.second.as<std::string>();
  return out;
}

tinct::GeoTiffSpec read_spec(const YAML::Node& root) {
  tinct::GeoTiffSpec spec;
  spec.width = root["width"].as<int>();
  spec.height = root["height"].as<int>();
  spec.type = pixel_type(root["type"].as<std::string>());
  for (const auto& band : root["bands"]) {
    tinct::OutputBand out;
    out.description = band["description"].as<std::string>();
    if (band["metadata"]) out.metadata = text_map(band["metadata"]);
    spec.bands.push_back(out);
  }
  spec.crs_wkt = root["crs_wkt"].as<std::string>();
  for (int i = 0; i < 6; ++i) spec.geotransform[i] = root["geotransform"][i].as<double>();
  if (root["nodata"]) spec.nodata = root["nodata"].as<double>();
  for (const auto& entry : root["colour_table"]) {
    spec.colour_table.push_back({static_cast<std::uint8_t>(entry[0].as<int>()),
                                 static_cast<std::uint8_t>(entry[1].as<int>()),
                                 static_cast<std::uint8_t>(entry[2].as<int>())});
  }
  if (root["metadata"]) spec.metadata = text_map(root["metadata"]);
  if (root["block_size"]) spec.block_size = root["block_size"].as<int>();
  if (root["compression"]) spec.compression = root["compression"].as<std::string>();
  if (root["overview_resampling"]) spec.overview_resampling = root["overview_resampling"].as<std::string>();
  return spec;
}

// Rows [first, first + rows) of every band from the band-major raw file.
template <typename T>
std::vector<T> read_rows(std::ifstream& raw, const tinct::GeoTiffSpec& spec, int first, int rows) {
  const std::size_t row_values = static_cast<std::size_t>(spec.width);
  std::vector<T> out(spec.bands.size() * rows * row_values);
  for (std::size_t b = 0; b < spec.bands.size(); ++b) {
    const std::size_t offset = (b * spec.height + first) * row_values * sizeof(T);
    raw.seekg(static_cast<std::streamoff>(offset));
    raw.read(reinterpret_cast<char*>(out.data() + b * rows * row_values),
             static_cast<std::streamsize>(rows * row_values * sizeof(T)));
  }
  if (!raw) throw std::runtime_error("the raw values file is too short");
  return out;
}

template <typename T>
void write_all(tinct::GeoTiffWriter& writer, std::ifstream& raw, const tinct::GeoTiffSpec& spec, int step) {
  for (int row = 0; row < spec.height; row += step) {
    const int rows = std::min(step, spec.height - row);
    writer.write_rows(read_rows<T>(raw, spec, row, rows).data(), rows);
  }
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 2) {
    std::cerr << "usage: tinct_geotiff_tool SPEC.yaml\n";
    return 2;
  }
  try {
    const YAML::Node root = YAML::LoadFile(argv[1]);
    const tinct::GeoTiffSpec spec = read_spec(root);
    std::ifstream raw(root["values"].as<std::string>(), std::ios::binary);
    const int step = root["rows_per_write"].as<int>();
    tinct::GeoTiffWriter writer(root["output"].as<std::string>(), spec);
    switch (spec.type) {
      case tinct::PixelType::uint8: write_all<std::uint8_t>(writer, raw, spec, step); break;
      case tinct::PixelType::int16: write_all<std::int16_t>(writer, raw, spec, step); break;
      case tinct::PixelType::uint16: write_all<std::uint16_t>(writer, raw, spec, step); break;
      case tinct::PixelType::float32: write_all<float>(writer, raw, spec, step); break;
    }
    if (!root["skip_finish"] || !root["skip_finish"].as<bool>()) writer.finish();
  } catch (const tinct::Error& e) {
    std::cerr << "error: " << e.what() << "\n";
    return e.exit_code();
  } catch (const std::exception& e) {
    std::cerr << "error: " << e.what() << "\n";
    return 1;
  }
  return 0;
}
