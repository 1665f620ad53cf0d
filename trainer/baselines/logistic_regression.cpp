#include "baselines/logistic_regression.hpp"

#include <opencv2/ml.hpp>

#include "baselines/class_balance.hpp"
#include "baselines/feature_matrix.hpp"
#include "baselines/feature_scaling.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

FeatureTable rows_of(const FeatureTable& table, const std::vector<int>& rows) {
  FeatureTable picked;
  picked.names = table.names;
  for (int i : rows) picked.values.insert(picked.values.end(), table.row(i), table.row(i) + table.columns());
  return picked;
}

// 1/L for the mean log-loss plus (1/(2m))|w|^2 on rows x (with a leading 1): its Hessian
// is at most 0.25 X'X/m + I/m, so L = 0.25 * largest eigenvalue of X'X/m + 1/m.
double gradient_step(const cv::Mat& samples) {
  cv::Mat with_one;
  cv::hconcat(cv::Mat::ones(samples.rows, 1, CV_32F), samples, with_one);
  with_one.convertTo(with_one, CV_64F);
  const double m = samples.rows;
  cv::Mat eigenvalues;
  cv::eigen(with_one.t() * with_one / m, eigenvalues);  // descending
  return 1.0 / (0.25 * eigenvalues.at<double>(0) + 1.0 / m);
}

cv::Ptr<cv::ml::LogisticRegression> train_model(const cv::Mat& samples, const cv::Mat& responses,
                                                const LogisticSettings& settings) {
  cv::Ptr<cv::ml::LogisticRegression> model = cv::ml::LogisticRegression::create();
  model->setRegularization(cv::ml::LogisticRegression::REG_L2);
  model->setTrainMethod(cv::ml::LogisticRegression::BATCH);
  model->setIterations(settings.iterations);
  // OpenCV 4.6 updates theta -= (rate / m) * gradient of the mean loss: rate = m * step.
  model->setLearningRate(samples.rows * gradient_step(samples));
  model->train(cv::ml::TrainData::create(samples, cv::ml::ROW_SAMPLE, responses));
  return model;
}

}  // namespace

std::vector<std::vector<double>> logistic_regression_probabilities(const FeatureTable& train,
                                                                   const std::vector<int>& labels, int classes,
                                                                   const FeatureTable& test,
                                                                   const LogisticSettings& settings,
                                                                   std::uint64_t seed) {
  if (settings.iterations < 1) {
    fail_usage("logistic regression: iterations must be >= 1 (got " + std::to_string(settings.iterations) + ")");
  }
  if (train.rows() == 0 || static_cast<std::size_t>(train.rows()) != labels.size()) {
    fail_runtime("logistic regression: " + std::to_string(train.rows()) + " training rows for " +
                 std::to_string(labels.size()) + " labels");
  }
  const std::vector<int> present = present_classes(labels);
  if (present.size() < 2) {
    fail_usage("logistic regression: the training chips hold one class only; it needs at least two "
               "(raise the label budget or choose folds whose training side holds more classes)");
  }
  const FeatureScaling scaling = fit_scaling(train);
  const std::vector<int> rows = balanced_resample(labels, classes, seed);
  FeatureTable fit = rows_of(train, rows), scored = test;
  apply_scaling(scaling, fit);
  apply_scaling(scaling, scored);
  cv::Mat responses(static_cast<int>(rows.size()), 1, CV_32F);
  for (std::size_t i = 0; i < rows.size(); ++i) responses.at<float>(static_cast<int>(i)) = static_cast<float>(labels[rows[i]]);

  std::vector<std::vector<double>> probabilities(static_cast<std::size_t>(test.rows()),
                                                 std::vector<double>(static_cast<std::size_t>(classes), 0.0));
  if (test.rows() == 0) return probabilities;
  const cv::Ptr<cv::ml::LogisticRegression> model = train_model(feature_matrix(fit), responses, settings);
  cv::Mat raw;  // (N, 1): P(second present class) for two classes; else (N, present) sigmoids
  model->predict(feature_matrix(scored), raw, cv::ml::StatModel::RAW_OUTPUT);
  for (int i = 0; i < test.rows(); ++i) {
    auto& row = probabilities[static_cast<std::size_t>(i)];
    if (present.size() == 2) {
      const double p = raw.at<float>(i, 0);
      row[present[0]] = 1.0 - p;
      row[present[1]] = p;
      continue;
    }
    double total = 0;
    for (int k = 0; k < raw.cols; ++k) total += raw.at<float>(i, k);
    for (int k = 0; k < raw.cols; ++k) {
      row[present[k]] = total > 0 ? raw.at<float>(i, k) / total : 1.0 / raw.cols;  // every sigmoid underflowed
    }
  }
  return probabilities;
}

}  // namespace tinct
