// The C++ side of baselines_l7_vs_sklearn.py: `baseline_tool STORE SPLITS.csv OUT_FOLDER`
// writes OUT_FOLDER/features.csv (every chip of the label store: index, class index and its
// pixel_and_3x3 features) and OUT_FOLDER/predictions.csv (per split of SPLITS.csv, columns
// split,seed,role,chip, both baselines' predictions for the split's test chips).
#include <cstdio>
#include <fstream>
#include <iostream>
#include <map>
#include <string>
#include <vector>

#include "baselines/baseline_arm.hpp"
#include "labels/csv_table.hpp"
#include "util/error.hpp"

namespace {

struct Split {
  std::uint64_t seed = 0;
  std::vector<tinct::ChipRef> train, test;
};

std::map<std::string, Split> read_splits(const std::filesystem::path& file) {
  const tinct::CsvTable table = tinct::read_csv_table(file);
  if (table.header != std::vector<std::string>{"split", "seed", "role", "chip"}) {
    tinct::fail_usage(file.string() + ": expected the header split,seed,role,chip");
  }
  std::map<std::string, Split> splits;
  for (const tinct::CsvRow& row : table.rows) {
    Split& split = splits[row.fields[0]];
    split.seed = std::stoull(row.fields[1]);
    const tinct::ChipRef ref{0, std::stoll(row.fields[3])};
    if (row.fields[2] == "train") {
      split.train.push_back(ref);
    } else if (row.fields[2] == "test") {
      split.test.push_back(ref);
    } else {
      tinct::fail_usage(file.string() + " line " + std::to_string(row.line) + ": role must be train or test");
    }
  }
  return splits;
}

std::string number(double value) {
  char text[32];
  std::snprintf(text, sizeof text, "%.9g", value);
  return text;
}

void write_features(const tinct::ChipCollection& chips, const std::filesystem::path& file) {
  const std::vector<tinct::ChipRef> all = chips.all();
  const tinct::FeatureTable table = tinct::pixel_features(chips, all, tinct::FeatureSet::pixel_and_3x3);
  std::ofstream out(file);
  out << "chip,class";
  for (const std::string& name : table.names) out << "," << name;
  out << "\n";
  for (int i = 0; i < table.rows(); ++i) {
    out << all[static_cast<std::size_t>(i)].chip << "," << chips.class_of(all[static_cast<std::size_t>(i)]);
    for (int f = 0; f < table.columns(); ++f) out << "," << number(table.row(i)[f]);
    out << "\n";
  }
}

void write_predictions(const tinct::ChipCollection& chips, const std::map<std::string, Split>& splits,
                       const std::filesystem::path& file) {
  std::ofstream out(file);
  out << "split,method,chip,truth,predicted";
  for (std::size_t k = 0; k < chips.classes().size(); ++k) out << ",p" << k;
  out << "\n";
  for (const auto& [name, split] : splits) {
    for (const auto kind : {tinct::BaselineKind::random_forest, tinct::BaselineKind::logistic_regression}) {
      tinct::BaselineSettings settings;
      settings.kind = kind;
      settings.seed = split.seed;
      const tinct::BaselinePredictions result = tinct::run_baseline(chips, split.train, split.test, settings);
      for (std::size_t i = 0; i < result.chips.size(); ++i) {
        out << name << "," << tinct::to_string(kind) << "," << result.chips[i].chip << "," << result.truth[i] << ","
            << result.predicted[i];
        for (double p : result.probabilities[i]) out << "," << number(p);
        out << "\n";
      }
    }
  }
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 4) {
    std::cerr << "usage: baseline_tool STORE SPLITS.csv OUT_FOLDER\n";
    return 2;
  }
  try {
    const tinct::ChipCollection chips({argv[1]});
    const std::filesystem::path out = argv[3];
    write_features(chips, out / "features.csv");
    write_predictions(chips, read_splits(argv[2]), out / "predictions.csv");
    return 0;
  } catch (const tinct::Error& error) {
    std::cerr << error.what() << "\n";
    return error.exit_code();
  }
}
