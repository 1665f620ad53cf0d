// Running a planned study: pixel baselines in this process, fine-tunes as child processes
// (`tinct finetune`, `parallel` at once on each rank, threads divided), each finished fine-tune's model
// applied to its validation chips (for calibration), then the ensembles. A run whose folder
// holds a finished run of the same config hash is skipped; a failed run is reported and the
// study goes on. Progress over the fine-tunes with an ETA.
#pragma once

#include <string>
#include <vector>

#include "study/study_plan.hpp"

namespace tinct {

struct StudyExecution {
  bool force = false;  // run everything again
  int threads = 1;     // in all, divided among the fine-tunes that run at once
};

struct RunState {
  bool ok = false;
  bool skipped = false;  // finished before, same config hash
  std::string message;   // why it failed
};

struct ExecutionCounts {
  int ran = 0, skipped = 0, failed = 0;  // fine-tunes
  double seconds = 0;                    // wall time of the fine-tunes
};

class StudyRanks;

// One state per plan.runs entry. Spread over ranks: rank 0 decides what is left to run and
// runs the baselines, every rank draws fine-tunes, and rank 0 gathers their outcomes and
// runs the ensembles; the states returned on other ranks are only their own runs'.
std::vector<RunState> execute_study(const StudyPlan& plan, const StudyExecution& options, ExecutionCounts& counts,
                                    StudyRanks& ranks);

}  // namespace tinct
