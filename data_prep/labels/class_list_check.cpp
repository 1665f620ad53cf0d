#include "labels/class_list_check.hpp"

#include <map>

#include "util/error.hpp"
#include "util/nearest_name.hpp"

namespace tinct {

void require_listed_classes(const LabelSet& set, const LabelSourceSettings& settings) {
  std::map<std::string, int> found;
  for (const LabelRecord& label : set.labels) ++found[label.class_name];
  std::vector<std::string> names;
  std::string counts;
  for (const auto& [name, count] : found) {
    names.push_back(name);
    counts += (counts.empty() ? "" : ", ") + name + " (" + std::to_string(count) + ")";
  }
  const std::string source = settings.raster.empty()
                                 ? settings.source.filename().string() + " (column " + settings.class_column + ")"
                                 : settings.raster.filename().string();
  for (const auto& wanted : settings.classes) {
    if (found.count(wanted)) continue;
    const std::string near = nearest_name(wanted, names);
    fail_usage(settings.classes_where + ": class \"" + wanted + "\" matches no label in " + source +
               "; the classes found there: " + counts + (near.empty() ? "" : "; did you mean \"" + near + "\"?") +
               " Correct the name, or remove it from labels.classes");
  }
}

}  // namespace tinct
