// `tinct assess`: a finetune run's model applied to any label store, writing the
// same metric files as fine-tuning (metrics.json, confusion.csv, predictions.csv).
// Chips the run learnt from, or left unused beside them (its split.csv: training,
// validation, unused), are left out unless `all` is set, so assessing on the run's
// own store scores its test chips only.
#pragma once

#include <filesystem>

namespace tinct {

// Returns the macro F1; `out` empty means RUN/assess-STORENAME. With `all`, every chip of
// the store is scored, with a warning naming how many the run learnt from.
double run_assess(const std::filesystem::path& run, const std::filesystem::path& store,
                  const std::filesystem::path& out, bool all = false);

}  // namespace tinct
