#include "runs/torch_runtime.hpp"

#include <ATen/Parallel.h>
#include <torch/version.h>

#include <sys/resource.h>

#include <cstdint>
#include <thread>

namespace tinct {

namespace {

// Under an address-space limit (ulimit -v) of a few GiB, every extra compute thread
// reserves stacks and BLAS buffers that the limit may not hold, and LibTorch's and
// OpenBLAS's pools wait or retry for ever when a thread cannot start. So "all cores"
// means one there; --threads still sets any number.
bool tight_address_space() {
  rlimit limit{};
  return ::getrlimit(RLIMIT_AS, &limit) == 0 && limit.rlim_cur != RLIM_INFINITY &&
         limit.rlim_cur <= (std::uint64_t{8} << 30);
}

}  // namespace

int configure_threads(int requested) {
  const int cores = static_cast<int>(std::thread::hardware_concurrency());
  const int all = tight_address_space() ? 1 : (cores > 0 ? cores : 1);
  const int threads = requested > 0 ? requested : all;
  at::set_num_threads(threads);
  return at::get_num_threads();
}

int threads_in_use() { return at::get_num_threads(); }

std::string libtorch_version() { return TORCH_VERSION; }

}  // namespace tinct
