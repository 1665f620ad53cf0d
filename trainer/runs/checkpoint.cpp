#include "runs/checkpoint.hpp"

#include <torch/torch.h>

#include <algorithm>
#include <cstdio>
#include <vector>

#include "runs/model_archive.hpp"
#include "util/text_lines.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::int64_t step_of(const fs::path& file) {
  long long step = -1;
  if (std::sscanf(file.filename().c_str(), "step-%lld.pt", &step) != 1) return -1;
  return step;
}

std::vector<fs::path> checkpoints_in(const fs::path& folder) {
  std::vector<fs::path> files;
  if (!fs::exists(folder)) return files;
  for (const auto& entry : fs::directory_iterator(folder)) {
    if (step_of(entry.path()) >= 0 && entry.path().extension() == ".pt") files.push_back(entry.path());
  }
  std::sort(files.begin(), files.end(), [](const fs::path& a, const fs::path& b) { return step_of(a) < step_of(b); });
  return files;
}

CheckpointInfo info_of(ArchiveReader& archive) {
  CheckpointInfo info;
  info.step = archive.integer("step");
  info.model_spec_yaml = archive.text("model_spec");
  info.config_hash = archive.text("config_hash");
  if (archive.has("loop_state")) {
    const auto names = split_lines(archive.text("loop_state_names"));
    const torch::Tensor values = archive.tensor("loop_state").to(torch::kFloat64).contiguous();
    for (std::size_t i = 0; i < names.size() && static_cast<std::int64_t>(i) < values.numel(); ++i) {
      info.loop_state[names[i]] = values.data_ptr<double>()[i];
    }
  }
  return info;
}

}  // namespace

fs::path checkpoint_path(const fs::path& folder, std::int64_t step) {
  char name[64];
  std::snprintf(name, sizeof(name), "step-%08lld.pt", static_cast<long long>(step));
  return folder / name;
}

void save_checkpoint(const fs::path& file, const torch::nn::Module& model, const torch::optim::Optimizer& optimizer,
                     const CheckpointInfo& info) {
  ArchiveWriter archive(ArchiveKind::checkpoint);
  archive.module("model", model);
  archive.optimizer("optimizer", optimizer);
  archive.integer("step", info.step);
  archive.text("model_spec", info.model_spec_yaml);
  archive.text("config_hash", info.config_hash);
  if (!info.loop_state.empty()) {
    std::vector<std::string> names;
    std::vector<double> values;
    for (const auto& [name, value] : info.loop_state) {
      names.push_back(name);
      values.push_back(value);
    }
    archive.text("loop_state_names", join_lines(names));
    archive.tensor("loop_state", torch::tensor(values, torch::kFloat64));
  }
  archive.random_state();
  archive.save(file);
}

CheckpointInfo read_checkpoint_info(const fs::path& file) {
  ArchiveReader archive(file, ArchiveKind::checkpoint);
  return info_of(archive);
}

CheckpointInfo load_checkpoint(const fs::path& file, torch::nn::Module& model, torch::optim::Optimizer& optimizer) {
  ArchiveReader archive(file, ArchiveKind::checkpoint);
  const CheckpointInfo info = info_of(archive);
  archive.module("model", model);
  archive.optimizer("optimizer", optimizer);
  archive.restore_random_state();
  return info;
}

std::optional<fs::path> latest_checkpoint(const fs::path& folder) {
  const auto files = checkpoints_in(folder);
  if (files.empty()) return std::nullopt;
  return files.back();
}

void prune_checkpoints(const fs::path& folder, int keep) {
  const auto files = checkpoints_in(folder);
  for (std::size_t i = 0; i + keep < files.size(); ++i) fs::remove(files[i]);
}

}  // namespace tinct
