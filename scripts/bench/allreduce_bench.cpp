// Benchmark of the gradient all-reduce of data-parallel training (built only by
// scripts/bench.sh): it launches itself as N local ranks on loopback, one thread each;
// every rank averages gradients shaped like a real model's (25 MB buckets) and rank 0
// prints the median time per step. Communication per step is the parameter bytes.
//
// usage: tinct_allreduce_bench [RANKS] [STEPS]
#include <torch/torch.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <string>
#include <vector>

#include "distributed/distributed_settings.hpp"
#include "distributed/gradient_averager.hpp"
#include "distributed/local_launcher.hpp"
#include "distributed/process_group.hpp"
#include "models/colourisation_model.hpp"
#include "util/error.hpp"

namespace {

// Median milliseconds per gradient average over `steps` (after two warm-up steps).
double median_ms(tinct::ProcessGroup& group, const std::vector<torch::Tensor>& parameters, int steps) {
  const tinct::GradientAverager average(group, tinct::DistributedSettings{}.bucket_bytes);
  std::vector<double> times;
  for (int step = -2; step < steps; ++step) {
    group.barrier("bench barrier");
    const auto start = std::chrono::steady_clock::now();
    average(parameters);
    const double ms = std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - start).count();
    if (step >= 0) times.push_back(ms);
  }
  std::sort(times.begin(), times.end());
  return times[times.size() / 2];
}

// Median milliseconds per all-reduce of one contiguous tensor of `floats` (no bucketing, no copies).
double flat_median_ms(tinct::ProcessGroup& group, std::int64_t floats, int steps) {
  torch::Tensor flat = torch::randn({floats});
  std::vector<double> times;
  for (int step = -2; step < steps; ++step) {
    group.barrier("bench barrier");
    const auto start = std::chrono::steady_clock::now();
    group.sum(flat, "bench all-reduce");
    const double ms = std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - start).count();
    if (step >= 0) times.push_back(ms);
  }
  std::sort(times.begin(), times.end());
  return times[times.size() / 2];
}

void bench_parameters(tinct::ProcessGroup& group, const std::string& name, const std::vector<torch::Tensor>& parameters,
                      int steps) {
  std::int64_t floats = 0;
  for (auto parameter : parameters) {
    parameter.mutable_grad() = torch::randn_like(parameter);
    floats += parameter.numel();
  }
  const double ms = median_ms(group, parameters, steps);
  const double flat_ms = flat_median_ms(group, floats, steps);
  const double megabytes = 4.0 * static_cast<double>(floats) / 1e6;
  if (group.is_writer()) {
    std::printf("%-30s %10lld %7.1f %9.2f %9.2f %8.0f\n", name.c_str(), static_cast<long long>(floats), megabytes, ms,
                flat_ms, megabytes / (ms / 1000.0));
  }
}

void run_rank(int steps) {
  torch::set_num_threads(1);
  tinct::DistributedSettings settings;
  settings.timeout_seconds = 60;
  tinct::ProcessGroup group(tinct::read_rendezvous(tinct::process_environment(), 0), settings);
  if (group.is_writer()) {
    std::printf("\ngradient all-reduce per step: %d ranks on loopback, 1 thread each, 25 MB buckets\n", group.world());
    std::printf("(ms/step: the gradient hook, median of %d; flat ms: one contiguous tensor of that size)\n", steps);
    std::printf("%-30s %10s %7s %9s %9s %8s\n", "parameters (7 bands)", "floats", "MB", "ms/step", "flat ms", "MB/s");
  }
  for (const std::string encoder : {"compact", "resnet18"}) {
    tinct::ModelSpec spec;
    spec.encoder.name = encoder;
    spec.encoder.bands = 7;
    torch::manual_seed(0);
    tinct::ColourisationModel model(spec);
    bench_parameters(group, encoder + " encoder+decoder", model->parameters(), steps);
    bench_parameters(group, encoder + " encoder (finetune)", model->encoder->parameters(), steps);
  }
}

}  // namespace

int main(int argc, char** argv) {
  const int ranks = argc > 1 ? std::stoi(argv[1]) : 2;
  const int steps = argc > 2 ? std::stoi(argv[2]) : 20;
  try {
    if (tinct::process_environment().count("RANK") == 0) {
      tinct::LocalLaunch launch;
      launch.world = ranks;
      launch.arguments = {std::to_string(ranks), std::to_string(steps)};
      launch.grace_seconds = 60;
      tinct::run_local_ranks(launch);
      return 0;
    }
    run_rank(steps);
    return 0;
  } catch (const tinct::Error& error) {
    std::fprintf(stderr, "tinct_allreduce_bench: %s\n", error.what());
    return error.exit_code();
  }
}
