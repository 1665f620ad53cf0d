// SIGINT and SIGTERM during a run: the first asks the loop to stop after the current
// step (it writes a checkpoint and marks the run interrupted, so --resume continues);
// a second one ends the process at once with the signal's default action.
#pragma once

#include <string>

namespace tinct {

// Installs the handlers while it lives and restores the previous ones afterwards.
// One at a time per process (the flag it sets is process-wide).
class StopSignals {
 public:
  StopSignals();
  ~StopSignals();
  StopSignals(const StopSignals&) = delete;
  StopSignals& operator=(const StopSignals&) = delete;

  bool requested() const;
  std::string signal_name() const;  // "SIGINT" or "SIGTERM"; "" when none came
};

}  // namespace tinct
