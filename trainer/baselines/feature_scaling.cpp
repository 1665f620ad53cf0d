#include "baselines/feature_scaling.hpp"

#include <cmath>

#include "util/error.hpp"
#include "util/running_stats.hpp"

namespace tinct {

FeatureScaling fit_scaling(const FeatureTable& train) {
  FeatureScaling scaling;
  for (int f = 0; f < train.columns(); ++f) {
    RunningStats stats;
    for (int i = 0; i < train.rows(); ++i) stats.add(train.row(i)[f]);
    const double sd = stats.population_std();
    scaling.mean.push_back(stats.mean());
    scaling.sd.push_back(sd > 0 ? sd : 1.0);
  }
  return scaling;
}

void apply_scaling(const FeatureScaling& scaling, FeatureTable& table) {
  const std::size_t columns = table.names.size();
  if (scaling.mean.size() != columns) {
    fail_runtime("feature scaling fitted on " + std::to_string(scaling.mean.size()) + " features, applied to " +
                 std::to_string(columns));
  }
  for (std::size_t at = 0; at < table.values.size(); ++at) {
    const std::size_t f = at % columns;
    table.values[at] = static_cast<float>((table.values[at] - scaling.mean[f]) / scaling.sd[f]);
  }
}

}  // namespace tinct
