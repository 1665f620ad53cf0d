#include "finetune/label_split.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <random>
#include <set>
#include <utility>

#include "finetune/validation_carve.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace tinct {
namespace {

using Point = std::pair<double, double>;

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

Point position(const ChipCollection& chips, const ChipRef& ref) {
  const ChipRecord r = chips.store(ref.store).record(ref.chip);
  return {r.x, r.y};
}

// Moves the chips of `side` closer than `buffer` to any of `others` out; returns them.
// A chip exactly `buffer` away stays.
std::vector<ChipRef> drop_near(std::vector<ChipRef>& side, const std::vector<ChipRef>& others,
                               const ChipCollection& chips, double buffer) {
  if (buffer <= 0) return {};
  std::vector<Point> points;
  for (const ChipRef& ref : others) points.push_back(position(chips, ref));
  std::vector<ChipRef> kept, dropped;
  for (const ChipRef& ref : side) {
    const auto [x, y] = position(chips, ref);
    const bool near = std::any_of(points.begin(), points.end(),
                                  [&](const Point& p) { return std::hypot(x - p.first, y - p.second) < buffer; });
    (near ? dropped : kept).push_back(ref);
  }
  side = std::move(kept);
  return dropped;
}

std::string class_list(const ChipCollection& chips, const std::vector<ChipRef>& side) {
  std::map<int, std::int64_t> counts;
  for (const ChipRef& ref : side) ++counts[chips.class_of(ref)];
  std::string text;
  for (const auto& [c, n] : counts) {
    text += (text.empty() ? "" : ", ") + std::to_string(n) + " \"" + chips.classes()[static_cast<std::size_t>(c)] + "\"";
  }
  return text;
}

void require_two_classes(const ChipCollection& chips, const std::vector<ChipRef>& side, const std::string& name,
                         int fold) {
  std::set<int> present;
  for (const ChipRef& ref : side) present.insert(chips.class_of(ref));
  if (present.size() >= 2) return;
  fail_usage("the " + name + " split of fold " + std::to_string(fold) + " holds " +
             (side.empty() ? std::string("no chips") : "one class only (" + class_list(chips, side) + ")") +
             "; its scores would mean nothing. Use a smaller split.block_size or split.buffer, fewer split.folds, "
             "a larger budget or labels of more classes");
}

struct FoldDeal {
  std::map<std::string, std::vector<ChipRef>> by_unit;
  std::map<std::string, int> fold_of;
};

FoldDeal deal(const ChipCollection& chips, const SplitSettings& settings) {
  FoldDeal d;
  for (const ChipRef& ref : chips.all()) d.by_unit[split_unit(chips, ref, settings)].push_back(ref);
  std::vector<std::string> units;
  for (const auto& entry : d.by_unit) units.push_back(entry.first);
  if (static_cast<int>(units.size()) < settings.folds) {
    fail_usage("the labels fall into " + std::to_string(units.size()) + " split units, fewer than " +
               std::to_string(settings.folds) + " folds; use a smaller split.block_size or fewer folds");
  }
  d.fold_of = deal_folds(units, settings.folds, settings.seed);
  return d;
}

// Every chip's unit, fold and role, in collection order.
std::vector<ChipAssignment> assignments(const FoldDeal& d, const LabelSplit& split,
                                        const std::vector<std::pair<std::vector<ChipRef>, const char*>>& unused) {
  std::map<std::pair<int, std::int64_t>, std::pair<ChipRole, std::string>> role_of;
  for (const ChipRef& ref : split.train) role_of[{ref.store, ref.chip}] = {ChipRole::train, ""};
  for (const ChipRef& ref : split.validation) role_of[{ref.store, ref.chip}] = {ChipRole::validation, ""};
  for (const ChipRef& ref : split.test) role_of[{ref.store, ref.chip}] = {ChipRole::test, ""};
  for (const auto& [refs, reason] : unused) {
    for (const ChipRef& ref : refs) role_of[{ref.store, ref.chip}] = {ChipRole::unused, reason};
  }
  std::vector<ChipAssignment> all;
  for (const auto& [unit, refs] : d.by_unit) {
    for (const ChipRef& ref : refs) {
      const auto& [role, reason] = role_of.at({ref.store, ref.chip});
      all.push_back({ref, unit, d.fold_of.at(unit), role, reason});
    }
  }
  std::sort(all.begin(), all.end(), [](const ChipAssignment& a, const ChipAssignment& b) {
    return std::make_pair(a.chip.store, a.chip.chip) < std::make_pair(b.chip.store, b.chip.chip);
  });
  return all;
}

std::vector<ChipRef> without(const std::vector<ChipRef>& all, const std::vector<ChipRef>& kept) {
  std::set<std::pair<int, std::int64_t>> keep;
  for (const ChipRef& ref : kept) keep.insert({ref.store, ref.chip});
  std::vector<ChipRef> rest;
  for (const ChipRef& ref : all) {
    if (!keep.count({ref.store, ref.chip})) rest.push_back(ref);
  }
  return rest;
}

}  // namespace

const char* role_name(ChipRole role) {
  switch (role) {
    case ChipRole::train: return "train";
    case ChipRole::validation: return "validation";
    case ChipRole::test: return "test";
    case ChipRole::unused: return "unused";
  }
  return "";
}

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

LabelSplit split_labels(const ChipCollection& chips, const SplitSettings& settings, const LabelBudget& budget) {
  if (settings.fold < 0 || settings.fold >= settings.folds) {
    fail_usage("split.fold must be from 0 to split.folds - 1 (" + std::to_string(settings.folds - 1) + ")");
  }
  if (settings.method == SplitMethod::random) {
    log::warning("split.method random: neighbouring chips land on both sides, and spatial autocorrelation "
                 "makes the scores optimistic; prefer blocks or groups");
  }
  require_enough_per_class(chips, settings.folds);
  const FoldDeal d = deal(chips, settings);
  LabelSplit split;
  split.units = static_cast<int>(d.by_unit.size());
  std::vector<ChipRef> pool;
  for (const auto& [unit, refs] : d.by_unit) {
    auto& side = d.fold_of.at(unit) == settings.fold ? split.test : pool;
    side.insert(side.end(), refs.begin(), refs.end());
  }
  const std::vector<ChipRef> near_test = drop_near(pool, split.test, chips, settings.buffer);
  const std::vector<ChipRef> labels = apply_budget(chips, pool, budget);
  const std::vector<ChipRef> over_budget = without(pool, labels);
  std::vector<std::string> units;
  for (const ChipRef& ref : labels) units.push_back(split_unit(chips, ref, settings));
  CarvedLabels carved = carve_validation(chips, labels, units, settings.validation_fraction, budget.seed);
  split.validation = std::move(carved.validation);
  split.train = std::move(carved.train);
  const std::vector<ChipRef> near_validation = drop_near(split.train, split.validation, chips, settings.buffer);
  split.dropped_by_buffer = static_cast<std::int64_t>(near_test.size() + near_validation.size());
  split.over_budget = static_cast<std::int64_t>(over_budget.size());
  split.assignment = assignments(d, split, {{near_test, "near_test"}, {over_budget, "over_budget"},
                                           {near_validation, "near_validation"}});
  require_two_classes(chips, split.train, "training", settings.fold);
  require_two_classes(chips, split.validation, "validation", settings.fold);
  require_two_classes(chips, split.test, "test", settings.fold);
  return split;
}

}  // namespace tinct
