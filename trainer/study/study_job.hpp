// The whole of `tinct study`: read the config, plan every run (configs checked before any
// work), run what is not finished yet, read the runs back, compute the statistics, write
// summary.csv, summary.json and report.html into the study folder and print the results
// table. Fails (runtime, after writing everything) when a run failed. Started as several
// ranks (--world N, srun, RANK/WORLD_SIZE), the ranks share the fine-tunes and rank 0
// alone keeps the study folder's lock and log and writes its files.
#pragma once

#include <filesystem>

namespace tinct {

struct StudyOptions {
  bool force = false;  // run every run again
  int threads = 0;     // --threads: in all (0: every core), or per rank as for training
  int world = 0;       // --world given to this rank (checked against WORLD_SIZE)
};

void run_study(const std::filesystem::path& config_file, const StudyOptions& options);

}  // namespace tinct
