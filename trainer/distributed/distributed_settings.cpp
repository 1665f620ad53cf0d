#include "distributed/distributed_settings.hpp"

#include "util/config_node.hpp"

namespace tinct {

DistributedSettings read_distributed_settings(const ConfigNode& node) {
  DistributedSettings settings;
  settings.port = static_cast<int>(node.integer("port", settings.port, 1, 65535));
  settings.timeout_seconds = static_cast<int>(node.integer("timeout", settings.timeout_seconds, 1, 86400));
  settings.bucket_bytes = static_cast<std::size_t>(node.integer("bucket_mb", 25, 1, 1024)) << 20;
  settings.sync_batch_norm = node.choice("batch_norm", {"local", "sync"}, "local") == "sync";
  node.finish();
  return settings;
}

}  // namespace tinct
