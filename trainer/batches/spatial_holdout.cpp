#include "batches/spatial_holdout.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <random>
#include <set>
#include <string>

#include "util/error.hpp"

namespace tinct {

ChipSplit hold_out_blocks(const ChipCollection& chips, double fraction, std::uint64_t seed) {
  std::map<std::string, std::vector<ChipRef>> by_block;
  for (const ChipRef& ref : chips.all()) by_block[chips.block_of(ref)].push_back(ref);
  if (by_block.size() < 2) {
    fail_usage("the stores' chips lie in " + std::to_string(by_block.size()) +
               " spatial block; validation needs whole blocks held out: pair with a smaller chips.block_size");
  }
  std::vector<std::string> blocks;
  for (const auto& entry : by_block) blocks.push_back(entry.first);
  std::mt19937_64 random(seed ^ 0xB10C5EEDULL);
  std::shuffle(blocks.begin(), blocks.end(), random);
  const auto held = std::clamp<std::size_t>(static_cast<std::size_t>(std::lround(fraction * blocks.size())), 1,
                                            blocks.size() - 1);
  const std::set<std::string> validation(blocks.begin(), blocks.begin() + static_cast<long>(held));
  ChipSplit split;
  for (const auto& [block, refs] : by_block) {
    auto& target = validation.count(block) ? split.validation : split.train;
    target.insert(target.end(), refs.begin(), refs.end());
  }
  split.validation_blocks = static_cast<int>(held);
  split.train_blocks = static_cast<int>(blocks.size() - held);
  return split;
}

}  // namespace tinct
