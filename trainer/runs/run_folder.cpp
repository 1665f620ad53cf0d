#include "runs/run_folder.hpp"

#include <yaml-cpp/yaml.h>

#include <cerrno>
#include <chrono>
#include <cstdio>
#include <cstring>
#include <ctime>
#include <fstream>
#include <iterator>

#include "raster/gdal_session.hpp"
#include "runs/blas_probe.hpp"
#include "runs/checkpoint.hpp"
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

// A kill between the two renames of a replacement leaves the old run at NAME.previous/
// and no NAME/: put it back. A kill after them leaves both: the new run is in place.
fs::path RunFolder::created(const fs::path& path) {
  const fs::path aside = aside_folder_of(path);
  std::error_code ec;
  if (fs::is_directory(aside)) {
    if (!fs::exists(path)) {
      if (::rename(aside.c_str(), path.c_str()) != 0) {
        fail_runtime("cannot restore the run " + path.string() + " from " + aside.string() + ": " +
                     std::strerror(errno) + "; rename it back by hand");
      }
      log::info("restored " + path.string() + " from " + aside.string() + ", where an interrupted --force had moved it");
    } else {
      fs::remove_all(aside, ec);
      log::info("removed " + aside.string() + ": an interrupted --force had already put the new run in its place");
    }
  }
  fs::create_directories(path, ec);
  if (ec) fail_runtime("cannot create run folder " + path.string() + ": " + ec.message());
  return path;
}

namespace {

std::string read_file_text(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  return std::string(std::istreambuf_iterator<char>(in), {});
}

// What to do with a run that exists, by what its run.yaml and checkpoints say.
std::string existing_run_hint(const fs::path& path, const std::string& status) {
  const bool checkpointed = latest_checkpoint(path / "checkpoints").has_value();
  if (status == "done") return "pass --force to start it over (the finished run stays until the new one ends)";
  if (!checkpointed) {
    return "it has no checkpoint to continue from (it ended before its first one): pass --force to start it over";
  }
  return "pass --resume to continue it or --force to start it over";
}

}  // namespace

std::vector<RunFolder::ResumeChange> RunFolder::recorded_resume_changes(const std::string& run_yaml) {
  std::vector<ResumeChange> changes;
  try {
    const YAML::Node list = YAML::Load(run_yaml)["resumed_with_changes"];
    for (const YAML::Node& item : list) {
      changes.push_back({{item["key"].as<std::string>(), item["old"].as<std::string>(), item["new"].as<std::string>()},
                         item["resumed"].as<std::string>()});
    }
  } catch (const YAML::Exception&) {
    // A run.yaml edited by hand loses its history of changes, not the run.
  }
  return changes;
}

RunFolder::RunFolder(fs::path path, RunOpening opening)
    : target_(path),
      existed_(fs::exists(path)),
      path_(created(path)),
      lock_(path_, path_ / "lock", "wait for it to finish or choose another run name") {
  const std::string status = recorded_status(path_);
  if (!status.empty() && !opening.force && !opening.resume) {
    fail_usage("run " + path_.string() + " exists (status: " + status + "); " + existing_run_hint(path_, status));
  }
  previous_run_yaml_ = status.empty() ? "" : read_file_text(path_ / "run.yaml");
  if (opening.resume) {
    resume_changes_ = recorded_resume_changes(previous_run_yaml_);
    previous_config_ = read_file_text(path_ / "config.resolved.yaml");
  }
  if (opening.force && !opening.resume && status.empty()) clear_folder(path_, lock_.lock_file());
  log::set_file(path_ / "log.txt");
  remove_leftover_attempt();
  if (opening.force && !opening.resume && !status.empty()) {
    start_replacement();
    log::set_file(path_ / "log.txt");
  }
  if (lock_.stale_holder() != 0) {
    log::write_file_only(log::Level::info, "took over the lock left by process " +
                                               std::to_string(lock_.stale_holder()) + ", which has ended");
  }
  if (blas_in_use().is_reference()) {
    log::warning("LibTorch is using the reference BLAS (about 30x slower matrix products); "
                 "install libopenblas0-pthread (scripts/setup.sh does)");
  }
}

// NAME.partial/ of a --force that was killed (the old run at NAME/ is whole), and the
// temporaries of writes a kill cut short: no one else writes here while we hold the lock.
void RunFolder::remove_leftover_attempt() const {
  std::error_code ec;
  const fs::path partial = partial_folder_of(target_);
  if (fs::exists(partial)) {
    fs::remove_all(partial, ec);
    log::info("removed " + partial.string() + ", left by an earlier --force that did not finish");
  }
  for (const fs::path& folder : {path_, path_ / "checkpoints"}) {
    if (!fs::is_directory(folder)) continue;
    for (const auto& entry : fs::directory_iterator(folder, ec)) {
      const std::string name = entry.path().filename().string();
      if (name.size() > 1 && name[0] == '.' && name.find(".tmp.") != std::string::npos) {
        fs::remove(entry.path(), ec);
        log::info("removed " + entry.path().string() + ", a temporary file left by an interrupted write");
      }
    }
  }
}

