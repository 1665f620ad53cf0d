#include "runs/classifier_artifact.hpp"

#include "runs/model_archive.hpp"
#include "util/text_lines.hpp"

namespace fs = std::filesystem;

namespace tinct {

void save_classifier(const fs::path& file, const ClassifierModel& model, const ClassifierArtifact& artifact) {
  ArchiveWriter archive(ArchiveKind::classifier);
  archive.module("weights", *model);
  archive.description(artifact.spec.model, artifact.normalisation, artifact.chip_size);
  archive.text("classes", join_lines(artifact.classes));
  archive.number("dropout", artifact.spec.dropout);
  archive.integer("hidden", artifact.spec.hidden);
  archive.save(file);
}

ClassifierModel load_classifier(const fs::path& file, ClassifierArtifact& artifact) {
  ArchiveReader archive(file, ArchiveKind::classifier);
  artifact.spec.model = archive.model_spec();
  archive.inputs(artifact.normalisation, artifact.chip_size);
  artifact.classes = split_lines(archive.text("classes"));
  artifact.spec.classes = static_cast<int>(artifact.classes.size());
  artifact.spec.dropout = archive.number("dropout");
  artifact.spec.hidden = static_cast<int>(archive.integer("hidden"));
  ClassifierModel model(artifact.spec);
  archive.module("weights", *model);
  return model;
}

}  // namespace tinct
