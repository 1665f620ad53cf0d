#include "pretrain/pretrain_config.hpp"

#include "batches/store_fit.hpp"
#include "chips/store_list.hpp"
#include "training/precision.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

ColourLossSettings read_loss(const ConfigNode& node) {
  ColourLossSettings loss;
  const std::string kind = node.choice("kind", {"l1", "smooth_l1", "l2", "ab_bins"}, "smooth_l1");
  loss.kind = kind == "l1" ? ColourLossKind::l1
              : kind == "l2" ? ColourLossKind::l2
              : kind == "ab_bins" ? ColourLossKind::ab_bins
                                  : ColourLossKind::smooth_l1;
  const auto weights = node.numbers("channel_weights", std::vector<double>{1, 1, 1});
  if (weights.size() != 3) node.fail("channel_weights", "expected three weights: L, a, b");
  for (int c = 0; c < 3; ++c) loss.channel_weights[c] = weights[c];
  loss.smooth_l1_beta = node.number("beta", 0.1, 1e-6);
  loss.ab_bins_per_axis = static_cast<int>(node.integer("ab_bins_per_axis", 10, 2, 64));
  loss.rebalance_lambda = node.number("rebalance", 0.5, 0.0, 1.0);
  node.finish();
  return loss;
}

void read_train(const ConfigNode& node, PretrainConfig& config) {
  config.steps = node.integer("steps", 0, 0);
  config.epochs = node.number("epochs", 10.0, 1e-6);
  config.train = read_train_settings(node, TrainSettings{});  // the struct's defaults are pretrain's
  config.log_every = static_cast<int>(node.integer("log_every", 10, 1));
  config.precision = node.choice("precision", precision_names(), config.precision);
  node.finish();
}

ValidationSettings read_validation(const ConfigNode& node) {
  ValidationSettings v;
  v.fraction = node.number("fraction", 0.2, 0.01, 0.9);
  v.every = node.integer("every", 100, 0);
  v.chips = static_cast<int>(node.integer("chips", 256, 1));
  v.previews = static_cast<int>(node.integer("previews", 8, 0, 64));
  node.finish();
  return v;
}

CheckpointSettings read_checkpoints(const ConfigNode& node) {
  CheckpointSettings c;
  c.every = node.integer("every", 200, 1);
  c.keep = static_cast<int>(node.integer("keep", 3, 1));
  node.finish();
  return c;
}

}  // namespace

PretrainConfig read_pretrain_config(const ConfigNode& root) {
  PretrainConfig config;
  int bands = 0;
  config.stores = read_store_list(root, StoreKind::pairs, bands);
  config.output = root.path("output", false);
  config.model = read_model_spec(root.section("model"), bands);
  config.loss = read_loss(root.section("loss"));
  // The loss decides what the decoder outputs; a model section that says otherwise is a mistake.
  const bool bins = config.loss.kind == ColourLossKind::ab_bins;
  if (!bins && config.model.decoder.output == "ab_bins") {
    root.section("model").fail("output", "ab_bins outputs need loss.kind: ab_bins");
  }
  if (bins) {
    config.model.decoder.output = "ab_bins";
    config.model.decoder.ab_bins_per_axis = config.loss.ab_bins_per_axis;
  }
  require_no_conflicts(store_conflicts(root, config.stores, config.model.encoder));
  read_train(root.section("train"), config);
  config.validation = read_validation(root.section("validation"));
  config.checkpoints = read_checkpoints(root.section("checkpoints"));
  config.distributed = read_distributed_settings(root.section("distributed"));
  return config;
}

}  // namespace tinct
