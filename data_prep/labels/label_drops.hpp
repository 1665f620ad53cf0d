// Why a label gave no chip, and the drop report (id, class, reason, detail; RFC
// 4180), one row per label dropped: `dropped.csv` inside the label store, written
// and renamed into place with it; when no label gives a chip there is no store, and
// the report is written beside it as `<store>.dropped.csv` so the failure says why.
#pragma once

#include <cstdint>
#include <filesystem>
#include <map>
#include <string>
#include <vector>

namespace tinct {

enum class DropReason {
  class_not_listed,     // the class is not in labels.classes
  outside,              // no scene's grid holds a full chip around the label
  no_scene_in_time,     // scenes cover it, but none within match.max_days
  masked,               // the label's own pixel is masked or nodata
  too_few_valid,        // the chip has fewer valid pixels than chips.min_valid
  no_majority,          // label raster: no class covers min_share of the chip
  no_point_in_polygon,  // polygon: no sampled point fell inside it
};

// The report's text: "class not in the list", "outside all scenes", ...
std::string to_string(DropReason reason);

struct LabelDrop {
  std::string id;
  std::string class_name;
  DropReason reason = DropReason::outside;
  std::string detail;
};

inline constexpr const char* kDropReportName = "dropped.csv";  // inside the store

// The report of a run that wrote no store: "stores/a.labels" -> "stores/a.labels.dropped.csv"
std::filesystem::path drop_report_path(const std::filesystem::path& store);

std::string drop_report_csv(const std::vector<LabelDrop>& drops);

// Drops per reason, in the enum's order, for the log and the no-chip error.
std::map<DropReason, std::int64_t> count_reasons(const std::vector<LabelDrop>& drops);
// "12 outside all scenes, 3 masked"
std::string describe_counts(const std::map<DropReason, std::int64_t>& counts);

}  // namespace tinct
