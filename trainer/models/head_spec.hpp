// What a classifier reads out of its feature extractor and how the class readout is made,
// as plain data (no LibTorch): the `head:` section of a finetune config and model.pt.
//   pool   global       the deepest encoder stage averaged over the chip
//          centre       the deepest stage's cells around the chip centre
//          hypercolumn  every encoder stage, every colour-decoder step and the decoder's
//                       output, each upsampled (bilinear) to the label pixel
//          colour       the decoder's predicted colour (scaled Lab), plus the first
//                       colour_channels channels of its last step, 3 x 3 mean at the label pixel;
//                       with input_bands also the chip's own input bands there (3 x 3 mean), so
//                       the readout keeps what a pixel classifier on the bands sees
//   kind   trained      dropout (+ hidden layer) + linear, trained with the network
//          linear_probe frozen features, multinomial logistic regression (L2 from inner
//                       cross-validation on the budgeted labels unless l2 is given)
//          knn          frozen features, k nearest training chips (Euclidean, standardised)
// The label pixel is (size/2, size/2), where `tinct label` puts the label. The default when a
// config names no pool or kind depends on the run's init: finetune/default_head.hpp.
#pragma once

#include <string>
#include <vector>

namespace tinct {

class ConfigNode;

enum class HeadPool { global, centre, hypercolumn, colour };
enum class HeadKind { trained, linear_probe, knn };

struct HeadSpec {
  HeadPool pool = HeadPool::global;
  HeadKind kind = HeadKind::trained;
  int k = 5;                // knn
  double l2 = 0;            // linear_probe: 0 = chosen by inner cross-validation
  int colour_channels = 0;  // colour: decoder channels read out beside the colour
  bool input_bands = false;  // colour: the label pixel's input bands read out beside the colour
};

const std::vector<std::string>& head_pool_names();  // global, centre, hypercolumn, colour
const std::vector<std::string>& head_kind_names();  // trained, linear_probe, knn
std::string to_string(HeadPool pool);
std::string to_string(HeadKind kind);
// Fail (usage) with the valid names; `where` starts the message.
HeadPool head_pool_from_name(const std::string& name, const std::string& where);
HeadKind head_kind_from_name(const std::string& name, const std::string& where);

// The colour decoder is part of the feature extractor for these pools.
bool pool_uses_decoder(HeadPool pool);
// The features are frozen and the head fitted in closed form (no training epochs).
bool is_probe(HeadKind kind);

// Reads pool, kind, k, l2, colour_channels and input_bands from the `head:` section, refusing keys that do
// not apply to the kind or pool. Keys left out take pool, kind and input_bands from `defaults`
// (finetune/default_head.hpp chooses them). Does not call finish(): the caller reads dropout and hidden.
HeadSpec read_head_spec(const ConfigNode& node, const HeadSpec& defaults = HeadSpec{});

// Flow YAML of what sets the head apart: "{pool: colour, kind: linear_probe, input_bands: true}".
std::string head_summary(const HeadSpec& spec);

}  // namespace tinct
