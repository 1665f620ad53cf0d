#include "training/run_lifecycle.hpp"

#include <c10/util/Exception.h>
#include <yaml-cpp/yaml.h>

#include <algorithm>
#include <fstream>
#include <iterator>
#include <vector>

#include "distributed/process_group.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
#include "util/sha256.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

const std::vector<std::string> kRateKeys{"train.lr", "train.min_lr", "train.warmup", "freeze.encoder_lr_scale"};

// c10's messages carry a C++ backtrace that helps nobody reading run.yaml.
std::string message_of(const std::exception& error) {
  if (const auto* c10_error = dynamic_cast<const c10::Error*>(&error)) return c10_error->what_without_backtrace();
  return error.what();
}

std::string file_text(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  return std::string(std::istreambuf_iterator<char>(in), {});
}

// What --resume compares the config with: the resolved config the run started with (or
// was last resumed with). The learning rate may change (to go on after a non-finite loss
// with a lower one); anything else would make the resumed run another run.
std::vector<ConfigChange> changes_on_resume(const RunStart& start, const fs::path& saved) {
  if (!start.resume || !fs::exists(saved)) return {};
  std::vector<ConfigChange> changes;
  try {
    changes = config_changes(file_text(saved), start.resolved_config);
  } catch (const YAML::Exception& error) {
    fail_runtime(saved.string() + " is not readable YAML (" + error.what() + "); the run's saved config is damaged: "
                 "start a new run (--force, or another output)");
  }
  std::vector<ConfigChange> refused;
  for (const ConfigChange& change : changes) {
    if (std::find(kRateKeys.begin(), kRateKeys.end(), change.key) == kRateKeys.end()) refused.push_back(change);
  }
  if (!refused.empty()) {
    fail_usage("--resume: the config differs from the one " + start.output.string() +
               " started with (config.resolved.yaml) in " + describe_changes(refused) +
               "; only the learning rate (" + rate_keys_text() + ") may change on --resume. Put the other keys "
               "back to resume, or start a new run (--force, or another output)");
  }
  return changes;
}

}  // namespace

std::string rate_keys_text() {
  std::string text;
  for (const std::string& key : kRateKeys) text += (text.empty() ? "" : ", ") + key;
  return text;
}

RunLifecycle::RunLifecycle(const RunStart& start) : start_(start) {
  const std::vector<ConfigChange> changes = changes_on_resume(start, file("config.resolved.yaml"));
  if (!is_writer()) {
    config_hash_ = sha256_hex(start.resolved_config);
    return;
  }
  folder_ = std::make_unique<RunFolder>(start.output, RunOpening{start.force, start.resume});
  if (!changes.empty()) {
    folder_->record_resume_changes(changes);
    log::info(start.command + ": resumed with " + describe_changes(changes) + " (recorded in run.yaml)");
  }
  config_hash_ = folder_->write_config(start.resolved_config);
  if (!start.precision.requested.empty()) {
    folder_->set_precision(start.precision.requested, start.precision.used, start.precision.why);
  }
  folder_->write_status(RunStatus::running, static_cast<std::int64_t>(start.seed));
}

RunFolder& RunLifecycle::folder() {
  if (!folder_) fail_runtime(start_.command + ": only rank 0 writes into the run folder (a bug, please report it)");
  return *folder_;
}

fs::path RunLifecycle::file(const std::string& name) const {
  return folder_ ? folder_->file(name) : start_.output / name;
}

const fs::path& RunLifecycle::path() const { return folder_ ? folder_->path() : start_.output; }

bool RunLifecycle::is_writer() const { return !start_.group || start_.group->is_writer(); }

bool RunLifecycle::stop_requested() const {
  if (!start_.group) return signals_.requested();
  return start_.group->any(signals_.requested(), "agreement on a stop request");
}

RunOutcome RunLifecycle::interrupted_after(const std::string& point) const {
  const std::string signal = signals_.signal_name().empty() ? "a signal to another rank" : signals_.signal_name();
  return {RunStatus::interrupted, "interrupted by " + signal + " after " + point +
                                      "; a checkpoint is written and --resume continues"};
}

void RunLifecycle::record(RunStatus status, const std::string& reason) {
  if (!folder_) return;
  folder_->write_status(status, static_cast<std::int64_t>(start_.seed), reason);
}

void RunLifecycle::execute(const std::function<RunOutcome()>& body) {
  RunOutcome outcome;
  try {
    outcome = body();
  } catch (const Error& error) {
    if (error.exit_code() != 2) {
      record_failure(error);
      throw;
    }
    // A usage error: the run never started, so it leaves nothing that blocks a re-run.
    try {
      if (folder_) folder_->undo_start();
    } catch (const std::exception&) {
    }
    throw;
  } catch (const std::exception& error) {
    record_failure(error);
    throw;
  }
  record(outcome.status, outcome.reason);
  if (folder_) folder_->finish_replacement();
  if (outcome.status == RunStatus::interrupted) {
    log::write_file_only(log::Level::warning, start_.command + ": " + outcome.reason);
    fail_runtime(start_.command + ": " + outcome.reason);
  }
  if (outcome.status == RunStatus::stopped) log::info(start_.command + ": " + outcome.reason);
}

void RunLifecycle::record_failure(const std::exception& error) {
  const std::string reason = message_of(error);
  log::write_file_only(log::Level::error, start_.command + " failed: " + reason);
  try {
    record(RunStatus::failed, reason);
  } catch (const std::exception&) {
    // The run's own error matters more than a status that could not be written (disk full).
  }
  if (folder_ && folder_->replacing()) {
    log::warning(start_.command + ": " + folder_->target().string() + " still holds the run it was to replace; "
                 "this attempt's files are in " + folder_->path().string());
  }
}

}  // namespace tinct
