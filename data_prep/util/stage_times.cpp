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

}  // namespace

void stage_done(const char* name) {
  static const bool wanted = std::getenv("TINCT_STAGE_TIMES") != nullptr;
  if (!wanted) return;
  static std::mutex mutex;
  static double wall = -1, cpu = 0, thread = 0;
  std::lock_guard<std::mutex> lock(mutex);
  const double now_wall = seconds_of(CLOCK_MONOTONIC), now_cpu = seconds_of(CLOCK_PROCESS_CPUTIME_ID);
  const double now_thread = seconds_of(CLOCK_THREAD_CPUTIME_ID);
  if (wall < 0) {  // the first mark: the process's CPU so far is its start-up
    std::fprintf(stderr, "stage %s: cpu %.3f s since the process started\n", name, now_cpu);
  } else {
    std::fprintf(stderr, "stage %s: wall %.3f s, cpu %.3f s (this thread %.3f s)\n", name, now_wall - wall,
                 now_cpu - cpu, now_thread - thread);
  }
  wall = now_wall;
  cpu = now_cpu;
  thread = now_thread;
}

}  // namespace tinct
