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
  archive.text("head_pool", to_string(artifact.spec.head.pool));
  archive.text("head_kind", to_string(artifact.spec.head.kind));
  archive.integer("head_k", artifact.spec.head.k);
  archive.number("head_l2", artifact.spec.head.l2);
  archive.integer("head_colour_channels", artifact.spec.head.colour_channels);
  archive.integer("head_input_bands", artifact.spec.head.input_bands ? 1 : 0);
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
  if (archive.has("head_pool")) {  // model.pt files before head pools have the global trained head
    HeadSpec& head = artifact.spec.head;
    head.pool = head_pool_from_name(archive.text("head_pool"), file.string());
    head.kind = head_kind_from_name(archive.text("head_kind"), file.string());
    head.k = static_cast<int>(archive.integer("head_k"));
    head.l2 = archive.number("head_l2");
    head.colour_channels = static_cast<int>(archive.integer("head_colour_channels"));
    // model.pt files before input_bands read the colour alone
    head.input_bands = archive.has("head_input_bands") && archive.integer("head_input_bands") != 0;
  }
  ClassifierModel model(artifact.spec);
  archive.module("weights", *model);
  return model;
}

}  // namespace tinct
