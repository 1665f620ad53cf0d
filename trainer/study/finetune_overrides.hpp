// How a study composes each fine-tune's config from YAML: the base finetune config, the
// arm's overrides on top (maps merged key by key, other values replaced), then the run's
// own output, label budget, fold and seed. Paths are made absolute first, each against
// the folder of the file it was written in, so the composed config reads the same from
// anywhere.
#pragma once

#include <yaml-cpp/yaml.h>

#include <filesystem>
#include <string>

namespace tinct {

// Keys a study sets for every run; an arm may not override them.
bool study_owned_key(const std::string& key);

// In place: `stores` entries and `init.run` made absolute against `folder`.
void make_paths_absolute(YAML::Node config, const std::filesystem::path& folder);

// A deep copy of `base` with `overrides` merged in.
YAML::Node merged_config(const YAML::Node& base, const YAML::Node& overrides);

std::string yaml_text(const YAML::Node& node);

}  // namespace tinct
