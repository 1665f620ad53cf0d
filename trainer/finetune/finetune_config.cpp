#include "finetune/finetune_config.hpp"

#include "batches/store_fit.hpp"
#include "chips/store_list.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

// `head_by_default`: the head is left to the default, which the missing run would decide.
FinetuneInit read_init(const ConfigNode& node, int bands, bool head_by_default) {
  FinetuneInit init;
  init.pretrained = node.choice("from", {"pretrain", "scratch"}, "pretrain") == "pretrain";
  if (init.pretrained) {
    init.pretrain_run = node.path("run", true);
    node.allow("model");
    if (!fs::exists(init.pretrain_run / "encoder.pt")) {
      node.fail("run", init.pretrain_run.string() + " holds no encoder.pt; is the pretrain run finished?" +
                           (head_by_default ? " (" + head_default_rule() + ")" : std::string()));
    }
  } else if (node.has("run")) {
    init.pretrain_run = node.path("run", true);  // architecture and statistics only
    node.allow("model");
  } else {
    node.allow("run");
    init.model = read_model_spec(node.section("model"), bands);
  }
  node.finish();
  return init;
}

void read_freeze(const ConfigNode& node, FinetuneConfig& config) {
  const std::string policy = node.choice("policy", {"frozen", "full", "unfreeze_after"}, "full");
  config.freeze = policy == "frozen" ? FreezePolicy::frozen
                  : policy == "unfreeze_after" ? FreezePolicy::unfreeze_after
                                               : FreezePolicy::full;
  config.unfreeze_epoch = static_cast<int>(node.integer("epochs", 5, 0));
  config.encoder_lr_scale = node.number("encoder_lr_scale", 1.0, 0.0, 100.0);
  node.finish();
}

// weights: balanced (N / (K n_c)), none, or a list with one weight per class.
void read_classes(const ConfigNode& node, FinetuneConfig& config) {
  if (node.has("weights") && !node.peek("weights")) {
    config.class_weights = "explicit";
    config.explicit_weights = node.numbers("weights");
  } else {
    config.class_weights = node.choice("weights", {"balanced", "none"}, "balanced");
  }
  node.finish();
}

SplitSettings read_split(const ConfigNode& node) {
  SplitSettings s;
  const std::string method = node.choice("method", {"blocks", "groups", "random"}, "blocks");
  s.method = method == "groups" ? SplitMethod::groups : method == "random" ? SplitMethod::random : SplitMethod::blocks;
  s.block_size = node.number("block_size", 2000.0, 1e-6);
  s.folds = static_cast<int>(node.integer("folds", 5, 2, 100));
  s.fold = static_cast<int>(node.integer("fold", 0, 0, 99));
  if (s.fold >= s.folds) {
    node.fail("fold", "is " + std::to_string(s.fold) + ", but folds are numbered 0 to split.folds - 1 (" +
                          std::to_string(s.folds - 1) + ")");
  }
  s.buffer = node.number("buffer", 0.0, 0.0);
  s.validation_fraction = node.number("validation_fraction", 0.2, 0.05, 0.5);
  s.seed = static_cast<std::uint64_t>(node.integer("seed", 0, 0));
  node.finish();
  return s;
}

// budget: all, or {per_class: N} or {fraction: F}, with an optional seed (split.seed by default).
LabelBudget read_budget(const ConfigNode& root, std::uint64_t split_seed) {
  LabelBudget budget;
  budget.seed = split_seed;
  if (root.has("budget") && root.peek("budget")) {
    root.choice("budget", {"all"});
    return budget;
  }
  const ConfigNode node = root.section("budget");
  budget.per_class = static_cast<int>(node.integer("per_class", 0, 0));
  budget.fraction = node.number("fraction", 1.0, 1e-6, 1.0);
  if (budget.per_class > 0 && budget.fraction < 1.0) {  // 1 is the default a resolved config writes
    node.fail("fraction", "is given with per_class; give one of them");
  }
  budget.seed = static_cast<std::uint64_t>(node.integer("seed", static_cast<std::int64_t>(split_seed), 0));
  node.finish();
  return budget;
}

void read_train(const ConfigNode& node, FinetuneConfig& config) {
  config.epochs = static_cast<int>(node.integer("epochs", 50, 1));
  config.train = read_train_settings(node, finetune_train_defaults());
  config.patience = static_cast<int>(node.integer("patience", 10, 1));
  node.finish();
}

}  // namespace

TrainSettings finetune_train_defaults() {
  TrainSettings t;
  t.batch = 16;
  t.lr = 1e-3;
  t.weight_decay = 1e-4;
  t.warmup = 0;
  t.min_lr = 0;
  t.clip_norm = 5.0;
  return t;
}

FinetuneConfig read_finetune_config(const ConfigNode& root) {
  FinetuneConfig config;
  int bands = 0;
  config.stores = read_store_list(root, StoreKind::labels, bands);
  config.output = root.path("output", false);
  const ConfigNode init = root.section("init");
  const ConfigNode head = root.section("head");
  config.init = read_init(init, bands, head_left_to_default(head));
  require_no_conflicts(config.init.pretrain_run.empty()
                           ? store_conflicts(root, config.stores, config.init.model.encoder)
                           : store_conflicts_with_run(root, config.stores, config.init.pretrain_run, init, "run"));
  config.head_choice = choose_head_default(head, config.init.pretrained, config.init.pretrain_run);
  config.head = read_head_spec(head, config.head_choice.defaults);
  if (!is_probe(config.head.kind)) {
    config.dropout = head.number("dropout", 0.2, 0.0, 0.95);
    config.hidden = static_cast<int>(head.integer("hidden", 0, 0, 8192));
  }
  head.finish();
  read_freeze(root.section("freeze"), config);
  read_classes(root.section("classes"), config);
  read_train(root.section("train"), config);
  config.split = read_split(root.section("split"));
  config.budget = read_budget(root, config.split.seed);
  config.distributed = read_distributed_settings(root.section("distributed"));
  return config;
}

}  // namespace tinct
