// Counting only: one pass builds the confusion matrix, everything else is read off it or off
// one sort of the scores. Sums are in double over int64 counts, so results match sklearn to
// rounding; the undefined cases are spelled out in the header.
#include "assess/classification_metrics.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <numeric>

#include "util/error.hpp"

namespace tinct {
namespace {

constexpr int kBins = 10;
constexpr double kRowSumTolerance = 1e-5;

[[noreturn]] void fail_metrics(const std::string& message) {
  fail_runtime("classification metrics: " + message);
}

void check_labels(const std::vector<int>& labels, int classes, const char* what) {
  for (std::size_t i = 0; i < labels.size(); ++i) {
    if (labels[i] < 0 || labels[i] >= classes)
      fail_metrics(std::string(what) + "[" + std::to_string(i) + "] = " +
                   std::to_string(labels[i]) + " is not a class index 0.." +
                   std::to_string(classes - 1));
  }
}

void check_row(const std::vector<double>& row, std::size_t i, std::size_t classes) {
  const std::string where = "probabilities[" + std::to_string(i) + "]";
  if (row.size() != classes)
    fail_metrics(where + " has " + std::to_string(row.size()) + " entries, expected " +
                 std::to_string(classes));
  double sum = 0;
  for (double p : row) {
    if (!std::isfinite(p) || p < 0 || p > 1)
      fail_metrics(where + " holds " + std::to_string(p) + ", outside [0, 1]");
    sum += p;
  }
  if (std::fabs(sum - 1) > kRowSumTolerance)
    fail_metrics(where + " sums to " + std::to_string(sum) + ", not 1: pass softmax outputs");
}

void check_probabilities(const std::vector<std::vector<double>>& probabilities, std::size_t n,
                         std::size_t classes) {
  if (probabilities.size() != n)
    fail_metrics(std::to_string(probabilities.size()) + " probability rows for " +
                 std::to_string(n) + " samples");
  for (std::size_t i = 0; i < n; ++i) check_row(probabilities[i], i, classes);
}

void check_inputs(const std::vector<int>& truth, const std::vector<int>& predicted, int classes,
                  const std::vector<std::vector<double>>& probabilities) {
  if (classes < 1) fail_metrics("classes must be >= 1, got " + std::to_string(classes));
  if (truth.empty()) fail_metrics("no samples: nothing to assess");
  if (truth.size() != predicted.size())
    fail_metrics(std::to_string(truth.size()) + " true labels but " +
                 std::to_string(predicted.size()) + " predictions");
  check_labels(truth, classes, "truth");
  check_labels(predicted, classes, "predicted");
  if (!probabilities.empty())
    check_probabilities(probabilities, truth.size(), static_cast<std::size_t>(classes));
}

void check_binary(const std::vector<int>& truth, const std::vector<double>& score) {
  if (truth.size() != score.size())
    fail_metrics(std::to_string(truth.size()) + " labels but " + std::to_string(score.size()) +
                 " scores");
  check_labels(truth, 2, "truth");
  for (double s : score)
    if (!std::isfinite(s)) fail_metrics("a score is not finite");
}

double ratio(std::int64_t numerator, std::int64_t denominator) {
  return denominator == 0 ? 0.0
                          : static_cast<double>(numerator) / static_cast<double>(denominator);
}

double f1_of(double precision, double recall) {
  const double sum = precision + recall;
  return sum == 0 ? 0.0 : 2 * precision * recall / sum;
}

std::vector<std::vector<std::int64_t>> confusion_of(const std::vector<int>& truth,
                                                    const std::vector<int>& predicted,
                                                    int classes) {
  std::vector<std::vector<std::int64_t>> confusion(classes, std::vector<std::int64_t>(classes));
  for (std::size_t i = 0; i < truth.size(); ++i) ++confusion[truth[i]][predicted[i]];
  return confusion;
}

std::int64_t row_sum(const std::vector<std::vector<std::int64_t>>& m, std::size_t r) {
  return std::accumulate(m[r].begin(), m[r].end(), std::int64_t{0});
}

std::int64_t column_sum(const std::vector<std::vector<std::int64_t>>& m, std::size_t c) {
  std::int64_t sum = 0;
  for (const auto& row : m) sum += row[c];
  return sum;
}

std::int64_t trace(const std::vector<std::vector<std::int64_t>>& m) {
  std::int64_t sum = 0;
  for (std::size_t i = 0; i < m.size(); ++i) sum += m[i][i];
  return sum;
}

ClassMetrics class_metrics(const std::vector<std::vector<std::int64_t>>& confusion,
                           std::size_t c) {
  ClassMetrics m;
  const std::int64_t hits = confusion[c][c];
  const std::int64_t predicted = column_sum(confusion, c);
  m.support = row_sum(confusion, c);
  m.precision_defined = predicted > 0;
  m.recall_defined = m.support > 0;
  m.precision = ratio(hits, predicted);
  m.recall = ratio(hits, m.support);
  m.f1 = f1_of(m.precision, m.recall);
  return m;
}

double balanced_accuracy_of(const std::vector<ClassMetrics>& per_class) {
  double sum = 0;
  int present = 0;
  for (const ClassMetrics& m : per_class) {
    if (!m.recall_defined) continue;
    sum += m.recall;
    ++present;
  }
  return sum / present;  // N > 0, so at least one class is present
}

void fill_f1_averages(ClassificationMetrics& m) {
  double macro = 0, weighted = 0;
  for (const ClassMetrics& c : m.per_class) {
    macro += c.f1;
    weighted += c.f1 * static_cast<double>(c.support);
  }
  m.macro_f1 = macro / m.classes;
  m.weighted_f1 = weighted / static_cast<double>(m.count);
  m.micro_f1 = m.accuracy;
}

// kappa = (p_o - p_e) / (1 - p_e); p_e = 1 exactly when one class holds all truth and all
// predictions, tested on the counts so rounding cannot hide it.
double kappa_of(const std::vector<std::vector<std::int64_t>>& confusion, std::int64_t n) {
  const double total = static_cast<double>(n);
  double chance = 0;
  for (std::size_t c = 0; c < confusion.size(); ++c) {
    const std::int64_t rows = row_sum(confusion, c), columns = column_sum(confusion, c);
    if (rows == n && columns == n) return 0.0;
    chance += static_cast<double>(rows) / total * (static_cast<double>(columns) / total);
  }
  const double observed = static_cast<double>(trace(confusion)) / total;
  return (observed - chance) / (1 - chance);
}

std::vector<double> column(const std::vector<std::vector<double>>& probabilities, std::size_t c) {
  std::vector<double> values;
  values.reserve(probabilities.size());
  for (const auto& row : probabilities) values.push_back(row[c]);
  return values;
}

bool both_classes_present(const std::vector<int>& truth) {
  const auto positives = std::count(truth.begin(), truth.end(), 1);
  return positives > 0 && positives < static_cast<std::ptrdiff_t>(truth.size());
}

std::vector<std::size_t> order_by_score(const std::vector<double>& score, bool descending) {
  std::vector<std::size_t> order(score.size());
  std::iota(order.begin(), order.end(), std::size_t{0});
  std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
    return descending ? score[a] > score[b] : score[a] < score[b];
  });
  return order;
}

