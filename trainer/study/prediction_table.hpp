// A run's predictions.csv held whole (id, x, y, date, true, predicted, p_CLASS...): what a
// study reads back from every run, deep or baseline, and writes for ensemble arms. The
// probabilities are written as the shortest text that reads back to the same double.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

namespace tinct {

struct PredictionTable {
  std::vector<std::string> classes;
  std::vector<std::string> ids, x, y, crs, lon, lat, date;  // as written (all but ids only passed through)
  std::vector<int> truth, predicted;         // class indices
  std::vector<std::vector<double>> probabilities;  // (N, classes)
  std::size_t size() const { return ids.size(); }
};

// Fails (runtime) on a missing file, a class that is not among the p_ columns, or a
// probability that is not a number.
PredictionTable read_prediction_table(const std::filesystem::path& file);

// predictions.csv, metrics.json and confusion.csv into `folder` (atomically), as the
// finetune job writes them; the predicted class is recomputed as the most probable.
void write_prediction_files(const std::filesystem::path& folder, PredictionTable table);

// Index of the largest probability, the first on ties (numpy's argmax).
int most_probable(const std::vector<double>& probabilities);

}  // namespace tinct
