#include "util/stage_times.hpp"

#include <time.h>

#include <cstdio>
#include <cstdlib>
#include <mutex>

namespace tinct {
namespace {

double seconds_of(clockid_t clock) {
  timespec now{};
  clock_gettime(clock, &now);
  return static_cast<double>(now.tv_sec) + static_cast<double>(now.tv_nsec) * 1e-9;
}

StageTime now() { return {seconds_of(CLOCK_MONOTONIC), seconds_of(CLOCK_PROCESS_CPUTIME_ID)}; }

}  // namespace

void StageClock::start() { started_ = now(); }

void StageClock::stop(StageTime& total) const {
  const StageTime end = now();
  total.wall += end.wall - started_.wall;
  total.cpu += end.cpu - started_.cpu;
}

void stage_done(const char* name) {
  static const bool wanted = std::getenv("TINCT_STAGE_TIMES") != nullptr;
  if (!wanted) return;
  static std::mutex mutex;
  static StageTime last{-1, 0};
  static double last_thread = 0;
  std::lock_guard<std::mutex> lock(mutex);
  const StageTime mark = now();
  const double thread = seconds_of(CLOCK_THREAD_CPUTIME_ID);
  if (last.wall < 0) {  // the first mark: the process's CPU so far is its start-up
    std::fprintf(stderr, "stage %s: cpu %.3f s since the process started\n", name, mark.cpu);
  } else {
    std::fprintf(stderr, "stage %s: wall %.3f s, cpu %.3f s (this thread %.3f s)\n", name, mark.wall - last.wall,
                 mark.cpu - last.cpu, thread - last_thread);
  }
  last = mark;
  last_thread = thread;
}

}  // namespace tinct
