#include "runs/model_archive.hpp"

#include <ATen/CPUGeneratorImpl.h>
#include <torch/torch.h>

#include <fcntl.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <mutex>

#include "batches/chip_collection.hpp"
#include "models/model_spec.hpp"
#include "runs/archive_checksum.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/sha256.hpp"
#include "util/write_failure.hpp"
#include "util/text_lines.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::function<void(const fs::path&)>& save_hook() {
  static std::function<void(const fs::path&)> hook;
  return hook;
}

const char* kind_name(ArchiveKind kind) {
  switch (kind) {
    case ArchiveKind::encoder: return "encoder";
    case ArchiveKind::classifier: return "classifier";
    case ArchiveKind::checkpoint: return "checkpoint";
  }
  return "";
}

}  // namespace

std::string describe(ArchiveKind kind) {
  switch (kind) {
    case ArchiveKind::encoder: return "encoder.pt of a pretrain run";
    case ArchiveKind::classifier: return "model.pt of a finetune run";
    case ArchiveKind::checkpoint: return "training checkpoint";
  }
  return "";
}

void set_archive_save_hook(std::function<void(const fs::path& temporary)> hook) { save_hook() = std::move(hook); }

// ---- writing

struct ArchiveWriter::Impl {
  torch::serialize::OutputArchive archive;
};

ArchiveWriter::ArchiveWriter(ArchiveKind kind) : impl_(std::make_unique<Impl>()) {
  integer("format_version", kArchiveVersion);
  text("kind", kind_name(kind));
}

ArchiveWriter::~ArchiveWriter() = default;

void ArchiveWriter::text(const std::string& key, const std::string& value) { impl_->archive.write(key, c10::IValue(value)); }

void ArchiveWriter::integer(const std::string& key, std::int64_t value) { impl_->archive.write(key, c10::IValue(value)); }

void ArchiveWriter::number(const std::string& key, double value) { impl_->archive.write(key, c10::IValue(value)); }

void ArchiveWriter::tensor(const std::string& key, const at::Tensor& value) { impl_->archive.write(key, value); }

void ArchiveWriter::module(const std::string& key, const torch::nn::Module& module) {
  torch::serialize::OutputArchive nested;
  module.save(nested);
  impl_->archive.write(key, nested);
}

void ArchiveWriter::optimizer(const std::string& key, const torch::optim::Optimizer& optimizer) {
  torch::serialize::OutputArchive nested;
  optimizer.save(nested);
  impl_->archive.write(key, nested);
}

void ArchiveWriter::description(const ModelSpec& spec, const BandNormalisation& normalisation, int chip_size) {
  text("model_spec", model_spec_yaml(spec));
  text("bands", join_lines(normalisation.bands));
  tensor("band_mean", torch::tensor(normalisation.mean, torch::kFloat64));
  tensor("band_std", torch::tensor(normalisation.std, torch::kFloat64));
  integer("chip_size", chip_size);
}

void ArchiveWriter::random_state() { tensor("random_state", at::detail::getDefaultCPUGenerator().get_state()); }

