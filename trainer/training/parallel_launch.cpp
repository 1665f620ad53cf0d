#include "training/parallel_launch.hpp"

#include <fstream>
#include <iterator>
#include <string>
#include <thread>
#include <vector>

#include "distributed/local_launcher.hpp"
#include "distributed/rendezvous.hpp"
#include "runs/torch_runtime.hpp"
#include "training/data_parallel.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace tinct {
namespace {

// This process's arguments after the program name, exactly as it was started.
std::vector<std::string> own_arguments() {
  std::ifstream in("/proc/self/cmdline", std::ios::binary);
  const std::string all((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  std::vector<std::string> words;
  for (std::size_t start = 0; start < all.size();) {
    const std::size_t end = all.find('\0', start);
    words.push_back(all.substr(start, end - start));
    if (end == std::string::npos) break;
    start = end + 1;
  }
  if (words.empty()) fail_runtime("cannot read this process's command line from /proc/self/cmdline");
  return {words.begin() + 1, words.end()};
}

int cores_for(const Environment& environment, int requested) {
  if (requested > 0) return requested;
  const auto cpus = environment.find("SLURM_CPUS_PER_TASK");
  if (cpus != environment.end() && !cpus->second.empty() && std::stoi(cpus->second) > 0) return std::stoi(cpus->second);
  return std::max(1, static_cast<int>(std::thread::hardware_concurrency()));
}

}  // namespace

bool run_as_local_ranks(int world) {
  if (world <= 1) return false;
  const Environment environment = process_environment();
  if (environment.count("RANK")) return false;  // a rank already: it joins
  LocalLaunch launch;
  launch.world = world;
  launch.arguments = own_arguments();  // on a free loopback port (launch.port 0): local jobs never clash
  run_local_ranks(launch);
  return true;
}

Rendezvous take_place(int default_port, int world_flag, int requested) {
  const Environment environment = process_environment();
  const Rendezvous place = read_rendezvous(environment, default_port);
  if (world_flag > 1 && place.world != world_flag) {
    fail_usage("--world " + std::to_string(world_flag) + " but this process is one of " + std::to_string(place.world) +
               " (" + place.source + "); give --world only when starting local ranks from a shell");
  }
  if (place.single()) return place;
  if (place.rank != 0) log::set_quiet(true);
  const int cores = cores_for(environment, requested);
  configure_threads(place.on_loopback() ? threads_per_rank(cores, place.world) : cores);
  return place;
}

std::shared_ptr<DataParallel> join_data_parallel(const DistributedSettings& settings, int world_flag, int requested) {
  const Rendezvous place = take_place(settings.port, world_flag, requested);
  if (place.single()) return nullptr;
  return std::make_shared<DataParallel>(place, settings);
}

}  // namespace tinct
