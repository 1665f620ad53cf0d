// The one file format for trained models: encoder.pt, model.pt and checkpoints are
// LibTorch archives that say what kind they are and which format version wrote them,
// and hold a model's description (architecture, band list and statistics, chip size)
// under the same keys, written and read here only. Saving goes to a temporary name
// and is renamed; a failed save (disk full) removes the temporary and says how much
// space is left.
#pragma once

#include <cstdint>
#include <filesystem>
#include <functional>
#include <memory>
#include <string>

namespace at {
class Tensor;
}
namespace torch {
namespace nn {
class Module;
}
namespace optim {
class Optimizer;
}
}  // namespace torch

namespace tinct {

struct BandNormalisation;
struct ModelSpec;

// Version 1: encoder.pt and model.pt before the kind was written (checkpoints had no
// version). Version 2 adds "kind" to every archive and the random state to checkpoints.
// Version 3 ends the file with the SHA-256 of everything before it, in the zip comment
// (archive_checksum.hpp), so a damaged file fails on load instead of loading silently.
inline constexpr std::int64_t kArchiveVersion = 3;

enum class ArchiveKind { encoder, classifier, checkpoint };

// "encoder.pt of a pretrain run", "model.pt of a finetune run", "training checkpoint"
std::string describe(ArchiveKind kind);

class ArchiveWriter {
 public:
  explicit ArchiveWriter(ArchiveKind kind);
  ~ArchiveWriter();
  ArchiveWriter(const ArchiveWriter&) = delete;
  ArchiveWriter& operator=(const ArchiveWriter&) = delete;

  void text(const std::string& key, const std::string& value);
  void integer(const std::string& key, std::int64_t value);
  void number(const std::string& key, double value);
  void tensor(const std::string& key, const at::Tensor& value);
  void module(const std::string& key, const torch::nn::Module& module);
  void optimizer(const std::string& key, const torch::optim::Optimizer& optimizer);
  // model_spec (YAML), bands, band_mean, band_std and chip_size.
  void description(const ModelSpec& spec, const BandNormalisation& normalisation, int chip_size);
  // The default CPU generator's state, so dropout continues identically after a resume.
  void random_state();

  // Fails (runtime) naming the file and the free space on its file system.
  void save(const std::filesystem::path& file);

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

class ArchiveReader {
 public:
  // Fails (usage) when the file is missing or is another kind of archive, (runtime) when it
  // is unreadable, damaged (its checksum differs) or written by a newer tinct.
  ArchiveReader(const std::filesystem::path& file, ArchiveKind expected);
  ~ArchiveReader();
  ArchiveReader(const ArchiveReader&) = delete;
  ArchiveReader& operator=(const ArchiveReader&) = delete;

  std::int64_t version() const;
  const std::filesystem::path& file() const;

  // Each fails (runtime) naming the file and key when the key is missing or of another type.
  std::string text(const std::string& key);
  std::int64_t integer(const std::string& key);
  double number(const std::string& key);
  at::Tensor tensor(const std::string& key);
  void module(const std::string& key, torch::nn::Module& module);
  void optimizer(const std::string& key, torch::optim::Optimizer& optimizer);
  bool has(const std::string& key);
  // The description written by ArchiveWriter::description.
  ModelSpec model_spec();
  void inputs(BandNormalisation& normalisation, int& chip_size);
  // Restores the generator when the archive holds its state; false otherwise.
  bool restore_random_state();

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

// For tests: called with the temporary file after it is written and before it is renamed
// over the target (e.g. a child process kills itself there). Empty: none.
void set_archive_save_hook(std::function<void(const std::filesystem::path& temporary)> hook);

}  // namespace tinct
