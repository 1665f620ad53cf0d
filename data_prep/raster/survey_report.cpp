#include "raster/survey_report.hpp"

#include <cmath>
#include <cstdio>
#include <sstream>

namespace tinct {
namespace {

std::string format(const char* pattern, double value) {
  char text[64];
  std::snprintf(text, sizeof(text), pattern, value);
  return text;
}

std::string crs_label(const RasterSurvey& survey) {
  if (survey.epsg) return "EPSG:" + std::to_string(*survey.epsg);
  return "custom (no EPSG code; WKT in --json)";
}

}  // namespace

std::string survey_table(const RasterSurvey& s) {
  std::ostringstream out;
  const auto& gt = s.geotransform;
  out << s.path << "\n";
  out << "  driver      " << s.driver << "\n";
  out << "  size        " << s.width << " x " << s.height << " pixels, " << s.bands.size() << " bands\n";
  out << "  CRS         " << crs_label(s) << "\n";
  out << "  pixel size  " << format("%.6g", gt[1]) << " x " << format("%.6g", std::fabs(gt[5]));
  if (gt[2] != 0 || gt[4] != 0) out << " (rotated grid)";
  out << "\n";
  out << "  origin      " << format("%.4f", gt[0]) << ", " << format("%.4f", gt[3]) << "\n";
  char header[160];
  std::snprintf(header, sizeof(header), "  %4s  %-16s %-8s %10s %12s %12s %12s %12s %7s %4s\n",
                "band", "description", "type", "nodata", "min", "max", "mean", "std", "valid", "ovr");
  out << header;
  for (const auto& b : s.bands) {
    const std::string nodata = b.info.nodata ? format("%g", *b.info.nodata) : "-";
    const bool any = b.valid_count > 0;
    char line[200];
    std::snprintf(line, sizeof(line), "  %4d  %-16s %-8s %10s %12s %12s %12s %12s %6.1f%% %4d\n",
                  b.info.index, b.info.description.empty() ? "-" : b.info.description.c_str(),
                  b.info.data_type.c_str(), nodata.c_str(), any ? format("%.6g", b.min).c_str() : "-",
                  any ? format("%.6g", b.max).c_str() : "-", any ? format("%.6f", b.mean).c_str() : "-",
                  any ? format("%.6f", b.std).c_str() : "-", 100.0 * b.valid_fraction,
                  b.info.overview_count);
    out << line;
  }
  return out.str();
}

Json survey_json(const RasterSurvey& s) {
  const auto number_or_null = [](bool known, double value) { return known ? json_number(value) : Json(); };
  Json root = Json::object();
  root["path"] = s.path;
  root["driver"] = s.driver;
  root["width"] = s.width;
  root["height"] = s.height;
  root["crs"] = {{"epsg", s.epsg ? Json(*s.epsg) : Json()}, {"wkt", s.crs_wkt}};
  Json gt = Json::array();
  for (double v : s.geotransform) gt.push_back(json_number(v));
  root["geotransform"] = gt;
  root["pixel_size"] = {json_number(s.geotransform[1]), json_number(std::fabs(s.geotransform[5]))};
  root["origin"] = {json_number(s.geotransform[0]), json_number(s.geotransform[3])};
  Json bands = Json::array();
  for (const auto& b : s.bands) {
    const bool any = b.valid_count > 0;
    Json band = Json::object();
    band["index"] = b.info.index;
    band["description"] = b.info.description;
    band["type"] = b.info.data_type;
    band["nodata"] = number_or_null(b.info.nodata.has_value(), b.info.nodata.value_or(0));
    band["valid_count"] = b.valid_count;
    band["valid_fraction"] = json_number(b.valid_fraction);
    band["min"] = number_or_null(any, b.min);
    band["max"] = number_or_null(any, b.max);
    band["mean"] = number_or_null(any, b.mean);
    band["std"] = number_or_null(any, b.std);
    band["overviews"] = b.info.overview_count;
    bands.push_back(band);
  }
  root["bands"] = bands;
  return root;
}

}  // namespace tinct
