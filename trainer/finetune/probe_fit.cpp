#include "finetune/probe_fit.hpp"

#include <algorithm>
#include <cstdio>
#include <random>

#include "batches/batch.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace tinct {
namespace {

// Strong to weak; ties in inner-CV loss keep the stronger.
const std::vector<double> kL2Grid{1000, 300, 100, 30, 10, 3, 1, 0.3, 0.1, 0.03, 0.01};
constexpr double kDefaultL2 = 1.0;  // without inner CV: scikit-learn's default C = 1
constexpr int kMaxInnerFolds = 5;

template <typename... Values>
std::string format(const char* pattern, Values... values) {
  char text[160];
  std::snprintf(text, sizeof text, pattern, values...);
  return text;
}

struct LogisticFit {
  torch::Tensor weight, bias;  // (K, F), (K) float64
};

// x (N, F) standardised float64, y (N) int64, row_weight (N) float64.
LogisticFit fit_logistic(const torch::Tensor& x, const torch::Tensor& y, const torch::Tensor& row_weight,
                         std::int64_t classes, double l2) {
  torch::Tensor weight = torch::zeros({classes, x.size(1)}, torch::kFloat64).requires_grad_(true);
  torch::Tensor bias = torch::zeros({classes}, torch::kFloat64).requires_grad_(true);
  torch::optim::LBFGS solver({weight, bias}, torch::optim::LBFGSOptions(1.0)
                                                 .max_iter(2000)
                                                 .max_eval(5000)
                                                 .tolerance_grad(1e-9)
                                                 .tolerance_change(1e-15)
                                                 .history_size(20)
                                                 .line_search_fn("strong_wolfe"));
  const auto objective = [&] {
    solver.zero_grad();
    const torch::Tensor per_row = torch::nn::functional::cross_entropy(
        torch::addmm(bias, x, weight.t()), y, torch::nn::functional::CrossEntropyFuncOptions().reduction(torch::kNone));
    torch::Tensor loss = (per_row * row_weight).sum() + 0.5 * l2 * weight.pow(2).sum();
    loss.backward();
    return loss;
  };
  solver.step(objective);
  return {weight.detach(), bias.detach()};
}

// Stratified folds: each class's rows shuffled with `seed` and dealt round robin.
std::vector<int> inner_fold_of(const torch::Tensor& y, std::int64_t classes, int folds, std::uint64_t seed) {
  std::vector<int> fold(static_cast<std::size_t>(y.size(0)), 0);
  std::mt19937_64 random(seed);
  int next = 0;
  for (std::int64_t k = 0; k < classes; ++k) {
    std::vector<std::size_t> rows;
    for (std::int64_t i = 0; i < y.size(0); ++i) {
      if (y[i].item<std::int64_t>() == k) rows.push_back(static_cast<std::size_t>(i));
    }
    std::shuffle(rows.begin(), rows.end(), random);
    for (std::size_t row : rows) fold[row] = next++ % folds;
  }
  return fold;
}

// The inner folds: as many as the rarest class has rows, at most kMaxInnerFolds; 0 when a
// class has fewer than 2 rows.
int inner_folds(const torch::Tensor& y, std::int64_t classes) {
  const torch::Tensor counts = torch::bincount(y, {}, classes);
  const auto rarest = counts.min().item<std::int64_t>();
  return rarest < 2 ? 0 : static_cast<int>(std::min<std::int64_t>(rarest, kMaxInnerFolds));
}

double held_out_log_loss(const torch::Tensor& x, const torch::Tensor& y, const torch::Tensor& row_weight,
                         std::int64_t classes, double l2, const std::vector<int>& fold, int folds) {
  double loss = 0, weight = 0;
  for (int f = 0; f < folds; ++f) {
    std::vector<std::int64_t> in, out;
    for (std::size_t i = 0; i < fold.size(); ++i) (fold[i] == f ? out : in).push_back(static_cast<std::int64_t>(i));
    const torch::Tensor train = torch::tensor(in), test = torch::tensor(out);
    // standardised with the inner training rows only
    const torch::Tensor x_in = x.index_select(0, train);
    const torch::Tensor mean = x_in.mean(0);
    torch::Tensor sd = x_in.std(0, /*unbiased=*/false);
    sd = torch::where(sd > 0, sd, torch::ones_like(sd));
    const LogisticFit fit =
        fit_logistic((x_in - mean) / sd, y.index_select(0, train), row_weight.index_select(0, train), classes, l2);
    const torch::Tensor logits = torch::addmm(fit.bias, (x.index_select(0, test) - mean) / sd, fit.weight.t());
    const torch::Tensor per_row = torch::nn::functional::cross_entropy(
        logits, y.index_select(0, test), torch::nn::functional::CrossEntropyFuncOptions().reduction(torch::kNone));
    loss += (per_row * row_weight.index_select(0, test)).sum().item<double>();
    weight += row_weight.index_select(0, test).sum().item<double>();
  }
  return loss / weight;
}

void choose_l2_by_inner_cv(const torch::Tensor& x, const torch::Tensor& y, const torch::Tensor& row_weight,
                           std::int64_t classes, std::uint64_t seed, ProbeFit& fit) {
  fit.inner_folds = inner_folds(y, classes);
  fit.l2 = kDefaultL2;
  fit.chosen_by = "default";
  if (fit.inner_folds == 0) return;
  fit.chosen_by = "inner_cv";
  fit.inner_fold = inner_fold_of(y, classes, fit.inner_folds, seed);
  double best = 0;
  std::string losses;
  for (double l2 : kL2Grid) {
    const double loss = held_out_log_loss(x, y, row_weight, classes, l2, fit.inner_fold, fit.inner_folds);
    fit.l2_grid.push_back(l2);
    fit.cv_log_loss.push_back(loss);
    if (fit.cv_log_loss.size() == 1 || loss < best) best = loss, fit.l2 = l2;
    losses += format(" %g:%.4f", l2, loss);
  }
  log::info("finetune: inner cross-validation log loss by l2" + losses);
}

// L-BFGS on a few hundred rows is thousands of tiny operations: split over several OpenMP
// threads, each waits on the others far longer than it computes (a probe run took 13 CPU
// seconds on one thread, 145 on two, on a loaded machine), so the fit runs on one.
class OneThreadScope {
 public:
  OneThreadScope() : before_(at::get_num_threads()) { at::set_num_threads(1); }
  ~OneThreadScope() { at::set_num_threads(before_); }
  OneThreadScope(const OneThreadScope&) = delete;
  OneThreadScope& operator=(const OneThreadScope&) = delete;

