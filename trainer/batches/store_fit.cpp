#include "batches/store_fit.hpp"

#include "chips/store_manifest.hpp"
#include "runs/encoder_artifact.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::string joined(const std::vector<std::string>& names) {
  std::string text;
  for (const auto& name : names) text += (text.empty() ? "" : ", ") + name;
  return "[" + text + "]";
}

std::vector<std::string> band_names(const StoreManifest& manifest) {
  std::vector<std::string> names;
  for (const auto& band : manifest.bands) names.push_back(band.name);
  return names;
}

struct ListedStore {
  std::string where;  // "pretrain.yaml: stores[1] (line 4)"
  StoreManifest manifest;
};

std::vector<ListedStore> listed_stores(const ConfigNode& root, const std::vector<fs::path>& stores) {
  const std::vector<ConfigNode> items = root.items("stores");  // the same list read_store_list read
  std::vector<ListedStore> listed;
  for (std::size_t i = 0; i < stores.size(); ++i) {
    const std::string where = i < items.size() ? items[i].where("") : root.where("stores");
    if (i < items.size()) {
      YAML::Node resolved = items[i].resolved();
      resolved = stores[i].string();  // items() recorded the text again: keep read_store_list's absolute path
    }
    listed.push_back({where, read_manifest(stores[i] / "manifest.yaml")});
  }
  return listed;
}

std::string size_advice(int size, int multiple) {
  const int below = size / multiple * multiple;
  return below > 0 ? std::to_string(below) + " or " + std::to_string(below + multiple) : std::to_string(multiple);
}

}  // namespace

std::vector<std::string> store_conflicts(const ConfigNode& root, const std::vector<fs::path>& stores,
                                         const EncoderSpec& encoder) {
  std::vector<std::string> conflicts;
  const std::vector<ListedStore> listed = listed_stores(root, stores);
  const int multiple = chip_size_multiple(encoder);
  for (std::size_t i = 0; i < listed.size(); ++i) {
    const StoreManifest& m = listed[i].manifest;
    if (m.chip_size % multiple != 0) {
      conflicts.push_back(listed[i].where + ": chips of " + std::to_string(m.chip_size) + " px, but the " +
                          encoder.name + " encoder needs chip sides that are multiples of " +
                          std::to_string(multiple) + "; make the store with chips.size " +
                          size_advice(m.chip_size, multiple) + ", or choose another model.encoder");
    }
    if (i == 0) continue;
    const StoreManifest& first = listed.front().manifest;
    if (m.chip_size != first.chip_size) {
      conflicts.push_back(listed[i].where + ": chips of " + std::to_string(m.chip_size) + " px, but stores[0] has " +
                          std::to_string(first.chip_size) + " px; make all stores with the same chips.size");
    }
    if (band_names(m) != band_names(first)) {
      conflicts.push_back(listed[i].where + ": bands " + joined(band_names(m)) + ", but stores[0] has " +
                          joined(band_names(first)) + "; make all stores with the same inputs, in the same order");
    }
  }
  return conflicts;
}

std::vector<std::string> store_conflicts_with_run(const ConfigNode& root, const std::vector<fs::path>& stores,
                                                  const fs::path& run, const ConfigNode& run_key,
                                                  const std::string& key) {
  const EncoderArtifact artifact = read_encoder_artifact(run / "encoder.pt");
  std::vector<std::string> conflicts = store_conflicts(root, stores, artifact.model.encoder);
  // "init.run (line 4)" without the file name the store's own place already gives.
  std::string named_at = run_key.where(key).substr(run_key.file_name().size() + 2);
  const auto line = named_at.find(" (line ");
  if (line != std::string::npos) {
    named_at = named_at.substr(0, line) + ", line " + named_at.substr(line + 7, named_at.size() - line - 8);
  }
  const std::string the_run = "the pretrain run " + run.string() + " (" + named_at + ")";
  const std::vector<std::string>& run_bands = artifact.normalisation.bands;
  for (const ListedStore& store : listed_stores(root, stores)) {
    if (store.manifest.chip_size != artifact.chip_size) {
      conflicts.push_back(store.where + ": chips of " + std::to_string(store.manifest.chip_size) + " px, but " +
                          the_run + ": the encoder was trained on " + std::to_string(artifact.chip_size) +
                          " px chips; make the label store with chips.size: " + std::to_string(artifact.chip_size));
    }
    if (band_names(store.manifest) != run_bands) {
      conflicts.push_back(store.where + ": bands " + joined(band_names(store.manifest)) + ", but " + the_run +
                          ": the encoder was trained on " + joined(run_bands) + "; make the label store with inputs: " +
                          joined(run_bands) + ", in this order");
    }
  }
  return conflicts;
}

void require_no_conflicts(const std::vector<std::string>& conflicts) {
  if (conflicts.empty()) return;
  if (conflicts.size() == 1) fail_usage(conflicts.front());
  std::string text = "the stores do not suit the model (" + std::to_string(conflicts.size()) + " conflicts):";
  for (const auto& conflict : conflicts) text += "\n  " + conflict;
  fail_usage(text);
}

}  // namespace tinct
