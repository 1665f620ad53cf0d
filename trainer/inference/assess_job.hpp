// `tinct assess`: a finetune run's model applied to any label store, writing the
// same metric files as fine-tuning (metrics.json, confusion.csv, predictions.csv).
#pragma once

#include <filesystem>

namespace tinct {

// Returns the macro F1; `out` empty means RUN/assess-STORENAME.
double run_assess(const std::filesystem::path& run, const std::filesystem::path& store,
                  const std::filesystem::path& out);

}  // namespace tinct
