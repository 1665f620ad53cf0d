// The one error type tinct throws for problems a user can act on.
// A usage error (bad flag, bad config value) exits 2; a runtime error (unreadable
// raster, failed write) exits 1. Messages say what, where and what to do.
#pragma once

#include <stdexcept>
#include <string>

namespace tinct {

enum class ErrorKind { usage, runtime };

class Error : public std::runtime_error {
 public:
  Error(ErrorKind kind, const std::string& message)
      : std::runtime_error(message), kind_(kind) {}
  ErrorKind kind() const { return kind_; }
  int exit_code() const { return kind_ == ErrorKind::usage ? 2 : 1; }

 private:
  ErrorKind kind_;
};

[[noreturn]] inline void fail_usage(const std::string& message) {
  throw Error(ErrorKind::usage, message);
}

[[noreturn]] inline void fail_runtime(const std::string& message) {
  throw Error(ErrorKind::runtime, message);
}

}  // namespace tinct
