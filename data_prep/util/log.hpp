// Messages to the user on stderr and, while a run is open, to its log.txt.
// The log is process-wide on purpose: GDAL's error handler and worker threads
// must reach it without a handle being threaded through every call.
#pragma once

#include <filesystem>
#include <string>

namespace tinct::log {

enum class Level { debug, info, warning, error };

void set_quiet(bool quiet);              // only warnings and errors on stderr
void set_file(const std::filesystem::path& file);  // also append every line here
void close_file();

void write(Level level, const std::string& message);
inline void info(const std::string& message) { write(Level::info, message); }
inline void warning(const std::string& message) { write(Level::warning, message); }
inline void error(const std::string& message) { write(Level::error, message); }
inline void debug(const std::string& message) { write(Level::debug, message); }
// Also keep every line (as log.txt has it) in memory from now on, until taken: for logs
// written inside an output that is itself written atomically (a label store's log.txt).
void start_capture();
std::string take_capture();  // the lines kept since start_capture(); stops keeping
// Only into the run's log file (e.g. a failure that main reports on stderr anyway).
void write_file_only(Level level, const std::string& message);

// Whether stderr is an interactive terminal (progress updates one line in place).
bool stderr_is_terminal();
// Writes raw text to stderr, under the log's lock (progress lines).
void write_raw(const std::string& text);
bool quiet();

}  // namespace tinct::log
