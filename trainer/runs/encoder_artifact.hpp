// encoder.pt: what fine-tuning, maps and export need of a pretraining run: the
// encoder's weights, its architecture, the band list in order, the chip size and
// the band statistics the inputs were normalised with (a model archive of kind encoder).
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "batches/chip_collection.hpp"
#include "models/model_spec.hpp"

namespace torch::nn {
class Module;
}

namespace tinct {

struct EncoderArtifact {
  ModelSpec model;  // the encoder part is used; the decoder's is kept for reference
  BandNormalisation normalisation;
  int chip_size = 0;
};

void save_encoder(const std::filesystem::path& file, const torch::nn::Module& encoder,
                  const EncoderArtifact& artifact);
// Reads the description only. Fails (usage) when `file` is not an encoder.pt.
EncoderArtifact read_encoder_artifact(const std::filesystem::path& file);
// Loads the weights into an encoder built from the artifact's spec.
void load_encoder_weights(const std::filesystem::path& file, torch::nn::Module& encoder);

}  // namespace tinct
