#include "study/finetune_overrides.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::string absolute_text(const std::string& path, const fs::path& folder) {
  fs::path p = path;
  if (p.is_relative()) p = folder / p;
  return p.lexically_normal().string();
}

void merge_into(YAML::Node target, const YAML::Node& overrides) {
  for (const auto& entry : overrides) {
    const std::string key = entry.first.Scalar();
    if (entry.second.IsMap() && target[key] && target[key].IsMap()) {
      merge_into(target[key], entry.second);
    } else {
      target[key] = YAML::Clone(entry.second);
    }
  }
}

}  // namespace

bool study_owned_key(const std::string& key) {
  return key == "config" || key == "output" || key == "budget" || key == "split";
}

void make_paths_absolute(YAML::Node config, const fs::path& folder) {
  if (config["stores"] && config["stores"].IsSequence()) {
    for (std::size_t i = 0; i < config["stores"].size(); ++i) {
      if (config["stores"][i].IsScalar()) {
        config["stores"][i] = absolute_text(config["stores"][i].Scalar(), folder);
      }
    }
  }
  if (config["init"] && config["init"].IsMap() && config["init"]["run"] && config["init"]["run"].IsScalar()) {
    config["init"]["run"] = absolute_text(config["init"]["run"].Scalar(), folder);
  }
}

YAML::Node merged_config(const YAML::Node& base, const YAML::Node& overrides) {
  YAML::Node result = YAML::Clone(base);
  if (overrides && overrides.IsMap()) merge_into(result, overrides);
  return result;
}

std::string yaml_text(const YAML::Node& node) {
  YAML::Emitter out;
  out << node;
  return std::string(out.c_str()) + "\n";
}

}  // namespace tinct
