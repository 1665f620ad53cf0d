// Where chips are cut from a scene's grid: a regular grid with a stride, or
// seeded random windows; and the spatial block each chip belongs to, so later
// steps can hold out whole blocks of ground instead of neighbouring chips.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

namespace tinct {

// Chip sides must be a multiple of this: the smallest total stride of the encoders
// (compact 16; resnet18 and resnet34 need 32, which pretrain and finetune check).
inline constexpr int kChipSizeMultiple = 16;

struct ChipPlanSettings {
  int size = 64;          // pixels
  int stride = 64;        // pixels between grid windows
  bool random = false;    // seeded random windows instead of a grid
  int random_count = 500; // windows per scene when random
  double min_valid = 0.9; // minimum fraction of valid pixels to keep a chip
  int max_per_scene = 0;  // 0 = no limit; else a seeded random subset is kept
  double block_size = 5000;  // metres
  std::uint64_t seed = 0;
};

struct ChipWindow {
  int col = 0;
  int row = 0;
};

// Windows in processing order. With max_per_scene set, the order is a seeded
// shuffle so that taking the first accepted chips is an unbiased subset.
std::vector<ChipWindow> plan_chips(int width, int height, const ChipPlanSettings& settings,
                                   std::uint64_t scene_seed);

// "bx_by" with bx = floor(x / size), by = floor(y / size) in map units.
std::string block_of(double x, double y, double block_size);

}  // namespace tinct
