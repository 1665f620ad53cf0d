// Slurm's compact host-list syntax expanded into host names, in order:
// "node[03-05,09],login2" -> node03 node04 node05 node09 login2. A range keeps the width of
// its first number (node[08-10] -> node08 node09 node10; n[8-10] -> n8 n9 n10); several
// bracket groups in one name expand as their product (r[1-2]n[1-2] -> r1n1 r1n2 r2n1 r2n2).
#pragma once

#include <string>
#include <vector>

namespace tinct {

// `source` names where the list came from in errors (e.g. "SLURM_JOB_NODELIST").
std::vector<std::string> expand_host_list(const std::string& list, const std::string& source);

// The first host without expanding the rest (a job's rank 0 runs there).
std::string first_host(const std::string& list, const std::string& source);

}  // namespace tinct
