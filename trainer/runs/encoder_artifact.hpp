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
  bool has_decoder = false;  // the colour decoder's weights are kept (runs since decoders were kept)
};

// `decoder` (the colour decoder, optional) is kept too, for readouts that use it.
void save_encoder(const std::filesystem::path& file, const torch::nn::Module& encoder,
                  const EncoderArtifact& artifact, const torch::nn::Module* decoder = nullptr);
// Reads the description only. Fails (usage) when `file` is not an encoder.pt.
EncoderArtifact read_encoder_artifact(const std::filesystem::path& file);
// Loads the weights into an encoder built from the artifact's spec.
void load_encoder_weights(const std::filesystem::path& file, torch::nn::Module& encoder);
// Loads the colour decoder's weights; fails (usage) when the file holds none (encoder.pt
// written before decoders were kept: run tinct pretrain again).
void load_decoder_weights(const std::filesystem::path& file, torch::nn::Module& decoder);

}  // namespace tinct
