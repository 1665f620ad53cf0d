#include "chips/chip_plan.hpp"

#include <algorithm>
#include <cmath>
#include <random>

namespace tinct {

std::vector<ChipWindow> plan_chips(int width, int height, const ChipPlanSettings& settings,
                                   std::uint64_t scene_seed) {
  std::vector<ChipWindow> windows;
  if (width < settings.size || height < settings.size) return windows;
  std::mt19937_64 random(settings.seed * 0x9E3779B97F4A7C15ULL + scene_seed);
  if (settings.random) {
    std::uniform_int_distribution<int> col(0, width - settings.size);
    std::uniform_int_distribution<int> row(0, height - settings.size);
    for (int i = 0; i < settings.random_count; ++i) windows.push_back({col(random), row(random)});
    std::sort(windows.begin(), windows.end(),
              [](const ChipWindow& a, const ChipWindow& b) { return a.row != b.row ? a.row < b.row : a.col < b.col; });
  } else {
    for (int row = 0; row + settings.size <= height; row += settings.stride) {
      for (int col = 0; col + settings.size <= width; col += settings.stride) windows.push_back({col, row});
    }
  }
  if (settings.max_per_scene > 0 && static_cast<int>(windows.size()) > settings.max_per_scene) {
    std::shuffle(windows.begin(), windows.end(), random);
  }
  return windows;
}

std::string block_of(double x, double y, double block_size) {
  const long bx = static_cast<long>(std::floor(x / block_size));
  const long by = static_cast<long>(std::floor(y / block_size));
  return std::to_string(bx) + "_" + std::to_string(by);
}

}  // namespace tinct
