// Which pretext loss pretraining uses and its parameters, without LibTorch, so
// configs and the command line can name them cheaply (the losses: colour_loss.hpp).
#pragma once

#include <array>

namespace tinct {

enum class ColourLossKind { l1, smooth_l1, l2, ab_bins };

struct ColourLossSettings {
  ColourLossKind kind = ColourLossKind::smooth_l1;
  std::array<double, 3> channel_weights{1, 1, 1};  // L, a, b
  double smooth_l1_beta = 0.1;                      // in scaled units; 0 is plain L1
  int ab_bins_per_axis = 10;
  double rebalance_lambda = 0.5;
};

}  // namespace tinct
