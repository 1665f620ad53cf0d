// split.csv, written into every finetune run: each labelled chip of the run's stores
// with its split unit, the fold its unit was dealt to, and its role (train, validation,
// test, unused, with the reason for unused chips). `tinct assess` reads it to score only
// chips the run never learnt from. Chips are matched across stores by scene, source id
// and map position, so a copy or subset of the run's store is recognised too.
#pragma once

#include <cstdint>
#include <filesystem>
#include <map>
#include <string>
#include <vector>

namespace tinct {

struct SplitRow {
  std::string store;  // the store's folder as the run's config named it
  std::int64_t index = 0;
  std::string scene, source_id, label, unit;
  double x = 0, y = 0;
  int fold = 0;
  std::string role;    // train | validation | test | unused
  std::string reason;  // unused: near_test | over_budget | near_validation
};

std::string split_table_csv(const std::vector<SplitRow>& rows);
// Fails (runtime) naming the file and line when it is not a split.csv.
std::vector<SplitRow> read_split_table(const std::filesystem::path& file);

// What identifies a chip across stores: scene, source id and exact map position.
std::string chip_identity(const std::string& scene, const std::string& source_id, double x, double y);
// chip_identity -> role, for every row of a run's split.csv.
std::map<std::string, std::string> roles_by_identity(const std::vector<SplitRow>& rows);

}  // namespace tinct
