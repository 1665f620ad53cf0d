#include "study/prediction_table.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>

#include "assess/classification_metrics.hpp"
#include "labels/csv_table.hpp"
#include "util/atomic_file.hpp"
#include "util/csv_field.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

// The columns classifier_predictions.cpp writes before the class probabilities.
const std::vector<std::string> kLeading{"id", "x", "y", "crs", "lon", "lat", "date", "true", "predicted"};

int class_index(const PredictionTable& t, const std::string& name, const fs::path& file, int line) {
  const auto found = std::find(t.classes.begin(), t.classes.end(), name);
  if (found == t.classes.end()) {
    fail_runtime(file.string() + ": line " + std::to_string(line) + ": class \"" + name +
                 "\" has no p_ column; the file is not a tinct predictions.csv");
  }
  return static_cast<int>(found - t.classes.begin());
}

std::string number_text(double value) {
  char text[40];
  for (int precision = 6; precision <= 17; ++precision) {
    std::snprintf(text, sizeof(text), "%.*g", precision, value);
    if (std::strtod(text, nullptr) == value) break;
  }
  return text;
}

std::string table_csv(const PredictionTable& t) {
  std::string text;
  for (std::size_t c = 0; c < kLeading.size(); ++c) text += (c ? "," : "") + kLeading[c];
  for (const auto& name : t.classes) text += ",p_" + csv_field(name);
  text += "\n";
  for (std::size_t i = 0; i < t.size(); ++i) {
    text += csv_field(t.ids[i]) + "," + t.x[i] + "," + t.y[i] + "," + csv_field(t.crs[i]) + "," + t.lon[i] + "," +
            t.lat[i] + "," + csv_field(t.date[i]) + "," +
            csv_field(t.classes[t.truth[i]]) + "," + csv_field(t.classes[t.predicted[i]]);
    for (const double p : t.probabilities[i]) text += "," + number_text(p);
    text += "\n";
  }
  return text;
}

}  // namespace

int most_probable(const std::vector<double>& probabilities) {
  return static_cast<int>(std::max_element(probabilities.begin(), probabilities.end()) - probabilities.begin());
}

PredictionTable read_prediction_table(const fs::path& file) {
  if (!fs::exists(file)) fail_runtime(file.string() + ": not found; the run did not finish its assessment");
  const CsvTable csv = read_csv_table(file);
  PredictionTable t;
  if (csv.header.size() < kLeading.size() + 2 ||
      !std::equal(kLeading.begin(), kLeading.end(), csv.header.begin())) {
    fail_runtime(file.string() + ": not a tinct predictions.csv (header id,x,y,crs,lon,lat,date,true,predicted,p_...)");
  }
  for (std::size_t c = kLeading.size(); c < csv.header.size(); ++c) t.classes.push_back(csv.header[c].substr(2));
  for (const CsvRow& row : csv.rows) {
    const auto& f = row.fields;
    t.ids.push_back(f[0]), t.x.push_back(f[1]), t.y.push_back(f[2]), t.crs.push_back(f[3]);
    t.lon.push_back(f[4]), t.lat.push_back(f[5]), t.date.push_back(f[6]);
    t.truth.push_back(class_index(t, f[7], file, row.line));
    t.predicted.push_back(class_index(t, f[8], file, row.line));
    std::vector<double> p;
    for (std::size_t c = kLeading.size(); c < f.size(); ++c) {
      char* end = nullptr;
      const double value = std::strtod(f[c].c_str(), &end);
      if (f[c].empty() || *end != '\0' || !std::isfinite(value)) {
        fail_runtime(file.string() + ": line " + std::to_string(row.line) + ": probability \"" + f[c] +
                     "\" is not a number");
      }
      p.push_back(value);
    }
    t.probabilities.push_back(std::move(p));
  }
  return t;
}

void write_prediction_files(const fs::path& folder, PredictionTable t) {
  for (std::size_t i = 0; i < t.size(); ++i) t.predicted[i] = most_probable(t.probabilities[i]);
  const ClassificationMetrics metrics =
      classification_metrics(t.truth, t.predicted, static_cast<int>(t.classes.size()), t.probabilities);
  fs::create_directories(folder);
  write_file_atomic(folder / "metrics.json", json_text(metrics_json(metrics, t.classes), 2) + "\n");
  write_file_atomic(folder / "confusion.csv", confusion_csv(metrics, t.classes));
  write_file_atomic(folder / "predictions.csv", table_csv(t));
}

}  // namespace tinct
