// Where a command's time goes, in wall-clock and process CPU seconds (on a machine other
// jobs load, CPU time still says what a stage costs; the wall clock then mostly measures
// the wait for a core).
// - StageClock adds up the spans of a stage that runs many times (a map's strips), for the log.
// - stage_done(name): with TINCT_STAGE_TIMES set in the environment, prints on stderr the
//   seconds since the previous mark (and the calling thread's own CPU seconds: the rest ran
//   on helper threads). Off, it costs one test of a flag. Used by scripts/bench/pair_bench.py.
#pragma once

namespace tinct {

struct StageTime {
  double wall = 0, cpu = 0;
};

class StageClock {
 public:
  void start();
  // Adds the seconds since start() to `total`.
  void stop(StageTime& total) const;

 private:
  StageTime started_;
};

void stage_done(const char* name);

}  // namespace tinct
