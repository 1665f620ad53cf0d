#include "finetune/label_split.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <random>
#include <set>

#include "util/error.hpp"
#include "util/log.hpp"

namespace tinct {
namespace {

void require_enough_per_class(const ChipCollection& chips, int folds) {
  std::map<int, std::int64_t> counts;
  for (const ChipRef& ref : chips.all()) ++counts[chips.class_of(ref)];
  for (std::size_t c = 0; c < chips.classes().size(); ++c) {
    const std::int64_t n = counts[static_cast<int>(c)];
    if (n < folds) {
      fail_usage("class \"" + chips.classes()[c] + "\" has " + std::to_string(n) + " labelled chips, fewer than the " +
                 std::to_string(folds) + " folds; use fewer split.folds or gather more labels of that class");
    }
  }
}

// Units shuffled with the seed and dealt round-robin: fold of each unit.
std::map<std::string, int> deal_folds(const std::vector<std::string>& units, int folds, std::uint64_t seed) {
  std::vector<std::string> order(units);
  std::mt19937_64 random(seed ^ 0xF01D5ULL);
  std::shuffle(order.begin(), order.end(), random);
  std::map<std::string, int> fold_of;
  for (std::size_t i = 0; i < order.size(); ++i) fold_of[order[i]] = static_cast<int>(i % folds);
  return fold_of;
}

std::int64_t drop_near(std::vector<ChipRef>& side, const std::vector<ChipRef>& test, const ChipCollection& chips,
                       double buffer) {
  if (buffer <= 0) return 0;
  std::vector<std::pair<double, double>> points;
  for (const ChipRef& ref : test) {
    const ChipRecord r = chips.store(ref.store).record(ref.chip);
    points.emplace_back(r.x, r.y);
  }
  const auto near_test = [&](const ChipRef& ref) {
    const ChipRecord r = chips.store(ref.store).record(ref.chip);
    for (const auto& [x, y] : points) {
      if (std::hypot(r.x - x, r.y - y) < buffer) return true;
    }
    return false;
  };
  const std::size_t before = side.size();
  side.erase(std::remove_if(side.begin(), side.end(), near_test), side.end());
  return static_cast<std::int64_t>(before - side.size());
}

}  // namespace

std::string split_unit(const ChipCollection& chips, const ChipRef& ref, const SplitSettings& settings) {
  const ChipRecord record = chips.store(ref.store).record(ref.chip);
  switch (settings.method) {
    case SplitMethod::blocks: {
      const long bx = static_cast<long>(std::floor(record.x / settings.block_size));
      const long by = static_cast<long>(std::floor(record.y / settings.block_size));
      return std::to_string(bx) + "_" + std::to_string(by);
    }
    case SplitMethod::groups: return record.group.empty() ? record.source_id : record.group;
    case SplitMethod::random: return std::to_string(ref.store) + ":" + std::to_string(ref.chip);
  }
  return "";
}

LabelSplit split_labels(const ChipCollection& chips, const SplitSettings& settings) {
  if (settings.fold < 0 || settings.fold >= settings.folds) {
    fail_usage("split.fold must be from 0 to split.folds - 1 (" + std::to_string(settings.folds - 1) + ")");
  }
  if (settings.method == SplitMethod::random) {
    log::warning("split.method random: neighbouring chips land on both sides, and spatial autocorrelation "
                 "makes the scores optimistic; prefer blocks or groups");
  }
  require_enough_per_class(chips, settings.folds);
  std::map<std::string, std::vector<ChipRef>> by_unit;
  for (const ChipRef& ref : chips.all()) by_unit[split_unit(chips, ref, settings)].push_back(ref);
  std::vector<std::string> units;
  for (const auto& entry : by_unit) units.push_back(entry.first);
  if (static_cast<int>(units.size()) < settings.folds) {
    fail_usage("the labels fall into " + std::to_string(units.size()) + " split units, fewer than " +
               std::to_string(settings.folds) + " folds; use a smaller split.block_size or fewer folds");
  }
  const auto fold_of = deal_folds(units, settings.folds, settings.seed);
  std::vector<std::string> training_units;
  LabelSplit split;
  split.units = static_cast<int>(units.size());
  for (const auto& unit : units) {
    if (fold_of.at(unit) == settings.fold) {
      split.test.insert(split.test.end(), by_unit[unit].begin(), by_unit[unit].end());
    } else {
      training_units.push_back(unit);
    }
  }
  // Validation: a share of the training units, carved out the same way.
  const auto validation_fold = deal_folds(training_units, std::max(2, static_cast<int>(std::lround(1.0 / settings.validation_fraction))),
                                          settings.seed + 1);
  for (const auto& unit : training_units) {
    auto& side = validation_fold.at(unit) == 0 ? split.validation : split.train;
    side.insert(side.end(), by_unit[unit].begin(), by_unit[unit].end());
  }
  split.dropped_by_buffer = drop_near(split.train, split.test, chips, settings.buffer) +
                            drop_near(split.validation, split.test, chips, settings.buffer);
  if (split.train.empty() || split.validation.empty() || split.test.empty()) {
    fail_usage("the split leaves " + std::to_string(split.train.size()) + " training, " +
               std::to_string(split.validation.size()) + " validation and " + std::to_string(split.test.size()) +
               " test chips; use a smaller split.block_size or split.buffer, or fewer folds");
  }
  return split;
}

}  // namespace tinct