// LibTorch's own file writer finishes the zip in its destructor, and a failed write there
// (disk full) throws from a destructor and aborts the process. So the archive goes through
// a writer function that reports every byte as taken and remembers the first failure; it
// also hashes the bytes and keeps the last ones, for the checksum trailer.
void ArchiveWriter::save(const fs::path& file) {
  const fs::path folder = file.has_parent_path() ? file.parent_path() : fs::path(".");
  std::error_code ec;
  fs::create_directories(folder, ec);
  if (ec) fail_runtime("cannot create " + folder.string() + " for " + file.filename().string() + ": " + ec.message());
  const fs::path temporary = temporary_sibling(file);
  const int fd = ::open(temporary.c_str(), O_CREAT | O_TRUNC | O_WRONLY | O_CLOEXEC, 0644);
  if (fd < 0) fail_runtime("cannot write " + file.string() + ": " + std::strerror(errno) + "; check that the folder is writable");
  int failure = 0;
  std::uint64_t total = 0;
  Sha256 hash;
  std::string tail;
  const auto write_all = [&](const void* data, std::size_t size) -> std::size_t {
    const char* bytes = static_cast<const char*>(data);
    for (std::size_t done = 0; done < size && failure == 0;) {
      const ssize_t written = ::write(fd, bytes + done, size - done);
      if (written < 0 && errno == EINTR) continue;
      if (written <= 0) failure = written < 0 ? errno : ENOSPC;
      else done += static_cast<std::size_t>(written);
    }
    hash.update(bytes, size);
    tail.append(bytes, size);
    if (tail.size() > 22) tail.erase(0, tail.size() - 22);
    total += size;
    return size;
  };
  std::string problem;
  try {
    impl_->archive.save_to(write_all);
  } catch (const c10::Error& error) {
    problem = error.what_without_backtrace();
  }
  if (failure == 0 && problem.empty()) {
    const auto trailer = archive_trailer(tail, total, hash.hex_digest());
    if (!trailer) {
      problem = "LibTorch's archive does not end in a zip end record";
    } else if (::pwrite(fd, trailer->length_bytes.data(), 2, static_cast<off_t>(trailer->length_offset)) != 2) {
      failure = errno != 0 ? errno : EIO;
    } else {
      write_all(trailer->comment.data(), trailer->comment.size());
    }
  }
  if (::close(fd) != 0 && failure == 0) failure = errno;
  if (failure != 0 && problem.empty()) problem = std::strerror(failure);
  if (!problem.empty()) {
    // Measured before the temporary goes, so the free space shows what the write met.
    const std::string message = write_failure_message(file, problem, static_cast<std::int64_t>(total));
    fs::remove(temporary, ec);
    fail_runtime(message);
  }
  if (save_hook()) save_hook()(temporary);
  commit_file(temporary, file);
}

// ---- reading

struct ArchiveReader::Impl {
  fs::path file;
  ArchiveKind kind = ArchiveKind::encoder;
  std::int64_t version = 1;
  torch::serialize::InputArchive archive;

  [[noreturn]] void fail_key(const std::string& key, const std::string& what) const {
    fail_runtime(file.string() + ": " + key + " " + what + "; the file is not a complete " + describe(kind) +
                 " (rewrite it with the tinct that reads it)");
  }

  c10::IValue value(const std::string& key) {
    c10::IValue result;
    if (!archive.try_read(key, result)) fail_key(key, "is missing");
    return result;
  }

  // Files of version 1 did not say their kind; their keys do.
  ArchiveKind inferred_kind() {
    torch::serialize::InputArchive nested;
    if (archive.try_read("encoder", nested)) return ArchiveKind::encoder;
    if (archive.try_read("weights", nested)) return ArchiveKind::classifier;
    if (archive.try_read("optimizer", nested)) return ArchiveKind::checkpoint;
    fail_runtime(file.string() + ": a LibTorch archive, but not one tinct wrote (no encoder, model or checkpoint in it)");
  }
};

ArchiveReader::ArchiveReader(const fs::path& file, ArchiveKind expected) : impl_(std::make_unique<Impl>()) {
  impl_->file = file;
  impl_->kind = expected;
  if (!fs::exists(file)) fail_usage(file.string() + " not found; give the " + describe(expected));
  if (fs::is_directory(file)) fail_usage(file.string() + " is a folder; give the " + describe(expected));
  const ChecksumResult checksum = check_archive_checksum(file);
  if (checksum.check == ChecksumCheck::differs) {
    fail_runtime(file.string() + " is damaged: its SHA-256 is " + checksum.found.substr(0, 16) + "..., not the " +
                 checksum.recorded.substr(0, 16) + "... written at its end when it was saved. Restore it from a copy "
                 "or run again the command that wrote it");
  }
  try {
    impl_->archive.load_from(file.string());
  } catch (const c10::Error& error) {
    fail_runtime(file.string() + ": not a readable tinct archive (" + error.what_without_backtrace() + "); give the " +
                 describe(expected));
  }
  c10::IValue value;
  if (impl_->archive.try_read("format_version", value)) impl_->version = value.toInt();
  if (impl_->version > kArchiveVersion) {
    fail_runtime(file.string() + ": written by a newer tinct (format " + std::to_string(impl_->version) +
                 ", this tinct reads up to " + std::to_string(kArchiveVersion) + "); upgrade tinct to read it");
  }
  if (impl_->version >= 3 && checksum.check == ChecksumCheck::absent) {
    fail_runtime(file.string() + " is damaged: the SHA-256 written at its end is missing or cut. Restore it from a "
                 "copy or run again the command that wrote it");
  }
  ArchiveKind found = expected;
  if (impl_->archive.try_read("kind", value) && value.isString()) {
    const std::string name = value.toStringRef();
    if (name == "encoder") found = ArchiveKind::encoder;
    else if (name == "classifier") found = ArchiveKind::classifier;
    else if (name == "checkpoint") found = ArchiveKind::checkpoint;
    else fail_runtime(file.string() + ": an archive of unknown kind \"" + name + "\"; upgrade tinct to read it");
  } else {
    found = impl_->inferred_kind();
  }
  if (found != expected) {
    fail_usage(file.string() + " is the " + describe(found) + ", not the " + describe(expected) + "; give the " +
               describe(expected));
  }
}

