// Pins each of LibTorch's OpenMP intra-op threads to a core of its own, so the
// scheduler does not move a training step's threads between cores (or stack two on
// one) mid-step. Only when there is one thread for every CPU the process may use (the
// default; with fewer, other jobs may run beside it and would collide on the same first
// CPUs), physical cores before their hyperthread siblings; one process's only (pretrain
// skips it for several ranks). TINCT_PIN_THREADS=0 in the environment turns it off.
// Plain C++ with OpenMP: no LibTorch header.
#pragma once

#include <string>

namespace tinct {

// Call on the thread that runs training, after configure_threads(); threads it starts
// afterwards inherit its one-core mask, so start helpers that should roam (the batch
// loader) before. Returns what was done, for the run's log.
std::string pin_compute_threads();

}  // namespace tinct
