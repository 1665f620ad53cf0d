#include "runs/classifier_artifact.hpp"

#include "util/atomic_file.hpp"
#include "util/text_lines.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

constexpr std::int64_t kVersion = 1;

std::string text_of(torch::serialize::InputArchive& archive, const std::string& key) {
  c10::IValue value;
  archive.read(key, value);
  return value.toStringRef();
}

}  // namespace

void save_classifier(const fs::path& file, const ClassifierModel& model, const ClassifierArtifact& artifact) {
  torch::serialize::OutputArchive archive, weights;
  model->save(weights);
  archive.write("format_version", c10::IValue(kVersion));
  archive.write("weights", weights);
  archive.write("model_spec", c10::IValue(model_spec_yaml(artifact.spec.model)));
  archive.write("classes", c10::IValue(join_lines(artifact.classes)));
  archive.write("dropout", c10::IValue(artifact.spec.dropout));
  archive.write("hidden", c10::IValue(static_cast<std::int64_t>(artifact.spec.hidden)));
  archive.write("bands", c10::IValue(join_lines(artifact.normalisation.bands)));
  archive.write("band_mean", torch::tensor(artifact.normalisation.mean, torch::kFloat64));
  archive.write("band_std", torch::tensor(artifact.normalisation.std, torch::kFloat64));
  archive.write("chip_size", c10::IValue(static_cast<std::int64_t>(artifact.chip_size)));
  const fs::path temporary = temporary_sibling(file);
  archive.save_to(temporary.string());
  commit_file(temporary, file);
}

ClassifierModel load_classifier(const fs::path& file, ClassifierArtifact& artifact) {
  if (!fs::exists(file)) fail_usage(file.string() + " not found; give the folder of a finished finetune run");
  torch::serialize::InputArchive archive;
  try {
    archive.load_from(file.string());
  } catch (const c10::Error& e) {
    fail_runtime(file.string() + ": not a readable tinct model (" + e.what_without_backtrace() + ")");
  }
  c10::IValue value;
  archive.read("format_version", value);
  if (value.toInt() > kVersion) fail_runtime(file.string() + ": written by a newer tinct; upgrade to read it");
  artifact.spec.model = model_spec_from_yaml(text_of(archive, "model_spec"), file.string());
  artifact.classes = split_lines(text_of(archive, "classes"));
  artifact.spec.classes = static_cast<int>(artifact.classes.size());
  archive.read("dropout", value);
  artifact.spec.dropout = value.toDouble();
  archive.read("hidden", value);
  artifact.spec.hidden = static_cast<int>(value.toInt());
  artifact.normalisation.bands = split_lines(text_of(archive, "bands"));
  torch::Tensor mean, std;
  archive.read("band_mean", mean);
  archive.read("band_std", std);
  artifact.normalisation.mean.assign(mean.data_ptr<double>(), mean.data_ptr<double>() + mean.numel());
  artifact.normalisation.std.assign(std.data_ptr<double>(), std.data_ptr<double>() + std.numel());
  archive.read("chip_size", value);
  artifact.chip_size = static_cast<int>(value.toInt());
  ClassifierModel model(artifact.spec);
  torch::serialize::InputArchive weights;
  archive.read("weights", weights);
  model->load(weights);
  return model;
}

}  // namespace tinct