void RunFolder::start_replacement() {
  const fs::path staging = partial_folder_of(target_);
  std::error_code ec;
  fs::create_directories(staging, ec);
  if (ec) fail_runtime("cannot create " + staging.string() + ": " + ec.message() + "; check that the folder is writable");
  staging_lock_ = std::make_unique<FolderLock>(staging, staging / "lock");
  path_ = staging;
}

void RunFolder::finish_replacement() {
  if (!staging_lock_) return;
  const fs::path aside = aside_folder_of(target_);
  log::close_file();
  if (::rename(target_.c_str(), aside.c_str()) != 0) {
    fail_runtime("cannot replace the run " + target_.string() + ": moving it aside to " + aside.string() + " failed (" +
                 std::strerror(errno) + "); the new run is in " + path_.string());
  }
  lock_.moved(aside, aside / "lock");
  if (::rename(path_.c_str(), target_.c_str()) != 0) {
    const int error = errno;
    ::rename(aside.c_str(), target_.c_str());
    lock_.moved(target_, target_ / "lock");
    fail_runtime("cannot rename " + path_.string() + " to " + target_.string() + ": " + std::strerror(error) +
                 "; the new run stays in " + path_.string());
  }
  staging_lock_->moved(target_, target_ / "lock");
  path_ = target_;
  log::set_file(path_ / "log.txt");
  lock_.release();
  std::error_code ec;
  fs::remove_all(aside, ec);
  if (ec) log::warning("cannot remove the replaced run " + aside.string() + ": " + ec.message() + "; remove it by hand");
}

void RunFolder::undo_start() {
  std::error_code ec;
  if (staging_lock_) {
    log::close_file();
    staging_lock_->release();
    fs::remove_all(path_, ec);
    path_ = target_;
    staging_lock_.reset();
    return;
  }
  if (!previous_run_yaml_.empty()) {
    // A resume with another learning rate that never began leaves the run as it was.
    if (!previous_config_.empty()) write_file_atomic(file("config.resolved.yaml"), previous_config_);
    write_file_atomic(file("run.yaml"), previous_run_yaml_);
    return;
  }
  log::close_file();
  for (const char* name : {"run.yaml", "config.resolved.yaml", "log.txt", "metrics.csv"}) fs::remove(file(name), ec);
  fs::remove(file("checkpoints"), ec);  // only when empty
  if (!existed_) {
    lock_.release();
    fs::remove(path_, ec);  // only when empty
  }
}

RunFolder::~RunFolder() { log::close_file(); }  // then lock_ removes the lock file

void RunFolder::record_resume_changes(const std::vector<ConfigChange>& changes) {
  const std::string now = utc_now();
  for (const ConfigChange& change : changes) resume_changes_.push_back({change, now});
}

std::string RunFolder::write_config(const std::string& resolved_yaml) {
  write_file_atomic(file("config.resolved.yaml"), resolved_yaml);
  config_hash_ = sha256_hex(resolved_yaml);
  return config_hash_;
}

void RunFolder::set_precision(const std::string& requested, const std::string& used, const std::string& why) {
  precision_requested_ = requested;
  precision_used_ = used;
  precision_why_ = why;
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
  if (!precision_requested_.empty()) {
    out << YAML::Key << "precision" << YAML::Value << YAML::BeginMap;
    out << YAML::Key << "requested" << YAML::Value << precision_requested_;
    out << YAML::Key << "used" << YAML::Value << precision_used_;
    out << YAML::Key << "why" << YAML::Value << precision_why_;
    out << YAML::EndMap;
  }
  out << YAML::Key << "blas" << YAML::Value << YAML::BeginMap;
  out << YAML::Key << "family" << YAML::Value << blas.family;
  out << YAML::Key << "library" << YAML::Value << blas.library;
  out << YAML::EndMap;
  out << YAML::Key << "seed" << YAML::Value << seed;
  out << YAML::Key << "config_hash" << YAML::Value << config_hash_;
  if (!resume_changes_.empty()) {
    out << YAML::Key << "resumed_with_changes" << YAML::Value << YAML::BeginSeq;
    for (const ResumeChange& r : resume_changes_) {
      out << YAML::Flow << YAML::BeginMap << YAML::Key << "key" << YAML::Value << r.change.key;
      out << YAML::Key << "old" << YAML::Value << r.change.before << YAML::Key << "new" << YAML::Value << r.change.after;
      out << YAML::Key << "resumed" << YAML::Value << r.resumed << YAML::EndMap;
    }
    out << YAML::EndSeq;
  }
  for (const auto& entry : records_) out << YAML::Key << entry.first << YAML::Value << entry.second;
  out << YAML::EndMap;
  write_file_atomic(file("run.yaml"), std::string(out.c_str()) + "\n");
}

}  // namespace tinct
