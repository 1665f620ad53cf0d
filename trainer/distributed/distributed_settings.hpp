// How a data-parallel job meets and how long it waits: the settings a config or flags give;
// where each process sits in the job comes from the environment (rendezvous.hpp).
#pragma once

#include <cstddef>

namespace tinct {

class ConfigNode;

struct DistributedSettings {
  int port = 29500;             // rank 0's rendezvous port when MASTER_PORT is not set
  int timeout_seconds = 300;    // joining, and any collective waiting for a silent peer
  std::size_t bucket_bytes = 25u << 20;  // gradients are all-reduced in flat buckets of this size
  // Batch-norm statistics of each process's part of the batch (local), or of the whole
  // global batch (sync: two small all-reduces per layer and pass; one process with the
  // global batch gives the same model).
  bool sync_batch_norm = false;
};

// A config's `distributed:` section (the caller passes root.section("distributed")):
//   port: 29500   timeout: 300 (seconds)   bucket_mb: 25   batch_norm: local | sync
// Calls node.finish().
DistributedSettings read_distributed_settings(const ConfigNode& node);

}  // namespace tinct
