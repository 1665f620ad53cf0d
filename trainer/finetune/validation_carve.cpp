#include "finetune/validation_carve.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <map>
#include <random>

namespace tinct {
namespace {

using ClassCounts = std::vector<long>;  // per class

struct Unit {
  std::vector<std::size_t> labels;  // positions in the labels given
  ClassCounts counts;
};

struct Carving {
  ClassCounts total, target, taken;

  long deviation(const ClassCounts& extra) const {
    long sum = 0;
    for (std::size_t c = 0; c < target.size(); ++c) sum += std::labs(taken[c] + extra[c] - target[c]);
    return sum;
  }
  // Training keeps at least one chip of every class it has.
  bool leaves_training(const ClassCounts& extra) const {
    for (std::size_t c = 0; c < total.size(); ++c) {
      if (extra[c] > 0 && total[c] - taken[c] - extra[c] < 1) return false;
    }
    return true;
  }
  void take(const ClassCounts& extra) {
    for (std::size_t c = 0; c < taken.size(); ++c) taken[c] += extra[c];
  }
};

ClassCounts targets(const ClassCounts& total, double fraction) {
  ClassCounts target(total.size(), 0);
  for (std::size_t c = 0; c < total.size(); ++c) {
    if (total[c] >= 2) target[c] = std::clamp(std::lround(fraction * static_cast<double>(total[c])), 1L, total[c] - 1);
  }
  return target;
}

}  // namespace

CarvedLabels carve_validation(const ChipCollection& chips, const std::vector<ChipRef>& labels,
                              const std::vector<std::string>& units, double fraction, std::uint64_t seed) {
  const std::size_t classes = chips.classes().size();
  std::map<std::string, Unit> by_name;
  Carving carving{ClassCounts(classes, 0), {}, ClassCounts(classes, 0)};
  for (std::size_t i = 0; i < labels.size(); ++i) {
    Unit& unit = by_name[units[i]];
    if (unit.counts.empty()) unit.counts.assign(classes, 0);
    const auto c = static_cast<std::size_t>(chips.class_of(labels[i]));
    unit.labels.push_back(i);
    ++unit.counts[c];
    ++carving.total[c];
  }
  carving.target = targets(carving.total, fraction);
  std::vector<Unit*> order;
  for (auto& entry : by_name) order.push_back(&entry.second);
  std::mt19937_64 random(seed ^ 0x7A11DA7EULL);
  std::shuffle(order.begin(), order.end(), random);

  std::vector<bool> in_validation(order.size(), false);
  for (std::size_t u = 0; u < order.size(); ++u) {
    const ClassCounts& counts = order[u]->counts;
    if (carving.deviation(counts) < carving.deviation(ClassCounts(classes, 0)) && carving.leaves_training(counts)) {
      carving.take(counts);
      in_validation[u] = true;
    }
  }
  for (std::size_t c = 0; c < classes; ++c) {
    if (carving.target[c] == 0 || carving.taken[c] > 0) continue;
    std::size_t best = order.size();
    for (std::size_t u = 0; u < order.size(); ++u) {
      if (in_validation[u] || order[u]->counts[c] == 0 || !carving.leaves_training(order[u]->counts)) continue;
      if (best == order.size() || carving.deviation(order[u]->counts) < carving.deviation(order[best]->counts)) best = u;
    }
    if (best == order.size()) continue;
    carving.take(order[best]->counts);
    in_validation[best] = true;
  }

  std::vector<bool> validation_label(labels.size(), false);
  for (std::size_t u = 0; u < order.size(); ++u) {
    if (in_validation[u]) {
      for (const std::size_t i : order[u]->labels) validation_label[i] = true;
    }
  }
  CarvedLabels carved;
  for (std::size_t i = 0; i < labels.size(); ++i) {
    (validation_label[i] ? carved.validation : carved.train).push_back(labels[i]);
  }
  return carved;
}

}  // namespace tinct
