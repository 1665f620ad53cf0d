#include "training/train_settings.hpp"

#include "util/config_node.hpp"

namespace tinct {

TrainSettings read_train_settings(const ConfigNode& node, const TrainSettings& defaults) {
  TrainSettings t;
  t.batch = static_cast<int>(node.integer("batch", defaults.batch, 1, 65536));
  t.optimizer = node.choice("optimizer", {"adamw", "sgd"}, defaults.optimizer);
  // Upper bounds keep every rate a finite float (max 3.4e38) inside LibTorch's optimisers;
  // a rate that large still diverges, and the non-finite guard then says so.
  t.lr = node.number("lr", defaults.lr, 1e-12, 1e30);
  t.min_lr = node.number("min_lr", defaults.min_lr, 0.0);
  if (t.min_lr > t.lr) node.fail("min_lr", "must not exceed lr; min_lr = lr keeps the rate constant");
  t.weight_decay = node.number("weight_decay", defaults.weight_decay, 0.0, 100.0);
  t.momentum = node.number("momentum", defaults.momentum, 0.0, 1.0);
  t.warmup = node.integer("warmup", defaults.warmup, 0);
  t.clip_norm = node.number("clip_norm", defaults.clip_norm, 0.0, 1e6);
  t.seed = static_cast<std::uint64_t>(node.integer("seed", static_cast<std::int64_t>(defaults.seed), 0));
  t.augment = node.flag("augment", defaults.augment);
  t.threads = static_cast<int>(node.integer("threads", defaults.threads, 0, 1024));
  return t;
}

}  // namespace tinct
