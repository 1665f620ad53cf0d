#include "mapping/map_model.hpp"

#include <algorithm>
#include <cmath>

#include "assess/temperature_scaling.hpp"
#include "mapping/cell_values.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

void require_alike(const WindowModel& first, const WindowModel& other, const fs::path& first_run,
                   const fs::path& run) {
  std::string differs;
  if (other.classes() != first.classes()) differs = "classes";
  else if (other.chip_size() != first.chip_size()) differs = "chip size";
  else if (other.feature_stride() != first.feature_stride()) differs = "encoder feature stride";
  else if (other.feature_count() != first.feature_count()) differs = "head's read-out features";
  else if (other.normalisation().bands != first.normalisation().bands) differs = "input bands";
  else if (other.normalisation().mean != first.normalisation().mean ||
           other.normalisation().std != first.normalisation().std) {
    differs = "band normalisation (its label stores differ)";
  }
  if (!differs.empty()) {
    fail_usage("map: ensemble member " + run.string() + " differs from " + first_run.string() + " in its " + differs +
               "; an ensemble's members must read the scene alike: take runs of one arm, or runs fine-tuned on the "
               "same stores with the same chip size and encoder");
  }
}

}  // namespace

void WindowOutputs::resize(std::size_t windows, std::size_t classes, std::size_t feature_count) {
  probabilities.resize(windows * classes);
  features.resize(windows * feature_count);
  disagreement.resize(windows);
}

void WindowOutputs::assign_zero(std::size_t windows, std::size_t classes, std::size_t feature_count) {
  probabilities.assign(windows * classes, 0.0f);
  features.assign(windows * feature_count, 0.0f);
  disagreement.assign(windows, 0.0f);
}

void WindowOutputs::copy_window(const WindowOutputs& other, std::size_t from, std::size_t to) {
  const std::size_t k = other.probabilities.size() / other.disagreement.size();
  const std::size_t f = other.features.size() / other.disagreement.size();
  std::copy_n(other.probabilities.begin() + from * k, k, probabilities.begin() + to * k);
  std::copy_n(other.features.begin() + from * f, f, features.begin() + to * f);
  disagreement[to] = other.disagreement[from];
}

MapModel::MapModel(const std::vector<fs::path>& runs) {
  for (const fs::path& run : runs) {
    members_.push_back(std::make_unique<WindowModel>(run / "model.pt"));
    if (members_.size() > 1) require_alike(*members_.front(), *members_.back(), runs.front(), run);
  }
  temperatures_.assign(members_.size(), 1.0);
}

void MapModel::set_temperatures(std::vector<double> temperatures) { temperatures_ = std::move(temperatures); }

void MapModel::exact(const float* windows, int count, WindowOutputs& out) {
  const auto n = static_cast<std::size_t>(count);
  out.assign_zero(n, classes().size(), static_cast<std::size_t>(feature_count()));
  mean_entropy_.assign(n, 0.0f);
  for (std::size_t m = 0; m < members_.size(); ++m) {
    logits_.resize(n * classes().size());
    features_.resize(n * static_cast<std::size_t>(members_[m]->feature_count()));
    members_[m]->exact(windows, count, logits_.data(), m == 0 ? out.features.data() : features_.data());
    add_member(m, n, out);
  }
  finish_mean(n, out);
}

void MapModel::dense(const float* tile, int height, int width, int stride, WindowOutputs& out) {
  const int size = chip_size();
  const auto n = static_cast<std::size_t>((height - size) / stride + 1) * static_cast<std::size_t>((width - size) / stride + 1);
  out.assign_zero(n, classes().size(), static_cast<std::size_t>(feature_count()));
  mean_entropy_.assign(n, 0.0f);
  for (std::size_t m = 0; m < members_.size(); ++m) {
    logits_.resize(n * classes().size());
    features_.resize(n * static_cast<std::size_t>(members_[m]->feature_count()));
    members_[m]->dense(tile, height, width, stride, logits_.data(), m == 0 ? out.features.data() : features_.data());
    add_member(m, n, out);
  }
  finish_mean(n, out);
}

void MapModel::add_member(std::size_t m, std::size_t count, WindowOutputs& out) {
  const int k = static_cast<int>(classes().size());
  probabilities_.resize(logits_.size());
  apply_temperature(logits_.data(), count, k, temperatures_[m], probabilities_.data());
  for (std::size_t i = 0; i < probabilities_.size(); ++i) out.probabilities[i] += probabilities_[i];
  if (!is_ensemble()) return;
  for (std::size_t w = 0; w < count; ++w) {
    mean_entropy_[w] += normalised_entropy(probabilities_.data() + w * static_cast<std::size_t>(k), k);
  }
}

void MapModel::finish_mean(std::size_t count, WindowOutputs& out) {
  if (!is_ensemble()) return;  // one member: its probabilities as they are, no disagreement
  const auto k = classes().size();
  const float members = static_cast<float>(members_.size());
  for (float& p : out.probabilities) p /= members;
  for (std::size_t w = 0; w < count; ++w) {
    const float of_mean = normalised_entropy(out.probabilities.data() + w * k, static_cast<int>(k));
    out.disagreement[w] = std::max(0.0f, of_mean - mean_entropy_[w] / members);
  }
}

}  // namespace tinct
