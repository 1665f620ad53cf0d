#include "util/progress.hpp"

#include <cstdio>

#include "util/log.hpp"

namespace tinct {
namespace {

constexpr double kTerminalInterval = 0.2;  // seconds between in-place updates
constexpr double kLogInterval = 5.0;       // seconds between log lines

double seconds_between(std::chrono::steady_clock::time_point a,
                       std::chrono::steady_clock::time_point b) {
  return std::chrono::duration<double>(b - a).count();
}

}  // namespace

Progress::Progress(std::string label, std::int64_t total, std::string unit)
    : label_(std::move(label)),
      total_(total),
      unit_(std::move(unit)),
      terminal_(log::stderr_is_terminal() && !log::quiet()),
      start_(std::chrono::steady_clock::now()),
      last_shown_(start_) {}

Progress::~Progress() { finish(); }

std::string Progress::format_duration(double seconds) {
  if (seconds < 0 || seconds > 1e7) return "?";
  const long total = static_cast<long>(seconds + 0.5);
  char text[32];
  std::snprintf(text, sizeof(text), "%ld:%02ld:%02ld", total / 3600, (total / 60) % 60, total % 60);
  return text;
}

std::string Progress::line(std::int64_t done, const std::string& detail) const {
  const double elapsed = seconds_between(start_, std::chrono::steady_clock::now());
  const double rate = elapsed > 0 ? done / elapsed : 0.0;
  const double eta = rate > 0 ? (total_ - done) / rate : -1.0;
  char text[256];
  std::snprintf(text, sizeof(text), "%s: %lld/%lld %s, %.1f %s/s, ETA %s", label_.c_str(),
                static_cast<long long>(done), static_cast<long long>(total_), unit_.c_str(), rate,
                unit_.c_str(), format_duration(eta).c_str());
  std::string result = text;
  if (!detail.empty()) result += ", " + detail;
  return result;
}

void Progress::update(std::int64_t done, const std::string& detail) {
  done_ = done;
  const auto now = std::chrono::steady_clock::now();
  const double since = seconds_between(last_shown_, now);
  if (terminal_ && since >= kTerminalInterval) {
    log::write_raw("\r\033[K" + line(done, detail));
    last_shown_ = now;
  } else if (!terminal_ && since >= kLogInterval) {
    log::info(line(done, detail));
    last_shown_ = now;
  }
}

void Progress::finish() {
  if (finished_) return;
  finished_ = true;
  if (terminal_) log::write_raw("\r\033[K");
  const double elapsed = seconds_between(start_, std::chrono::steady_clock::now());
  log::info(label_ + ": " + std::to_string(done_) + " " + unit_ + " in " +
            format_duration(elapsed));
}

}  // namespace tinct
