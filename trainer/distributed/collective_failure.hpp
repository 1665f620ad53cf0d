// What a rank says when the job cannot go on: not every rank joined, or a peer stopped or
// went silent during a collective. The engine's own text is kept as a detail; the message
// says which rank is speaking, which peer is lost where that can be told (the other one,
// in a job of two), and what to do next.
#pragma once

#include <exception>
#include <string>

#include "distributed/rendezvous.hpp"

namespace tinct {

struct CollectiveContext {
  Rendezvous place;
  int timeout_seconds = 0;
};

// The engine's message without c10's backtrace, on one line.
std::string engine_text(const std::exception& error);

// The store or the process group could not be set up (rank 0 unreachable, port in use).
[[noreturn]] void fail_join(const CollectiveContext& context, const std::exception& error);

// Only `joined` ranks counted themselves in within the timeout.
[[noreturn]] void fail_incomplete_join(const CollectiveContext& context, int joined);

// A collective (`what`: "gradient all-reduce", ...) failed: a peer closed its connection or
// did not answer within the timeout.
[[noreturn]] void fail_collective(const CollectiveContext& context, const std::string& what,
                                  const std::exception& error);

}  // namespace tinct