ArchiveReader::~ArchiveReader() = default;

std::int64_t ArchiveReader::version() const { return impl_->version; }

const fs::path& ArchiveReader::file() const { return impl_->file; }

bool ArchiveReader::has(const std::string& key) {
  c10::IValue value;
  if (impl_->archive.try_read(key, value)) return true;
  torch::serialize::InputArchive nested;
  return impl_->archive.try_read(key, nested);
}

std::string ArchiveReader::text(const std::string& key) {
  const c10::IValue value = impl_->value(key);
  if (!value.isString()) impl_->fail_key(key, "is not a text");
  return value.toStringRef();
}

std::int64_t ArchiveReader::integer(const std::string& key) {
  const c10::IValue value = impl_->value(key);
  if (!value.isInt()) impl_->fail_key(key, "is not an integer");
  return value.toInt();
}

double ArchiveReader::number(const std::string& key) {
  const c10::IValue value = impl_->value(key);
  if (!value.isDouble()) impl_->fail_key(key, "is not a number");
  return value.toDouble();
}

at::Tensor ArchiveReader::tensor(const std::string& key) {
  torch::Tensor value;
  if (!impl_->archive.try_read(key, value)) impl_->fail_key(key, "is missing");
  return value;
}

void ArchiveReader::module(const std::string& key, torch::nn::Module& module) {
  torch::serialize::InputArchive nested;
  if (!impl_->archive.try_read(key, nested)) impl_->fail_key(key, "is missing");
  try {
    module.load(nested);
  } catch (const c10::Error& error) {
    fail_runtime(impl_->file.string() + ": the weights under " + key + " do not fit the model its description builds (" +
                 error.what_without_backtrace() + ")");
  }
}

void ArchiveReader::optimizer(const std::string& key, torch::optim::Optimizer& optimizer) {
  torch::serialize::InputArchive nested;
  if (!impl_->archive.try_read(key, nested)) impl_->fail_key(key, "is missing");
  try {
    optimizer.load(nested);
  } catch (const c10::Error& error) {
    fail_runtime(impl_->file.string() + ": the optimiser state does not fit this run's optimiser (" +
                 error.what_without_backtrace() + "); resume with the same config");
  }
}

ModelSpec ArchiveReader::model_spec() { return model_spec_from_yaml(text("model_spec"), impl_->file.string()); }

void ArchiveReader::inputs(BandNormalisation& normalisation, int& chip_size) {
  normalisation.bands = split_lines(text("bands"));
  const torch::Tensor mean = tensor("band_mean").to(torch::kFloat64).contiguous();
  const torch::Tensor std = tensor("band_std").to(torch::kFloat64).contiguous();
  if (mean.numel() != static_cast<std::int64_t>(normalisation.bands.size()) || std.numel() != mean.numel()) {
    impl_->fail_key("band_mean", "does not have one value per band");
  }
  normalisation.mean.assign(mean.data_ptr<double>(), mean.data_ptr<double>() + mean.numel());
  normalisation.std.assign(std.data_ptr<double>(), std.data_ptr<double>() + std.numel());
  chip_size = static_cast<int>(integer("chip_size"));
}

bool ArchiveReader::restore_random_state() {
  torch::Tensor state;
  if (!impl_->archive.try_read("random_state", state)) return false;
  at::Generator generator = at::detail::getDefaultCPUGenerator();
  std::lock_guard<std::mutex> lock(generator.mutex());
  generator.set_state(state);
  return true;
}

}  // namespace tinct