// Bin m = ((m-1)/10, m/10] as index m-1; 0 goes to the first bin. Edges are m/10.0, the
// doubles nearest to m/10, so a score of exactly 0.3 lands in bin 3.
int calibration_bin(double value) {
  for (int m = 1; m < kBins; ++m)
    if (value <= m / static_cast<double>(kBins)) return m - 1;
  return kBins - 1;
}

struct CalibrationBin {
  std::int64_t count = 0;
  double outcome_sum = 0;     // correct predictions (top-label) or positives (positive-class)
  double confidence_sum = 0;  // conf (top-label) or p (positive-class)
};

double ece_of(const std::array<CalibrationBin, kBins>& bins, std::size_t n) {
  double ece = 0;
  for (const CalibrationBin& bin : bins) {
    if (bin.count == 0) continue;
    const double count = static_cast<double>(bin.count);
    const double gap = std::fabs(bin.outcome_sum / count - bin.confidence_sum / count);
    ece += count / static_cast<double>(n) * gap;
  }
  return ece;
}

// The class of the largest probability, the first on ties.
std::size_t top_class(const std::vector<double>& row) {
  return static_cast<std::size_t>(std::max_element(row.begin(), row.end()) - row.begin());
}

void add_to_bin(std::array<CalibrationBin, kBins>& bins, double confidence, double outcome) {
  CalibrationBin& bin = bins[calibration_bin(confidence)];
  ++bin.count;
  bin.outcome_sum += outcome;
  bin.confidence_sum += confidence;
}

