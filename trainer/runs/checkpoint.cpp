#include "runs/checkpoint.hpp"

#include <torch/torch.h>

#include <algorithm>
#include <cstdio>
#include <vector>

#include "util/atomic_file.hpp"
#include "util/error.hpp"

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

std::string read_text(torch::serialize::InputArchive& archive, const std::string& key) {
  c10::IValue value;
  archive.read(key, value);
  return value.toStringRef();
}

}  // namespace

fs::path checkpoint_path(const fs::path& folder, std::int64_t step) {
  char name[64];
  std::snprintf(name, sizeof(name), "step-%08lld.pt", static_cast<long long>(step));
  return folder / name;
}

void save_checkpoint(const fs::path& file, const torch::nn::Module& model, const torch::optim::Optimizer& optimizer,
                     const CheckpointInfo& info) {
  torch::serialize::OutputArchive archive;
  torch::serialize::OutputArchive model_archive, optimizer_archive;
  model.save(model_archive);
  optimizer.save(optimizer_archive);
  archive.write("model", model_archive);
  archive.write("optimizer", optimizer_archive);
  archive.write("step", c10::IValue(info.step));
  archive.write("model_spec", c10::IValue(info.model_spec_yaml));
  archive.write("config_hash", c10::IValue(info.config_hash));
  fs::create_directories(file.parent_path());
  const fs::path temporary = temporary_sibling(file);
  archive.save_to(temporary.string());
  commit_file(temporary, file);
}

CheckpointInfo read_checkpoint_info(const fs::path& file) {
  torch::serialize::InputArchive archive;
  try {
    archive.load_from(file.string());
  } catch (const c10::Error& e) {
    fail_runtime(file.string() + ": not a readable tinct checkpoint (" + e.what_without_backtrace() + ")");
  }
  CheckpointInfo info;
  c10::IValue step;
  archive.read("step", step);
  info.step = step.toInt();
  info.model_spec_yaml = read_text(archive, "model_spec");
  info.config_hash = read_text(archive, "config_hash");
  return info;
}

CheckpointInfo load_checkpoint(const fs::path& file, torch::nn::Module& model, torch::optim::Optimizer& optimizer) {
  const CheckpointInfo info = read_checkpoint_info(file);
  torch::serialize::InputArchive archive, model_archive, optimizer_archive;
  archive.load_from(file.string());
  archive.read("model", model_archive);
  archive.read("optimizer", optimizer_archive);
  model.load(model_archive);
  optimizer.load(optimizer_archive);
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
