#include "runs/config_changes.hpp"

#include <yaml-cpp/yaml.h>

#include <map>

namespace tinct {
namespace {

constexpr const char* kAbsent = "(absent)";

std::string flow_text(const YAML::Node& node) {
  YAML::Emitter out;
  out << YAML::Flow << node;
  return out.c_str();
}

// Every leaf (a scalar or a list) by its key path.
void flatten(const YAML::Node& node, const std::string& path, std::map<std::string, std::string>& leaves) {
  if (!node.IsMap()) {
    leaves[path] = flow_text(node);
    return;
  }
  for (const auto& entry : node) {
    const std::string key = entry.first.as<std::string>();
    flatten(entry.second, path.empty() ? key : path + "." + key, leaves);
  }
}

std::map<std::string, std::string> leaves_of(const std::string& yaml) {
  std::map<std::string, std::string> leaves;
  flatten(YAML::Load(yaml), "", leaves);
  return leaves;
}

}  // namespace

std::vector<ConfigChange> config_changes(const std::string& before_yaml, const std::string& after_yaml) {
  const auto before = leaves_of(before_yaml);
  const auto after = leaves_of(after_yaml);
  std::vector<ConfigChange> changes;
  for (const auto& [key, value] : before) {
    const auto found = after.find(key);
    if (found == after.end()) {
      changes.push_back({key, value, kAbsent});
    } else if (found->second != value) {
      changes.push_back({key, value, found->second});
    }
  }
  for (const auto& [key, value] : after) {
    if (!before.count(key)) changes.push_back({key, kAbsent, value});
  }
  return changes;
}

std::string describe_changes(const std::vector<ConfigChange>& changes) {
  std::string text;
  for (const ConfigChange& change : changes) {
    if (!text.empty()) text += ", ";
    text += change.key + " (" + change.before + " -> " + change.after + ")";
  }
  return text;
}

}  // namespace tinct