 private:
  int before_;
};

void fit_linear_probe(ClassifierModel& model, const torch::Tensor& features, const torch::Tensor& y,
                      const torch::Tensor& row_weight, std::uint64_t seed, ProbeFit& fit) {
  const OneThreadScope one_thread;
  const std::int64_t classes = model->spec().classes;
  const torch::Tensor x = features.to(torch::kFloat64);
  fit.l2 = model->spec().head.l2;
  fit.chosen_by = "given";
  if (fit.l2 <= 0) choose_l2_by_inner_cv(x, y, row_weight, classes, seed, fit);
  const auto [mean, sd] = column_standardisation(x);
  const LogisticFit result = fit_logistic((x - mean) / sd, y, row_weight, classes, fit.l2);
  torch::NoGradGuard no_grad;
  model->linear_probe->set_standardisation(mean.to(torch::kFloat32), sd.to(torch::kFloat32));
  model->linear_probe->fc->weight.copy_(result.weight);
  model->linear_probe->fc->bias.copy_(result.bias);
  const std::string how = fit.chosen_by == "inner_cv"
                              ? std::to_string(fit.inner_folds) + "-fold inner cross-validation"
                              : (fit.chosen_by == "given" ? "given" : "default: too few labels for inner folds");
  log::info(format("finetune: linear probe on %lld features, l2 %g (", static_cast<long long>(x.size(1)), fit.l2) +
            how + ")");
}

std::string number(double value) {
  char text[32];
  std::snprintf(text, sizeof text, "%.9g", value);
  return text;
}

}  // namespace

