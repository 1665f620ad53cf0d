#include "runs/torch_runtime.hpp"

#include <ATen/Parallel.h>
#include <torch/version.h>

#include <thread>

namespace tinct {

int configure_threads(int requested) {
  const int cores = static_cast<int>(std::thread::hardware_concurrency());
  const int threads = requested > 0 ? requested : (cores > 0 ? cores : 1);
  at::set_num_threads(threads);
  return at::get_num_threads();
}

int threads_in_use() { return at::get_num_threads(); }

std::string libtorch_version() { return TORCH_VERSION; }

}  // namespace tinct
