#include "distributed/collective_failure.hpp"

#include <c10/util/Exception.h>

#include "util/error.hpp"

namespace tinct {
namespace {

const char* const kStartHint =
    "Every rank must be started with the same MASTER_ADDR, MASTER_PORT and WORLD_SIZE (under Slurm: "
    "through srun, one task per rank)";

std::string rank_label(const CollectiveContext& context) {
  return "rank " + std::to_string(context.place.rank) + " of " + std::to_string(context.place.world);
}

std::string address(const CollectiveContext& context) {
  return context.place.master_address + ":" + std::to_string(context.place.master_port);
}

// Who is lost: in a job of two the other rank; in a larger one the engine does not say.
std::string peer(const CollectiveContext& context) {
  if (context.place.world != 2) return "another rank";
  return context.place.rank == 0 ? "rank 1" : "rank 0 (which also hosts the rendezvous)";
}

}  // namespace

std::string engine_text(const std::exception& error) {
  const auto* c10_error = dynamic_cast<const c10::Error*>(&error);
  std::string text = c10_error ? c10_error->what_without_backtrace() : error.what();
  const std::size_t newline = text.find('\n');
  if (newline != std::string::npos) text.resize(newline);
  return text;
}

void fail_join(const CollectiveContext& context, const std::exception& error) {
  fail_runtime(rank_label(context) + " could not join the job at " + address(context) + " (" + engine_text(error) +
               "). " + kStartHint + "; if the port is in use, pick another MASTER_PORT");
}

void fail_incomplete_join(const CollectiveContext& context, int joined) {
  fail_runtime(rank_label(context) + ": only " + std::to_string(joined) + " of " + std::to_string(context.place.world) +
               " ranks joined the job at " + address(context) + " within " + std::to_string(context.timeout_seconds) +
               " s. " + kStartHint);
}

void fail_collective(const CollectiveContext& context, const std::string& what, const std::exception& error) {
  const std::string detail = engine_text(error);
  const bool silent = detail.find("Timed out") != std::string::npos || detail.find("timed out") != std::string::npos;
  const std::string lost =
      silent ? "no answer from " + peer(context) + " within " + std::to_string(context.timeout_seconds) +
                   " s during the " + what + ": it is stuck, stopped or cannot be reached"
             : "lost contact with " + peer(context) + " during the " + what + ": it stopped or cannot be reached";
  fail_runtime(rank_label(context) + ": " + lost + " (" + detail + "). If it printed an error, that is the cause; "
               "otherwise check its machine and log. The job stops here; --resume restarts from the last "
               "checkpoint, with the same or another number of processes");
}

}  // namespace tinct