torch::Tensor extract_features(ClassifierModel& model, const ChipCollection& chips, const std::vector<ChipRef>& refs,
                               int batch) {
  model->eval();
  torch::Tensor features;
  {
    torch::InferenceMode inference;
    std::vector<torch::Tensor> parts;
    for (std::size_t start = 0; start < refs.size(); start += static_cast<std::size_t>(batch)) {
      const std::vector<ChipRef> part(refs.begin() + start, refs.begin() + std::min(refs.size(), start + batch));
      const Batch b = assemble_batch(chips, part, std::vector<int>(part.size(), 0));
      parts.push_back(model->features(b.bands));  // (B, bands, H, W) -> (B, F)
    }
    features = torch::cat(parts, 0);
  }
  model->train();
  return features.clone();  // cloned outside inference mode: a normal tensor autograd may save
}

ProbeFit fit_probe(ClassifierModel& model, const ChipCollection& chips, const std::vector<ChipRef>& train,
                   const torch::Tensor& class_weights, int batch, std::uint64_t seed) {
  if (train.empty()) fail_usage("finetune: no training chips for the probe (check budget and split)");
  const torch::Tensor features = extract_features(model, chips, train, batch);
  std::vector<std::int64_t> labels;
  for (const ChipRef& ref : train) labels.push_back(chips.class_of(ref));
  const torch::Tensor y = torch::tensor(labels);
  ProbeFit fit;
  fit.features = features.size(1);
  if (model->knn) {
    model->knn->set_bank(features, y);
    log::info("finetune: knn readout with k " + std::to_string(model->knn->k()) + " over " +
              std::to_string(train.size()) + " training chips, " + std::to_string(features.size(1)) + " features");
  } else {
    fit_linear_probe(model, features, y, class_weights.to(torch::kFloat64).index_select(0, y), seed, fit);
  }
  return fit;
}

namespace {
// 0.1 rather than 0.10000000000000001 (yaml-cpp writes doubles with 17 digits); reads back as a number.
YAML::Node short_number(double value) { return YAML::Node(format("%.9g", value)); }
}  // namespace

YAML::Node probe_record(const ProbeFit& fit) {
  YAML::Node node;
  node["readout_features"] = fit.features;
  if (fit.chosen_by.empty()) return node;  // knn: nothing chosen
  node["l2"] = short_number(fit.l2);
  node["l2_chosen_by"] = fit.chosen_by;
  if (fit.inner_folds > 0) {
    node["inner_folds"] = fit.inner_folds;
    for (std::size_t i = 0; i < fit.l2_grid.size(); ++i) {
      YAML::Node row;
      row["l2"] = short_number(fit.l2_grid[i]);
      row["log_loss"] = short_number(fit.cv_log_loss[i]);
      node["inner_cv"].push_back(row);
    }
  }
  return node;
}

void write_probe_features(const std::filesystem::path& file, ClassifierModel& model, const ChipCollection& chips,
                          const std::vector<ChipRef>& train, const std::vector<ChipRef>& test, int batch,
                          const std::vector<int>& inner_fold) {
  std::string text;
  for (const auto& [role, refs] : {std::make_pair("train", &train), std::make_pair("test", &test)}) {
    if (refs->empty()) continue;
    const torch::Tensor features = extract_features(model, chips, *refs, batch).contiguous();
    if (text.empty()) {
      text = "role,chip,store,class,inner_fold";
      for (std::int64_t f = 0; f < features.size(1); ++f) text += ",f" + std::to_string(f);
      text += "\n";
    }
    const float* values = features.data_ptr<float>();
    for (std::size_t i = 0; i < refs->size(); ++i) {
      const ChipRef& ref = (*refs)[i];
      text += std::string(role) + "," + std::to_string(ref.chip) + "," + std::to_string(ref.store) + "," +
              std::to_string(chips.class_of(ref)) + "," +
              (refs == &train && i < inner_fold.size() ? std::to_string(inner_fold[i]) : "");
      for (std::int64_t f = 0; f < features.size(1); ++f) text += "," + number(values[i * features.size(1) + f]);
      text += "\n";
    }
  }
  write_file_atomic(file, text);
}

}  // namespace tinct
