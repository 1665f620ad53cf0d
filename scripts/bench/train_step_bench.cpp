// Benchmark of the training step on preloaded tensors (built only by
// scripts/bench.sh): chips/s of forward + backward + AdamW step for a model spec,
// the FLOP/s it achieves (3 x 2 x conv/linear MACs per chip), and a 2048 x 2048
// float matmul in the same process (best of several) as the machine's reference rate.
// The step is pretraining's: channels-last chips when asked (parameters stay as they are),
// bf16 runs the forward under LibTorch's CPU autocast (training/precision.hpp).
//
// usage: tinct_train_bench ENCODER BANDS CHIP BATCH STEPS [channels_last 0|1] [fp32|bf16]
// prints: ENCODER chips/s GFLOP/s matmul-GFLOP/s MACs/chip threads parameters cpu-ms/step
// (the process's CPU time per timed step: steadier than wall time on a loaded machine when
// OMP_WAIT_POLICY=passive keeps idle threads from spinning)
#include <torch/torch.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <ctime>
#include <string>

#include "models/colourisation_model.hpp"
#include "models/model_stats.hpp"
#include "runs/thread_pinning.hpp"
#include "runs/torch_runtime.hpp"
#include "training/precision.hpp"

namespace {

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

double matmul_gflops() {
  const torch::Tensor a = torch::randn({2048, 2048}), b = torch::randn({2048, 2048});
  torch::mm(a, b);  // warm-up
  double best = 1e30;
  for (int i = 0; i < 5; ++i) {
    const auto start = std::chrono::steady_clock::now();
    torch::mm(a, b);
    best = std::min(best, seconds_since(start));
  }
  return 2.0 * 2048.0 * 2048.0 * 2048.0 / best / 1e9;
}

}  // namespace

int main(int argc, char** argv) {
  if (argc < 6) {
    std::fprintf(stderr, "usage: %s ENCODER BANDS CHIP BATCH STEPS [channels_last]\n", argv[0]);
    return 2;
  }
  tinct::configure_threads(0);
  tinct::pin_compute_threads();  // as tinct pretrain runs (TINCT_PIN_THREADS=0: not)
  tinct::ModelSpec spec;
  spec.encoder.name = argv[1];
  spec.encoder.bands = std::stoi(argv[2]);
  const int chip = std::stoi(argv[3]), batch = std::stoi(argv[4]), steps = std::stoi(argv[5]);
  const bool channels_last = argc > 6 && std::string(argv[6]) == "1";
  const tinct::PrecisionChoice precision = tinct::choose_precision(argc > 7 ? argv[7] : "fp32");
  torch::manual_seed(0);
  tinct::ColourisationModel model(spec);
  const std::int64_t macs = tinct::conv_linear_macs(model, {1, spec.encoder.bands, chip, chip});
  torch::optim::AdamW optimizer(model->parameters(), torch::optim::AdamWOptions(1e-3));
  auto memory = channels_last ? torch::MemoryFormat::ChannelsLast : torch::MemoryFormat::Contiguous;
  const torch::Tensor x = torch::randn({batch, spec.encoder.bands, chip, chip}).contiguous(memory);
  const torch::Tensor target = torch::rand({batch, 3, chip, chip});
  const auto step = [&] {
    torch::Tensor prediction;
    {
      const tinct::ForwardPrecision scope(precision);
      prediction = model->forward(x).to(torch::kFloat).contiguous();
    }
    const torch::Tensor loss = torch::smooth_l1_loss(prediction, target);
    optimizer.zero_grad();
    loss.backward();
    optimizer.step();
  };
  for (int i = 0; i < 3; ++i) step();  // warm-up
  const auto start = std::chrono::steady_clock::now();
  const std::clock_t cpu_start = std::clock();
  for (int i = 0; i < steps; ++i) step();
  const double chips_per_s = steps * batch / seconds_since(start);
  const double cpu_ms = 1000.0 * static_cast<double>(std::clock() - cpu_start) / CLOCKS_PER_SEC / steps;
  const double gflops = chips_per_s * 3.0 * 2.0 * static_cast<double>(macs) / 1e9;
  std::int64_t parameters = 0;
  for (const auto& p : model->parameters()) parameters += p.numel();
  std::printf("%s %.2f %.2f %.2f %lld %d %lld %.1f\n", spec.encoder.name.c_str(), chips_per_s, gflops, matmul_gflops(),
              static_cast<long long>(macs), tinct::threads_in_use(), static_cast<long long>(parameters), cpu_ms);
  return 0;
}
