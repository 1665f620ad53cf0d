#include "runs/run_folder.hpp"

#include <yaml-cpp/yaml.h>

#include <chrono>
#include <ctime>

#include "raster/gdal_session.hpp"
#include "runs/blas_probe.hpp"
#include "runs/torch_runtime.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
#include "util/sha256.hpp"
#include "util/version_info.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::string utc_now() {
  const std::time_t now = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm utc{};
  gmtime_r(&now, &utc);
  char text[32];
  std::strftime(text, sizeof(text), "%Y-%m-%dT%H:%M:%SZ", &utc);
  return text;
}

void clear_folder(const fs::path& folder, const fs::path& keep) {
  for (const auto& entry : fs::directory_iterator(folder)) {
    if (entry.path() != keep) fs::remove_all(entry.path());
  }
}

}  // namespace

std::string to_string(RunStatus status) {
  switch (status) {
    case RunStatus::running: return "running";
    case RunStatus::done: return "done";
    case RunStatus::stopped: return "stopped";
    case RunStatus::interrupted: return "interrupted";
    case RunStatus::failed: return "failed";
  }
  return "unknown";
}

std::string RunFolder::recorded_status(const fs::path& run_path) {
  const fs::path run_yaml = run_path / "run.yaml";
  if (!fs::exists(run_yaml)) return "";
  try {
    const YAML::Node node = YAML::LoadFile(run_yaml.string());
    return node["status"] ? node["status"].as<std::string>() : "unknown";
  } catch (const YAML::Exception&) {
    return "unknown";
  }
}

fs::path RunFolder::created(const fs::path& path) {
  std::error_code ec;
  fs::create_directories(path, ec);
  if (ec) fail_runtime("cannot create run folder " + path.string() + ": " + ec.message());
  return path;
}

RunFolder::RunFolder(fs::path path, RunOpening opening)
    : path_(created(path)), lock_(path_, path_ / "lock", "wait for it to finish or choose another run name") {
  const std::string status = recorded_status(path_);
  if (!status.empty() && !opening.force && !opening.resume) {
    fail_usage("run " + path_.string() + " exists (status: " + status +
               "); pass --resume to continue it or --force to start it over");
  }
  if (opening.force && !opening.resume) clear_folder(path_, lock_.lock_file());
  log::set_file(path_ / "log.txt");
  if (lock_.stale_holder() != 0) {
    log::write_file_only(log::Level::info, "took over the lock left by process " +
                                               std::to_string(lock_.stale_holder()) + ", which has ended");
  }
  if (blas_in_use().is_reference()) {
    log::warning("LibTorch is using the reference BLAS (about 30x slower matrix products); "
                 "install libopenblas0-pthread (scripts/setup.sh does)");
  }
}

RunFolder::~RunFolder() { log::close_file(); }  // then lock_ removes the lock file

std::string RunFolder::write_config(const std::string& resolved_yaml) {
  write_file_atomic(file("config.resolved.yaml"), resolved_yaml);
  config_hash_ = sha256_hex(resolved_yaml);
  return config_hash_;
}

void RunFolder::write_status(RunStatus status, std::int64_t seed, const std::string& reason) {
  if (started_.empty()) started_ = utc_now();
  const BlasInUse blas = blas_in_use();
  YAML::Emitter out;
  out << YAML::BeginMap;
  out << YAML::Key << "status" << YAML::Value << to_string(status);
  if (!reason.empty()) out << YAML::Key << "reason" << YAML::Value << reason;
  out << YAML::Key << "started" << YAML::Value << started_;
  out << YAML::Key << "ended" << YAML::Value << (status == RunStatus::running ? "" : utc_now());
  out << YAML::Key << "versions" << YAML::Value << YAML::BeginMap;
  out << YAML::Key << "tinct" << YAML::Value << tinct_version();
  out << YAML::Key << "libtorch" << YAML::Value << libtorch_version();
  out << YAML::Key << "gdal" << YAML::Value << gdal_version();
  out << YAML::Key << "opencv" << YAML::Value << opencv_version();
  out << YAML::EndMap;
  out << YAML::Key << "threads" << YAML::Value << threads_in_use();
  out << YAML::Key << "blas" << YAML::Value << YAML::BeginMap;
  out << YAML::Key << "family" << YAML::Value << blas.family;
  out << YAML::Key << "library" << YAML::Value << blas.library;
  out << YAML::EndMap;
  out << YAML::Key << "seed" << YAML::Value << seed;
  out << YAML::Key << "config_hash" << YAML::Value << config_hash_;
  out << YAML::EndMap;
  write_file_atomic(file("run.yaml"), std::string(out.c_str()) + "\n");
}

}  // namespace tinct
