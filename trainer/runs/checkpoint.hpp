// Training checkpoints: model weights, optimiser state, the step, the loop's own
// counters (e.g. fine-tuning's best score) and the random generator's state, in one
// model archive (model_archive.hpp, kind checkpoint, versioned) written to a temporary
// name and renamed, so a kill mid-write leaves the previous checkpoint intact.
// The last K are kept.
#pragma once

#include <cstdint>
#include <filesystem>
#include <map>
#include <optional>
#include <string>

namespace torch {
namespace nn {
class Module;
}
namespace optim {
class Optimizer;
}
}  // namespace torch

namespace tinct {

struct CheckpointInfo {
  std::int64_t step = 0;        // steps completed
  std::string model_spec_yaml;  // the architecture, to rebuild the model
  std::string config_hash;
  std::map<std::string, double> loop_state;  // the loop's counters, exact as doubles
};

// checkpoints/step-00001200.pt
std::filesystem::path checkpoint_path(const std::filesystem::path& folder, std::int64_t step);

// Also saves the default CPU generator's state (dropout, random init).
void save_checkpoint(const std::filesystem::path& file, const torch::nn::Module& model,
                     const torch::optim::Optimizer& optimizer, const CheckpointInfo& info);
// Loads weights, optimiser state and the generator state into the given (already built)
// objects. Fails (runtime) on a checkpoint of a newer format or one that does not fit.
CheckpointInfo load_checkpoint(const std::filesystem::path& file, torch::nn::Module& model,
                               torch::optim::Optimizer& optimizer);
// Reads only the info (to rebuild the model before loading).
CheckpointInfo read_checkpoint_info(const std::filesystem::path& file);

// The checkpoint with the highest step in `folder`, if any.
std::optional<std::filesystem::path> latest_checkpoint(const std::filesystem::path& folder);
// Deletes all but the `keep` most recent checkpoints.
void prune_checkpoints(const std::filesystem::path& folder, int keep);

}  // namespace tinct
