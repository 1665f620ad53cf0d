#include "raster/processing_baseline.hpp"

#include <cstdlib>

#include "util/error.hpp"
#include "util/log.hpp"
#include "util/number_text.hpp"

namespace tinct {
namespace {

std::optional<double> number_in(const std::string& text) {
  char* end = nullptr;
  const double value = std::strtod(text.c_str(), &end);
  if (text.empty() || end == text.c_str()) return std::nullopt;
  return value;
}

std::optional<BaselineEvidence> from_offset(const std::string& key, const std::string& value,
                                            const Raster& raster, const SensorProfile& profile) {
  if (key.rfind("BOA_ADD_OFFSET", 0) != 0) return std::nullopt;
  const auto offset = number_in(value);
  if (!offset) return std::nullopt;
  const std::string item = key + "=" + value;
  if (*offset == 0) return BaselineEvidence{false, item};
  if (*offset == profile.baseline_04_offset) return BaselineEvidence{true, item};
  fail_usage(raster.path().string() + ": metadata " + item + " is neither 0 nor the profile " + profile.name +
             "'s baseline_04_offset " + exact_text(profile.baseline_04_offset) +
             "; set sensor: {profile: " + profile.name + ", baseline_04_offset: ...} to the product's offset");
}

}  // namespace

BaselineEvidence baseline_from_metadata(const Raster& raster, int band, const SensorProfile& profile) {
  for (int level : {band, 0}) {
    for (const auto& [key, value] : raster.metadata_items(level)) {
      if (auto evidence = from_offset(key, value, raster, profile)) return *evidence;
    }
  }
  const std::string baseline = raster.metadata("PROCESSING_BASELINE");
  if (const auto number = number_in(baseline)) {
    return {*number >= 4.0, "PROCESSING_BASELINE=" + baseline};
  }
  return {};
}

void settle_processing_baseline(SensorProfile& profile, const std::vector<SceneSpec>& scenes,
                                const std::vector<ConfigNode>& items) {
  if (profile.baseline_04_offset == 0) return;
  std::optional<bool> found;
  std::string first_scene, first_item;
  for (std::size_t i = 0; i < scenes.size(); ++i) {
    const SceneBand& band = scenes[i].bands.front();
    const BaselineEvidence evidence = baseline_from_metadata(Raster::open(band.file), band.index, profile);
    if (!evidence.baseline_04) continue;
    const auto says = [](bool b) { return std::string(b ? "baseline 04.00 or later" : "a baseline before 04.00"); };
    if (profile.baseline_04_given && *evidence.baseline_04 != profile.baseline_04) {
      items[i].fail("", "scene " + scenes[i].id + ": its metadata (" + evidence.item + ") says " +
                            says(*evidence.baseline_04) + ", but the config sets baseline_04: " +
                            (profile.baseline_04 ? "true" : "false") +
                            "; remove baseline_04 from the sensor to take it from the metadata");
    }
    if (found && *found != *evidence.baseline_04) {
      items[i].fail("", "scene " + scenes[i].id + " (" + evidence.item + ") is of " + says(*evidence.baseline_04) +
                            ", scene " + first_scene + " (" + first_item + ") of " + says(*found) +
                            "; their values are offset differently, so pair or label them into separate stores");
    }
    if (!found) {
      found = evidence.baseline_04;
      first_scene = scenes[i].id;
      first_item = evidence.item;
    }
  }
  if (found) {
    profile.baseline_04 = *found;
    log::info("sensor " + profile.name + ": processing baseline from the scenes' metadata (" + first_item +
              "): " + (*found ? "offset " + exact_text(profile.baseline_04_offset) + " applied" : "no offset"));
  } else if (!profile.baseline_04_given) {
    log::info("sensor " + profile.name + ": the scenes' metadata do not give the processing baseline; taking "
              "baseline_04: " + (profile.baseline_04 ? "true" : "false") +
              " (set it for products of baseline 04.00 or later, processed from 25 January 2022)");
  }
}

}  // namespace tinct
