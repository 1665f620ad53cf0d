// LibTorch process settings kept out of headers: intra-op threads (Debian's build
// runs one unless told) and the library's version. Call configure_threads once
// before any training work.
#pragma once

#include <string>

namespace tinct {

// `requested` <= 0 means all cores. Returns the number of threads in force.
int configure_threads(int requested);
int threads_in_use();
std::string libtorch_version();

}  // namespace tinct
