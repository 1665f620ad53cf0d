// The head a finetune config gets when its `head:` section names neither pool nor kind.
// From the studies (README, Heads for point labels; examples/heads_study/): a linear probe
// on the pretrained decoder's predicted Lab and the input bands at the label pixel, when
// the run starts from a pretrain run whose decoder predicts Lab by regression (l1,
// smooth_l1, l2). Where that readout cannot work (scratch, ab_bins decoders, encoder.pt
// without its decoder) or the config asks for a trained head's keys, the trained
// global-pool head. An explicit pool or kind always wins; its other keys keep their own
// defaults (models/head_spec.hpp).
#pragma once

#include <filesystem>
#include <string>

#include <yaml-cpp/yaml.h>

#include "models/head_spec.hpp"

namespace tinct {

class ConfigNode;

struct HeadChoice {
  HeadSpec defaults;        // pool, kind and input_bands for the keys the config leaves out
  bool by_default = false;  // the config names neither head.pool nor head.kind
  std::string reason;       // why this default; empty when the config names the head
};

// The `head:` section names neither pool nor kind, so the default decides them.
bool head_left_to_default(const ConfigNode& head);

// `pretrain_run` is read only when `pretrained` (its encoder.pt must exist).
HeadChoice choose_head_default(const ConfigNode& head, bool pretrained, const std::filesystem::path& pretrain_run);

// The rule in words, for a `tinct check` that cannot read the pretrain run.
std::string head_default_rule();

// One log line: "head: default {pool: ...} because ..." or "head: {pool: ...} as configured".
std::string head_choice_line(const HeadSpec& head, const HeadChoice& choice);

// run.yaml's `head:` entry: pool, kind (and the keys of that kind), chosen_by (default or
// config) and, for a default, the reason.
YAML::Node head_choice_record(const HeadSpec& head, const HeadChoice& choice);

}  // namespace tinct
