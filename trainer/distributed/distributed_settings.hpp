// How a data-parallel job meets and how long it waits: the settings a config or flags give;
// where each process sits in the job comes from the environment (rendezvous.hpp).
#pragma once

#include <cstddef>

namespace tinct {

struct DistributedSettings {
  int port = 29500;             // rank 0's rendezvous port when MASTER_PORT is not set
  int timeout_seconds = 300;    // joining, and any collective waiting for a silent peer
  std::size_t bucket_bytes = 25u << 20;  // gradients are all-reduced in flat buckets of this size
};

}  // namespace tinct
