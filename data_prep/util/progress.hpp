// Progress of long work: on a terminal one line updated in place with done/total,
// rate and ETA; otherwise (CI, batch jobs) a log line every few seconds.
#pragma once

#include <chrono>
#include <cstdint>
#include <string>

namespace tinct {

class Progress {
 public:
  Progress(std::string label, std::int64_t total, std::string unit);
  ~Progress();
  // Sets the count of finished items; `detail` is shown after the rate (e.g. a loss).
  void update(std::int64_t done, const std::string& detail = "");
  void finish();

  // "12.0 chips/s, ETA 0:01:23": exposed for tests.
  static std::string format_duration(double seconds);

 private:
  std::string line(std::int64_t done, const std::string& detail) const;

  std::string label_;
  std::int64_t total_;
  std::string unit_;
  bool terminal_;
  bool finished_ = false;
  std::chrono::steady_clock::time_point start_;
  std::chrono::steady_clock::time_point last_shown_;
  std::int64_t done_ = 0;
};

}  // namespace tinct
