#include "training/run_lifecycle.hpp"

#include <c10/util/Exception.h>

#include "util/error.hpp"
#include "util/log.hpp"
#include "util/sha256.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

// c10's messages carry a C++ backtrace that helps nobody reading run.yaml.
std::string message_of(const std::exception& error) {
  if (const auto* c10_error = dynamic_cast<const c10::Error*>(&error)) return c10_error->what_without_backtrace();
  return error.what();
}

}  // namespace

RunLifecycle::RunLifecycle(const RunStart& start)
    : start_(start), folder_(start.output, {start.force, start.resume}) {
  const fs::path saved = folder_.file("config.resolved.yaml");
  if (start.resume && fs::exists(saved) && sha256_file(saved) != sha256_hex(start.resolved_config)) {
    fail_usage("--resume: the config differs from the one " + folder_.path().string() +
               " started with (config.resolved.yaml); resume with the same config, or start a new run");
  }
  config_hash_ = folder_.write_config(start.resolved_config);
  folder_.write_status(RunStatus::running, static_cast<std::int64_t>(start.seed));
}

RunOutcome RunLifecycle::interrupted_after(const std::string& point) const {
  return {RunStatus::interrupted, "interrupted by " + signals_.signal_name() + " after " + point +
                                      "; a checkpoint is written and --resume continues"};
}

void RunLifecycle::record(RunStatus status, const std::string& reason) {
  folder_.write_status(status, static_cast<std::int64_t>(start_.seed), reason);
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
      folder_.undo_start();
    } catch (const std::exception&) {
    }
    throw;
  } catch (const std::exception& error) {
    record_failure(error);
    throw;
  }
  record(outcome.status, outcome.reason);
  folder_.finish_replacement();
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
  if (folder_.replacing()) {
    log::warning(start_.command + ": " + folder_.target().string() + " still holds the run it was to replace; "
                 "this attempt's files are in " + folder_.path().string());
  }
}

}  // namespace tinct
