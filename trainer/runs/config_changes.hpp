// Which keys differ between two resolved configs, with both values as YAML text: what
// --resume compares against the config a run started with, and what run.yaml records
// when the learning rate was changed on resume. Lists and scalars compare whole; maps
// by key path ("train.lr").
#pragma once

#include <string>
#include <vector>

namespace tinct {

struct ConfigChange {
  std::string key;     // "train.lr"
  std::string before;  // "0.002"; "(absent)" when the key was not there
  std::string after;
};

std::vector<ConfigChange> config_changes(const std::string& before_yaml, const std::string& after_yaml);

// "train.lr (0.002 -> 0.001), train.batch (8 -> 16)"
std::string describe_changes(const std::vector<ConfigChange>& changes);

}  // namespace tinct