void check_calibration_inputs(const std::vector<int>& truth,
                              const std::vector<std::vector<double>>& probabilities,
                              std::size_t classes) {
  if (truth.empty()) fail_metrics("no samples: nothing to calibrate");
  check_probabilities(probabilities, truth.size(), classes);
  check_labels(truth, static_cast<int>(classes), "truth");
}

void fill_score_metrics(ClassificationMetrics& m, const std::vector<int>& truth,
                        const std::vector<std::vector<double>>& probabilities) {
  if (probabilities.empty()) return;
  m.ece = expected_calibration_error(truth, probabilities);
  if (m.classes != 2) return;
  const std::vector<double> positive = column(probabilities, 1);
  m.roc_auc = roc_auc(truth, positive);
  m.average_precision = average_precision(truth, positive);
}

Json optional_json(const std::optional<double>& value) {
  return value ? json_number(*value) : Json();
}

Json class_json(const ClassMetrics& c, const std::string& name) {
  Json j = Json::object();
  j["name"] = name;
  j["support"] = c.support;
  j["precision"] = json_number(c.precision);
  j["precision_defined"] = c.precision_defined;
  j["recall"] = json_number(c.recall);
  j["recall_defined"] = c.recall_defined;
  j["f1"] = json_number(c.f1);
  return j;
}

Json confusion_json(const ClassificationMetrics& m) {
  Json rows = Json::array();
  for (const auto& row : m.confusion) rows.push_back(row);
  return rows;
}

void check_names(const ClassificationMetrics& m, const std::vector<std::string>& names) {
  if (names.size() != static_cast<std::size_t>(m.classes))
    fail_metrics(std::to_string(names.size()) + " class names for " +
                 std::to_string(m.classes) + " classes");
}

// RFC 4180: quote a field holding a comma, quote or line break; double inner quotes.
std::string csv_field(const std::string& text) {
  if (text.find_first_of(",\"\r\n") == std::string::npos) return text;
  std::string out = "\"";
  for (char c : text) out += c == '"' ? std::string("\"\"") : std::string(1, c);
  return out + "\"";
}

}  // namespace

ClassificationMetrics classification_metrics(
    const std::vector<int>& truth, const std::vector<int>& predicted, int classes,
    const std::vector<std::vector<double>>& probabilities) {
  check_inputs(truth, predicted, classes, probabilities);
  ClassificationMetrics m;
  m.classes = classes;
  m.count = static_cast<std::int64_t>(truth.size());
  m.confusion = confusion_of(truth, predicted, classes);
  for (int c = 0; c < classes; ++c) m.per_class.push_back(class_metrics(m.confusion, c));
  m.accuracy = ratio(trace(m.confusion), m.count);
  m.balanced_accuracy = balanced_accuracy_of(m.per_class);
  fill_f1_averages(m);
  m.kappa = kappa_of(m.confusion, m.count);
  fill_score_metrics(m, truth, probabilities);
  return m;
}

