#include "baselines/random_forest.hpp"

#include <opencv2/ml.hpp>

#include <cmath>

#include "baselines/class_balance.hpp"
#include "baselines/feature_matrix.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

// Sets the calling thread's cv::theRNG() for the forest's bootstrap and feature draws and
// puts the previous state back. The seed is mixed (splitmix64) so that seeds 1, 2, 3 start
// unrelated streams; cv::RNG turns a zero state into a fixed non-zero one.
class SeededOpenCvRng {
 public:
  explicit SeededOpenCvRng(std::uint64_t seed) : saved_(cv::theRNG().state) {
    std::uint64_t z = seed + 0x9E3779B97F4A7C15ULL;
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    cv::theRNG() = cv::RNG(z ^ (z >> 31));
  }
  ~SeededOpenCvRng() { cv::theRNG().state = saved_; }
  SeededOpenCvRng(const SeededOpenCvRng&) = delete;
  SeededOpenCvRng& operator=(const SeededOpenCvRng&) = delete;

 private:
  std::uint64_t saved_;
};

void check_settings(const RandomForestSettings& s, int features) {
  if (s.trees < 1) fail_usage("random forest: trees must be >= 1 (got " + std::to_string(s.trees) + ")");
  if (s.max_depth < 1 || s.max_depth > 25) {
    fail_usage("random forest: max_depth must be 1..25, OpenCV's limit (got " + std::to_string(s.max_depth) + ")");
  }
  if (s.min_split < 2) fail_usage("random forest: min_split must be >= 2 (got " + std::to_string(s.min_split) + ")");
  if (s.features_per_split < 0 || s.features_per_split > features) {
    fail_usage("random forest: features_per_split must be 0 (automatic) .. " + std::to_string(features) + " (got " +
               std::to_string(s.features_per_split) + ")");
  }
}

cv::Ptr<cv::ml::RTrees> make_forest(const RandomForestSettings& s, int features, const cv::Mat& priors) {
  cv::Ptr<cv::ml::RTrees> forest = cv::ml::RTrees::create();
  forest->setMaxDepth(s.max_depth);
  forest->setMinSampleCount(s.min_split - 1);  // OpenCV: a node of at most this many rows is a leaf
  forest->setActiveVarCount(s.features_per_split > 0
                                ? s.features_per_split
                                : std::max(1, static_cast<int>(std::floor(std::sqrt(static_cast<double>(features))))));
  forest->setCalculateVarImportance(false);
  forest->setTermCriteria(cv::TermCriteria(cv::TermCriteria::COUNT, s.trees, 0));
  forest->setPriors(priors);
  return forest;
}

}  // namespace

std::vector<std::vector<double>> random_forest_probabilities(const FeatureTable& train, const std::vector<int>& labels,
                                                             int classes, const FeatureTable& test,
                                                             const RandomForestSettings& settings, std::uint64_t seed) {
  check_settings(settings, train.columns());
  if (train.rows() == 0 || static_cast<std::size_t>(train.rows()) != labels.size()) {
    fail_runtime("random forest: " + std::to_string(train.rows()) + " training rows for " +
                 std::to_string(labels.size()) + " labels");
  }
  // cv::ml numbers classes by their ascending labels and wants a prior for each present one.
  const std::vector<int> present = present_classes(labels);
  const std::vector<double> weights = balanced_class_weights(labels, classes);
  cv::Mat priors(static_cast<int>(present.size()), 1, CV_64F);
  for (std::size_t k = 0; k < present.size(); ++k) priors.at<double>(static_cast<int>(k)) = weights[present[k]];
  cv::Mat responses(static_cast<int>(labels.size()), 1, CV_32S, const_cast<int*>(labels.data()));

  std::vector<std::vector<double>> probabilities(static_cast<std::size_t>(test.rows()),
                                                 std::vector<double>(static_cast<std::size_t>(classes), 0.0));
  if (test.rows() == 0) return probabilities;
  cv::Mat votes;  // (1 + N, present): row 0 the class labels, then vote counts per test row
  {
    const SeededOpenCvRng seeded(seed);
    cv::Ptr<cv::ml::RTrees> forest = make_forest(settings, train.columns(), priors);
    forest->train(cv::ml::TrainData::create(feature_matrix(train), cv::ml::ROW_SAMPLE, responses));
    forest->getVotes(feature_matrix(test), votes, 0);
  }
  for (int i = 0; i < test.rows(); ++i) {
    double total = 0;
    for (int k = 0; k < votes.cols; ++k) total += votes.at<int>(i + 1, k);
    for (int k = 0; k < votes.cols; ++k) {
      const auto label = static_cast<std::size_t>(votes.at<int>(0, k));
      probabilities[static_cast<std::size_t>(i)][label] = votes.at<int>(i + 1, k) / total;
    }
  }
  return probabilities;
}

}  // namespace tinct
