#include "util/log.hpp"
#include "util/log_capture.hpp"

#include <unistd.h>

#include <chrono>
#include <cstdio>
#include <ctime>
#include <fstream>
#include <iostream>
#include <mutex>

namespace tinct::log {
namespace {

struct Sink {
  std::mutex mutex;
  bool quiet = false;
  std::ofstream file;
  bool capturing = false;
  std::string captured;
};

Sink& sink() {
  static Sink instance;
  return instance;
}

const char* prefix(Level level) {
  switch (level) {
    case Level::debug: return "debug: ";
    case Level::info: return "";
    case Level::warning: return "warning: ";
    case Level::error: return "error: ";
  }
  return "";
}

std::string timestamp() {
  const std::time_t now = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm utc{};
  gmtime_r(&now, &utc);
  char text[32];
  std::strftime(text, sizeof(text), "%Y-%m-%dT%H:%M:%SZ", &utc);
  return text;
}

}  // namespace

void set_quiet(bool quiet) { sink().quiet = quiet; }
bool quiet() { return sink().quiet; }

void set_file(const std::filesystem::path& file) {
  std::lock_guard<std::mutex> lock(sink().mutex);
  sink().file.close();
  sink().file.open(file, std::ios::app);
}

void close_file() {
  std::lock_guard<std::mutex> lock(sink().mutex);
  sink().file.close();
}

void write(Level level, const std::string& message) {
  Sink& s = sink();
  std::lock_guard<std::mutex> lock(s.mutex);
  const bool show = level == Level::warning || level == Level::error ||
                    (level == Level::info && !s.quiet);
  if (show) std::cerr << prefix(level) << message << std::endl;
  if (s.file.is_open()) s.file << timestamp() << ' ' << prefix(level) << message << std::endl;
  if (s.capturing) s.captured += timestamp() + ' ' + prefix(level) + message + '\n';
}

void write_file_only(Level level, const std::string& message) {
  Sink& s = sink();
  std::lock_guard<std::mutex> lock(s.mutex);
  if (s.file.is_open()) s.file << timestamp() << ' ' << prefix(level) << message << std::endl;
  if (s.capturing) s.captured += timestamp() + ' ' + prefix(level) + message + '\n';
}

void start_capture() {
  std::lock_guard<std::mutex> lock(sink().mutex);
  sink().capturing = true;
  sink().captured.clear();
}

std::string take_capture() {
  std::lock_guard<std::mutex> lock(sink().mutex);
  sink().capturing = false;
  return std::move(sink().captured);
}

bool stderr_is_terminal() { return ::isatty(STDERR_FILENO) == 1; }

void write_raw(const std::string& text) {
  std::lock_guard<std::mutex> lock(sink().mutex);
  std::cerr << text << std::flush;
}

}  // namespace tinct::log
