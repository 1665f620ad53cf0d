// runs/thread_pinning: every OpenMP thread on a CPU of its own, as the kernel reports
// each thread's affinity (sched_getaffinity), and no pinning when switched off or when
// the threads do not take every CPU. The process's threads get every CPU back after.
#include <catch2/catch.hpp>

#include <omp.h>
#include <sched.h>

#include <cstdlib>
#include <set>
#include <vector>

#include "runs/thread_pinning.hpp"

using Catch::Matchers::Contains;

namespace {

cpu_set_t allowed_cpus() {
  cpu_set_t set;
  CPU_ZERO(&set);
  REQUIRE(sched_getaffinity(0, sizeof(set), &set) == 0);
  return set;
}

// Each team thread's own CPU set, as the kernel has it.
std::vector<cpu_set_t> team_affinities(int threads) {
  std::vector<cpu_set_t> sets(static_cast<std::size_t>(threads));
#pragma omp parallel num_threads(threads)
  sched_getaffinity(0, sizeof(cpu_set_t), &sets[static_cast<std::size_t>(omp_get_thread_num())]);
  return sets;
}

void give_back(const cpu_set_t& all, int threads) {
#pragma omp parallel num_threads(threads)
  sched_setaffinity(0, sizeof(all), &all);
}

}  // namespace

TEST_CASE("compute threads are pinned one to a CPU when they take every CPU", "[pinning]") {
  const cpu_set_t all = allowed_cpus();
  const int cpus = CPU_COUNT(&all);
  if (cpus < 2) {
    WARN("one CPU available: nothing to pin");
    return;
  }
  omp_set_num_threads(cpus);
  CHECK_THAT(tinct::pin_compute_threads(), Contains("pinned to CPUs"));
  std::set<int> used;
  for (const cpu_set_t& set : team_affinities(cpus)) {
    CHECK(CPU_COUNT(&set) == 1);
    for (int cpu = 0; cpu < CPU_SETSIZE; ++cpu) {
      if (CPU_ISSET(cpu, &set)) {
        CHECK(CPU_ISSET(cpu, &all));
        used.insert(cpu);
      }
    }
  }
  CHECK(static_cast<int>(used.size()) == cpus);  // no two threads on one CPU
  give_back(all, cpus);
}

TEST_CASE("compute threads stay unpinned when switched off or fewer than the CPUs", "[pinning]") {
  const cpu_set_t all = allowed_cpus();
  const int cpus = CPU_COUNT(&all);
  if (cpus < 2) return;
  omp_set_num_threads(cpus);
  ::setenv("TINCT_PIN_THREADS", "0", 1);
  CHECK_THAT(tinct::pin_compute_threads(), Contains("not pinned"));
  ::unsetenv("TINCT_PIN_THREADS");
  for (const cpu_set_t& set : team_affinities(cpus)) CHECK(CPU_EQUAL(&set, &all));
  omp_set_num_threads(cpus - 1);
  CHECK_THAT(tinct::pin_compute_threads(), Contains("not pinned"));
  for (const cpu_set_t& set : team_affinities(cpus - 1)) CHECK(CPU_EQUAL(&set, &all));
}
