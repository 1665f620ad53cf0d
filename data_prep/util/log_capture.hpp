// Keeping the log's lines in memory as well, for a log written inside an output that is
// itself written atomically (a label store's log.txt). Implemented in log.cpp.
#pragma once

#include <string>

namespace tinct::log {

// From now on, also keep every line (as a run's log.txt has it) until taken.
void start_capture();
// The lines kept since start_capture(); stops keeping.
std::string take_capture();

}  // namespace tinct::log
