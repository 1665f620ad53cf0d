#include "labels/label_drops.hpp"

#include "util/csv_field.hpp"

namespace tinct {

std::string to_string(DropReason reason) {
  switch (reason) {
    case DropReason::class_not_listed: return "class not in the list";
    case DropReason::outside: return "outside all scenes";
    case DropReason::no_scene_in_time: return "no scene within max_days";
    case DropReason::masked: return "masked";
    case DropReason::too_few_valid: return "too few valid pixels";
    case DropReason::no_majority: return "no majority class";
    case DropReason::no_point_in_polygon: return "no point inside the polygon";
  }
  return "unknown";
}

std::filesystem::path drop_report_path(const std::filesystem::path& store) {
  std::filesystem::path path = store;
  if (!path.has_filename()) path = path.parent_path();  // "out.labels/"
  path += ".dropped.csv";
  return path;
}

std::string drop_report_csv(const std::vector<LabelDrop>& drops) {
  std::string text = "id,class,reason,detail\n";
  for (const auto& drop : drops) {
    append_csv_field(text, drop.id);
    text += ',';
    append_csv_field(text, drop.class_name);
    text += ',';
    append_csv_field(text, to_string(drop.reason));
    text += ',';
    append_csv_field(text, drop.detail);
    text += '\n';
  }
  return text;
}

std::map<DropReason, std::int64_t> count_reasons(const std::vector<LabelDrop>& drops) {
  std::map<DropReason, std::int64_t> counts;
  for (const auto& drop : drops) ++counts[drop.reason];
  return counts;
}

std::string describe_counts(const std::map<DropReason, std::int64_t>& counts) {
  std::string text;
  for (const auto& [reason, count] : counts) {
    text += (text.empty() ? "" : ", ") + std::to_string(count) + " " + to_string(reason);
  }
  return text.empty() ? "none" : text;
}

}  // namespace tinct
