// What a map applies to its windows: one finetune run, or an ensemble of runs whose
// calibrated class probabilities are averaged (each member softmax(logits / T_m) with its
// own temperature, then the plain mean). Per window it gives the probabilities, the
// features of the first member (the area of applicability is that member's: see
// run_evidence.hpp) and the members' disagreement: the mutual information between the
// class and the member, I = H(mean p) - mean H(p_m), over ln K (0: members agree exactly;
// 0 for a single run). Members must read the scene alike (same bands, chip size, feature
// stride and normalisation), since the scene is encoded once for all of them.
#pragma once

#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "mapping/window_model.hpp"

namespace tinct {

struct WindowOutputs {
  std::vector<float> probabilities;  // (N, K)
  std::vector<float> features;       // (N, F), the first member's pooled features
  std::vector<float> disagreement;   // (N), mutual information / ln K

  void resize(std::size_t windows, std::size_t classes, std::size_t features);
  void assign_zero(std::size_t windows, std::size_t classes, std::size_t features);
  // Copies window `from` of `other` into window `to` of this.
  void copy_window(const WindowOutputs& other, std::size_t from, std::size_t to);
};

class MapModel {
 public:
  // Loads RUN/model.pt of every run; fails naming the run that does not match the first.
  explicit MapModel(const std::vector<std::filesystem::path>& runs);

  std::size_t members() const { return members_.size(); }
  bool is_ensemble() const { return members_.size() > 1; }
  WindowModel& member(std::size_t i) { return *members_[i]; }
  // One temperature per member (1: uncalibrated).
  void set_temperatures(std::vector<double> temperatures);

  const std::vector<std::string>& classes() const { return members_.front()->classes(); }
  const BandNormalisation& normalisation() const { return members_.front()->normalisation(); }
  int chip_size() const { return members_.front()->chip_size(); }
  int feature_count() const { return members_.front()->feature_count(); }
  int feature_stride() const { return members_.front()->feature_stride(); }

  // windows: (count, bands, size, size); `out` is resized to count windows.
  void exact(const float* windows, int count, WindowOutputs& out);
  // tile: (bands, height, width) holding rows x columns windows at `stride`, row-major.
  void dense(const float* tile, int height, int width, int stride, WindowOutputs& out);

 private:
  // Member m's logits (N, K) into the running sums of probabilities and entropies.
  void add_member(std::size_t m, std::size_t count, WindowOutputs& out);
  void finish_mean(std::size_t count, WindowOutputs& out);

  std::vector<std::unique_ptr<WindowModel>> members_;
  std::vector<double> temperatures_;
  std::vector<float> logits_, probabilities_, features_, mean_entropy_;
};

}  // namespace tinct
