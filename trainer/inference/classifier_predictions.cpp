#include "inference/classifier_predictions.hpp"

#include <algorithm>
#include <cstdio>

#include "batches/batch.hpp"
#include "inference/chip_places.hpp"
#include "models/classifier_model.hpp"
#include "runs/metrics_log.hpp"
#include "util/atomic_file.hpp"
#include "util/csv_field.hpp"
#include "util/number_text.hpp"

namespace tinct {
namespace {

std::string decimals(double value, int places) {
  char text[64];
  std::snprintf(text, sizeof(text), "%.*f", places, value);
  return text;
}

// id, the centre's map coordinates (full precision) in `crs`, its longitude and latitude
// (7 decimals, about a centimetre), date, classes and probabilities (6 decimals).
std::string predictions_csv(const Predictions& p, const ChipCollection& collection,
                            const std::vector<std::string>& classes) {
  std::string text = "id,x,y,crs,lon,lat,date,true,predicted";
  for (const auto& name : classes) text += ",p_" + csv_field(name);
  text += "\n";
  ChipPlaces places(collection);
  for (std::size_t i = 0; i < p.chips.size(); ++i) {
    const ChipRecord r = collection.store(p.chips[i].store).record(p.chips[i].chip);
    const ChipPlace place = places.of(p.chips[i]);
    text += csv_field(r.source_id.empty() ? std::to_string(r.index) : r.source_id) + "," + fixed_text(place.x) + "," +
            fixed_text(place.y) + "," + csv_field(place.crs) + "," +
            (place.has_lonlat ? decimals(place.lon, 7) + "," + decimals(place.lat, 7) : std::string(",")) + "," +
            r.date + "," + csv_field(classes[p.truth[i]]) + "," + csv_field(classes[p.predicted[i]]);
    for (double probability : p.probabilities[i]) text += "," + decimals(probability, 6);
    text += "\n";
  }
  return text;
}

}  // namespace

Predictions predict_chips(ClassifierModel& model, const ChipCollection& collection,
                          const std::vector<ChipRef>& chips, int batch) {
  torch::InferenceMode inference;
  model->eval();
  Predictions result;
  for (std::size_t start = 0; start < chips.size(); start += static_cast<std::size_t>(batch)) {
    const std::vector<ChipRef> part(chips.begin() + start, chips.begin() + std::min(chips.size(), start + batch));
    const Batch b = assemble_batch(collection, part, std::vector<int>(part.size(), 0));
    const torch::Tensor probabilities = torch::softmax(model->forward(b.bands), 1).to(torch::kFloat64);  // (B, K)
    const torch::Tensor predicted = probabilities.argmax(1);
    for (std::size_t i = 0; i < part.size(); ++i) {
      result.chips.push_back(part[i]);
      result.truth.push_back(static_cast<int>(b.labels[static_cast<long>(i)].item<std::int64_t>()));
      result.predicted.push_back(static_cast<int>(predicted[static_cast<long>(i)].item<std::int64_t>()));
      const torch::Tensor row = probabilities[static_cast<long>(i)].contiguous();
      result.probabilities.emplace_back(row.data_ptr<double>(), row.data_ptr<double>() + row.numel());
    }
  }
  model->train();
  return result;
}

double macro_f1_of(const Predictions& predictions, int classes) {
  if (predictions.truth.empty()) return 0.0;
  return classification_metrics(predictions.truth, predictions.predicted, classes).macro_f1;
}

ClassificationMetrics write_assessment(const std::filesystem::path& folder, const Predictions& predictions,
                                       const ChipCollection& collection, const std::vector<std::string>& classes) {
  const ClassificationMetrics metrics = classification_metrics(
      predictions.truth, predictions.predicted, static_cast<int>(classes.size()), predictions.probabilities);
  std::filesystem::create_directories(folder);
  write_file_atomic(folder / "metrics.json", json_text(metrics_json(metrics, classes), 2) + "\n");
  write_file_atomic(folder / "confusion.csv", confusion_csv(metrics, classes));
  write_file_atomic(folder / "predictions.csv", predictions_csv(predictions, collection, classes));
  return metrics;
}

}  // namespace tinct
