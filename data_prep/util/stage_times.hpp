// Where a command's time goes: with TINCT_STAGE_TIMES set in the environment, each
// stage_done(name) prints on stderr the wall-clock and process CPU seconds since the
// previous mark (and the calling thread's own CPU seconds: the rest ran on helper
// threads). Off, it costs one test of a flag. Used by scripts/bench/pair_bench.py.
#pragma once

namespace tinct {

void stage_done(const char* name);

}  // namespace tinct
