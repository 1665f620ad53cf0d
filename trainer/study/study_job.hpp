// The whole of `tinct study`: read the config, plan every run (configs checked before any
// work), run what is not finished yet, read the runs back, compute the statistics, write
// summary.csv, summary.json and report.html into the study folder and print the results
// table. Fails (runtime, after writing everything) when a run failed.
#pragma once

#include <filesystem>

namespace tinct {

struct StudyOptions {
  bool force = false;  // run every run again
  int threads = 1;     // in all
};

void run_study(const std::filesystem::path& config_file, const StudyOptions& options);

}  // namespace tinct
