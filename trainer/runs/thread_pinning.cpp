#include "runs/thread_pinning.hpp"

#include <omp.h>
#include <pthread.h>
#include <sched.h>

#include <algorithm>
#include <atomic>
#include <cstdlib>
#include <fstream>
#include <set>
#include <utility>
#include <vector>

namespace tinct {
namespace {

int read_number(const std::string& file) {
  std::ifstream in(file);
  int value = -1;
  in >> value;
  return value;
}

// The CPUs this process may run on, the first of each physical core before its
// siblings (hyperthreads), so n threads land on n cores when there are n.
std::vector<int> cpus_by_core() {
  cpu_set_t allowed;
  CPU_ZERO(&allowed);
  if (sched_getaffinity(0, sizeof(allowed), &allowed) != 0) return {};
  std::vector<int> first, siblings;
  std::set<std::pair<int, int>> cores;
  for (int cpu = 0; cpu < CPU_SETSIZE; ++cpu) {
    if (!CPU_ISSET(cpu, &allowed)) continue;
    const std::string topology = "/sys/devices/system/cpu/cpu" + std::to_string(cpu) + "/topology/";
    const std::pair<int, int> core{read_number(topology + "physical_package_id"), read_number(topology + "core_id")};
    (cores.insert(core).second || core.second < 0 ? first : siblings).push_back(cpu);
  }
  first.insert(first.end(), siblings.begin(), siblings.end());
  return first;
}

std::string listed(const std::vector<int>& cpus, int count) {
  std::string text;
  for (int i = 0; i < count; ++i) text += (i ? ", " : "") + std::to_string(cpus[static_cast<std::size_t>(i)]);
  return text;
}

}  // namespace

std::string pin_compute_threads() {
  const char* setting = std::getenv("TINCT_PIN_THREADS");
  if (setting && std::string(setting) == "0") return "threads not pinned (TINCT_PIN_THREADS=0)";
  const int threads = omp_get_max_threads();  // LibTorch's intra-op threads, as configure_threads() set them
  const std::vector<int> cpus = cpus_by_core();
  if (threads < 2) return "one compute thread: not pinned";
  // Fewer threads than CPUs: the user may run other jobs beside this one, which would
  // pin onto the same first CPUs; more: they would share cores anyway.
  if (threads != static_cast<int>(cpus.size())) {
    return std::to_string(threads) + " compute threads on " + std::to_string(cpus.size()) +
           " CPUs: not pinned (only when they take every CPU)";
  }
  std::atomic<int> pinned{0};
#pragma omp parallel num_threads(threads)
  {
    cpu_set_t one;
    CPU_ZERO(&one);
    CPU_SET(cpus[static_cast<std::size_t>(omp_get_thread_num())], &one);
    if (pthread_setaffinity_np(pthread_self(), sizeof(one), &one) == 0) ++pinned;
  }
  if (pinned != threads) return "pinning compute threads failed for " + std::to_string(threads - pinned) + " of them";
  return std::to_string(threads) + " compute threads pinned to CPUs " + listed(cpus, threads) +
         " (TINCT_PIN_THREADS=0 turns this off)";
}

}  // namespace tinct
