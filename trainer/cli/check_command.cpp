// tinct check CONFIG: reads a config of any kind (its `config:` key says which)
// exactly as the command would, reports the first problem, or prints the config
// with every default filled in. Nothing is run and nothing is written.
#include <iostream>

#include "cli/commands.hpp"
#include "labels/label_config.hpp"
#include "pairing/pair_config.hpp"
#include "pretrain/pretrain_config.hpp"
#include "finetune/finetune_config.hpp"
#include "study/study_plan.hpp"
#include "mapping/map_settings.hpp"
#include "raster/sensor_profile.hpp"
#include "util/config_node.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
#include "util/sha256.hpp"

namespace tinct {
namespace {

using ConfigReader = void (*)(const ConfigNode& root);

struct ConfigKind {
  const char* name;
  ConfigReader read;
};

const ConfigKind kConfigKinds[] = {
    {"sensor", [](const ConfigNode& root) { read_sensor_profile(root); }},
    {"pair", [](const ConfigNode& root) { read_pair_config(root); }},
    {"label", [](const ConfigNode& root) { read_label_config(root); }},
    {"pretrain", [](const ConfigNode& root) { read_pretrain_config(root); }},
    {"finetune", [](const ConfigNode& root) {
       const FinetuneConfig config = read_finetune_config(root);
       log::info(head_choice_line(config.head, config.head_choice));
     }},
    {"study", [](const ConfigNode& root) { plan_study(read_study_config(root)); }},
    {"map", [](const ConfigNode& root) { read_map_config(root); }},
};

void run_check(const std::string& file) {
  const ConfigNode root = ConfigNode::load(file);
  std::vector<std::string> names;
  for (const auto& kind : kConfigKinds) names.push_back(kind.name);
  const std::string kind = root.choice("config", names);
  for (const auto& entry : kConfigKinds) {
    if (kind == entry.name) entry.read(root);
  }
  root.finish();
  const std::string text = resolved_text(root);
  std::cout << text << std::flush;
  log::info(file + ": valid " + kind + " config (hash " + sha256_hex(text).substr(0, 12) + ")");
}

}  // namespace

CommandRun setup_check(CLI::App& command, const GlobalOptions&) {
  auto file = std::make_shared<std::string>();
  command.add_option("config", *file, "A tinct YAML config (its config: key names the kind)")
      ->required();
  return [file] { run_check(*file); };
}

}  // namespace tinct
