#include "finetune/default_head.hpp"

#include "runs/encoder_artifact.hpp"
#include "util/config_node.hpp"

namespace tinct {
namespace {

HeadSpec colour_bands_probe() {
  HeadSpec spec;
  spec.pool = HeadPool::colour;
  spec.kind = HeadKind::linear_probe;
  spec.input_bands = true;
  return spec;
}

HeadChoice global_trained(std::string reason) { return {HeadSpec{}, true, std::move(reason)}; }

// What the pretrain run's encoder.pt allows: the colour probe, or why not.
HeadChoice from_pretrain_run(const std::filesystem::path& run) {
  const EncoderArtifact encoder = read_encoder_artifact(run / "encoder.pt");
  if (encoder.model.decoder.output != "lab") {
    return global_trained("the pretrain run's decoder predicts " + encoder.model.decoder.output +
                          " (a classification over ab bins), not Lab, so there is no colour to read at the label pixel");
  }
  if (!encoder.has_decoder) {
    return global_trained((run / "encoder.pt").string() +
                          " holds no colour decoder (written before decoders were kept), so there is no colour to read");
  }
  return {colour_bands_probe(), true,
          "the pretrain run's decoder predicts Lab; this readout led the studies (README, Heads for point labels)"};
}

}  // namespace

bool head_left_to_default(const ConfigNode& head) { return !head.has("pool") && !head.has("kind"); }

HeadChoice choose_head_default(const ConfigNode& head, bool pretrained, const std::filesystem::path& pretrain_run) {
  if (!head_left_to_default(head)) return {HeadSpec{}, false, ""};
  for (const char* key : {"dropout", "hidden"}) {
    if (head.has(key)) return global_trained(std::string("head.") + key + " is set, which only a trained head takes");
  }
  if (!pretrained) return global_trained("the run starts from scratch: a random network has no learnt colour to read");
  return from_pretrain_run(pretrain_run);
}

std::string head_default_rule() {
  return "without head.pool or head.kind the head will be {pool: colour, kind: linear_probe, input_bands: true} "
         "when that run's decoder predicts Lab (loss l1, smooth_l1 or l2), else {pool: global, kind: trained}";
}

std::string head_choice_line(const HeadSpec& head, const HeadChoice& choice) {
  if (!choice.by_default) return "head: " + head_summary(head) + " as configured";
  return "head: default " + head_summary(head) + " because " + choice.reason;
}

YAML::Node head_choice_record(const HeadSpec& head, const HeadChoice& choice) {
  YAML::Node node;
  node["pool"] = to_string(head.pool);
  node["kind"] = to_string(head.kind);
  if (head.kind == HeadKind::knn) node["k"] = head.k;
  if (head.pool == HeadPool::colour) {
    node["colour_channels"] = head.colour_channels;
    node["input_bands"] = head.input_bands;
  }
  node["chosen_by"] = choice.by_default ? "default" : "config";
  if (choice.by_default) node["reason"] = choice.reason;
  return node;
}

}  // namespace tinct