// AUC = (sum of positive ranks - P(P+1)/2) / (P N), ranks averaged over ties.
std::optional<double> roc_auc(const std::vector<int>& truth, const std::vector<double>& score) {
  check_binary(truth, score);
  if (!both_classes_present(truth)) return std::nullopt;
  const std::vector<std::size_t> order = order_by_score(score, /*descending=*/false);
  double positive_rank_sum = 0;
  std::int64_t positives = 0;
  for (std::size_t start = 0; start < order.size();) {
    std::size_t end = start;
    std::int64_t group_positives = 0;
    for (; end < order.size() && score[order[end]] == score[order[start]]; ++end)
      group_positives += truth[order[end]];
    const double mean_rank = (static_cast<double>(start + end) + 1) / 2;  // 1-based ranks
    positive_rank_sum += mean_rank * static_cast<double>(group_positives);
    positives += group_positives;
    start = end;
  }
  const double p = static_cast<double>(positives);
  const double negatives = static_cast<double>(truth.size()) - p;
  return (positive_rank_sum - p * (p + 1) / 2) / (p * negatives);
}

std::optional<double> average_precision(const std::vector<int>& truth,
                                        const std::vector<double>& score) {
  check_binary(truth, score);
  if (!both_classes_present(truth)) return std::nullopt;
  const std::vector<std::size_t> order = order_by_score(score, /*descending=*/true);
  const auto positives = std::count(truth.begin(), truth.end(), 1);
  std::int64_t true_positives = 0;
  double ap = 0, previous_recall = 0;
  for (std::size_t i = 0; i < order.size(); ++i) {
    true_positives += truth[order[i]];
    const bool threshold_ends = i + 1 == order.size() || score[order[i + 1]] != score[order[i]];
    if (!threshold_ends) continue;
    const double recall = ratio(true_positives, positives);
    ap += (recall - previous_recall) * ratio(true_positives, static_cast<std::int64_t>(i + 1));
    previous_recall = recall;
  }
  return ap;
}

double expected_calibration_error(const std::vector<int>& truth,
                                  const std::vector<std::vector<double>>& probabilities) {
  const std::size_t classes = probabilities.empty() ? 0 : probabilities[0].size();
  check_calibration_inputs(truth, probabilities, classes);
  std::array<CalibrationBin, kBins> bins{};
  for (std::size_t i = 0; i < truth.size(); ++i) {
    const std::size_t top = top_class(probabilities[i]);
    add_to_bin(bins, probabilities[i][top], top == static_cast<std::size_t>(truth[i]) ? 1 : 0);
  }
  return ece_of(bins, truth.size());
}

double positive_class_ece(const std::vector<int>& truth,
                          const std::vector<std::vector<double>>& probabilities) {
  check_calibration_inputs(truth, probabilities, 2);
  std::array<CalibrationBin, kBins> bins{};
  for (std::size_t i = 0; i < truth.size(); ++i)
    add_to_bin(bins, probabilities[i][1], truth[i]);
  return ece_of(bins, truth.size());
}

Json metrics_json(const ClassificationMetrics& m, const std::vector<std::string>& class_names) {
  check_names(m, class_names);
  Json j = Json::object();
  j["classes"] = m.classes;
  j["count"] = m.count;
  j["accuracy"] = json_number(m.accuracy);
  j["balanced_accuracy"] = json_number(m.balanced_accuracy);
  j["macro_f1"] = json_number(m.macro_f1);
  j["weighted_f1"] = json_number(m.weighted_f1);
  j["micro_f1"] = json_number(m.micro_f1);
  j["kappa"] = json_number(m.kappa);
  j["roc_auc"] = optional_json(m.roc_auc);
  j["average_precision"] = optional_json(m.average_precision);
  j["ece"] = optional_json(m.ece);
  Json per_class = Json::array();
  for (int c = 0; c < m.classes; ++c) per_class.push_back(class_json(m.per_class[c], class_names[c]));
  j["per_class"] = std::move(per_class);
  j["confusion_axes"] = "rows true, columns predicted";
  j["confusion"] = confusion_json(m);
  return j;
}

std::string confusion_csv(const ClassificationMetrics& m,
                          const std::vector<std::string>& class_names) {
  check_names(m, class_names);
  std::string out = "true\\predicted";
  for (const std::string& name : class_names) out += "," + csv_field(name);
  out += "\n";
  for (int r = 0; r < m.classes; ++r) {
    out += csv_field(class_names[r]);
    for (std::int64_t count : m.confusion[r]) out += "," + std::to_string(count);
    out += "\n";
  }
  return out;
}

}  // namespace tinct
