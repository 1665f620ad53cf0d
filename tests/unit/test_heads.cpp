// trainer/models heads for point labels: the readouts at the label pixel against PyTorch's
// own bilinear upsampling, the hypercolumn's dependence on the receptive field only, shapes
// of every encoder x pool x kind, the knn head's votes and the head section of a config.
// LibTorch first: glog (through c10) defines a CHECK that aborts; Catch's CHECK must win.
#include <torch/torch.h>
#undef CHECK
#include <catch2/catch.hpp>

#include "models/classifier_model.hpp"
#include "models/head_spec.hpp"
#include "models/point_readout.hpp"
#include "util/config_node.hpp"
#include "util/error.hpp"

using Catch::Matchers::Contains;
using tinct::ClassifierModel;
using tinct::ClassifierSpec;
using tinct::HeadKind;
using tinct::HeadPool;

namespace {

ClassifierSpec spec_of(const std::string& encoder, HeadPool pool, HeadKind kind = HeadKind::trained) {
  ClassifierSpec spec;
  spec.model.encoder = {encoder, /*bands=*/3, /*width=*/0.125};
  spec.classes = 4;
  spec.dropout = 0.0;
  spec.head.pool = pool;
  spec.head.kind = kind;
  return spec;
}

float max_abs_difference(const torch::Tensor& a, const torch::Tensor& b) { return (a - b).abs().max().item<float>(); }

tinct::HeadSpec head_from(const std::string& yaml) {
  const auto root = tinct::ConfigNode::from_text(yaml, "finetune.yaml", ".");
  const auto head = root.section("head");
  tinct::HeadSpec spec = tinct::read_head_spec(head);
  return spec;
}

std::string usage_error_of(const std::function<void()>& action) {
  try {
    action();
  } catch (const tinct::Error& e) {
    CHECK(e.exit_code() == 2);
    return e.what();
  }
  FAIL("expected a usage error");
  return "";
}

}  // namespace

TEST_CASE("the value at the label pixel is what bilinear upsampling gives there", "[heads]") {
  // Reference: PyTorch's own F::interpolate (bilinear, align_corners false) to chip size,
  // read at (H/2, W/2); maps of every stride the encoders have, odd and even chip sizes.
  namespace F = torch::nn::functional;
  torch::manual_seed(1);
  for (const auto& [h, w, height, width] : std::vector<std::array<std::int64_t, 4>>{
           {1, 1, 16, 16}, {2, 2, 32, 32}, {4, 2, 64, 32}, {3, 5, 48, 80}, {16, 16, 16, 16}, {7, 9, 28, 36}}) {
    const torch::Tensor map = torch::randn({2, 5, h, w});
    const torch::Tensor full = F::interpolate(map, F::InterpolateFuncOptions()
                                                       .size(std::vector<std::int64_t>{height, width})
                                                       .mode(torch::kBilinear)
                                                       .align_corners(false));
    const torch::Tensor expected = full.select(2, height / 2).select(2, width / 2);
    INFO(h << "x" << w << " map of a " << height << "x" << width << " chip");
    CHECK(max_abs_difference(tinct::upsampled_at_label_pixel(map, height, width), expected) < 1e-5f);
  }
}

TEST_CASE("centre cells are those touching the chip centre", "[heads]") {
  const torch::Tensor map = torch::arange(16, torch::kFloat32).view({1, 1, 4, 4});  // value 4 r + c
  // 4 x 4: rows and columns 1 and 2: (5 + 6 + 9 + 10) / 4 = 7.5 (by hand)
  CHECK(tinct::centre_cells(map).item<float>() == 7.5f);
  const torch::Tensor odd = torch::arange(15, torch::kFloat32).view({1, 1, 3, 5});  // 5 r + c
  CHECK(tinct::centre_cells(odd).item<float>() == 7.0f);  // row 1, column 2
  CHECK(tinct::centre_cells(torch::full({1, 1, 1, 1}, 3.0f)).item<float>() == 3.0f);
  // 3 x 3 mean at (H/2, W/2) = (2, 2) of a 4 x 4 map: rows and columns 1 to 3 -> 4 * 2 + 2 = 10
  CHECK(tinct::mean_3x3_at_label_pixel(map).item<float>() == 10.0f);
}

TEST_CASE("the hypercolumn at the label pixel depends only on its receptive field", "[heads]") {
  // Half-widths of the theoretical receptive field of everything the hypercolumn reads, from
  // the layers' kernels, strides and padding (derived by hand, a bound not a measurement):
  //   compact: the deepest cell j sees pixels 16 j - 46 .. 16 j + 46; the label pixel reads cells
  //     at most one cell away (bilinear), the decoder adds at most 3 s per step of stride s
  //     (bilinear from 2 s, then a 3 x 3 conv): 46 + 16 + 3 (8 + 4 + 2 + 1) = 107 -> 120 used.
  //   resnet18: receptive field 435 px (217 each side) + 32 (bilinear) + 3 (16 + ... + 1) -> 360.
  //   resnet34: receptive field 899 px (449 each side) + 32 + 93 -> 600.
  // Pixels outside the square of that half-width around the label pixel are replaced; the
  // hypercolumn must not move, while global pooling does (the change is seen by the network).
  for (const auto& [encoder, chip, radius] : std::vector<std::tuple<std::string, std::int64_t, std::int64_t>>{
           {"compact", 256, 120}, {"resnet18", 736, 360}, {"resnet34", 1216, 600}}) {
    INFO(encoder << ", " << chip << " px chips");
    torch::manual_seed(3);
    ClassifierModel hypercolumn(spec_of(encoder, HeadPool::hypercolumn));
    ClassifierModel global(spec_of(encoder, HeadPool::global));
    hypercolumn->eval();  // batch statistics would mix the whole chip in
    global->eval();
    torch::NoGradGuard no_grad;
    const torch::Tensor chips = torch::randn({1, 3, chip, chip});
    torch::Tensor changed = chips.clone();
    const std::int64_t low = chip / 2 - radius, high = chip / 2 + radius;
    REQUIRE(low > 0);
    REQUIRE(high < chip - 1);
    const torch::Tensor noise = torch::randn({1, 3, chip, chip}) * 3;
    const torch::Tensor outside = torch::ones({chip, chip}, torch::kBool);
    outside.narrow(0, low, high - low + 1).narrow(1, low, high - low + 1).fill_(false);
    changed = torch::where(outside, noise, changed);
    const torch::Tensor before = hypercolumn->features(chips), after = hypercolumn->features(changed);
    CHECK(before.size(1) == tinct::readout_features(hypercolumn->spec()));
    CHECK(max_abs_difference(before, after) < 1e-5f);
    CHECK(max_abs_difference(global->features(chips), global->features(changed)) > 1e-3f);
    // and a change at the label pixel itself does reach the hypercolumn
    torch::Tensor centre = chips.clone();
    centre.select(2, chip / 2).select(2, chip / 2).add_(5.0);
    CHECK(max_abs_difference(before, hypercolumn->features(centre)) > 1e-4f);
  }
}

TEST_CASE("the colour readout with input bands depends only on the receptive field of the label pixel", "[heads]") {
  // The colour pool reads the decoder's output, whose receptive field is inside the
  // hypercolumn's (compact: half-width 107, see above); its 3 x 3 mean adds one pixel, and the
  // input bands' 3 x 3 mean sees one pixel around the label pixel: 108 -> 120 used.
  const std::int64_t chip = 256, radius = 120;
  torch::manual_seed(5);
  ClassifierSpec spec = spec_of("compact", HeadPool::colour, HeadKind::linear_probe);
  spec.head.input_bands = true;
  ClassifierModel colour(spec);
  colour->eval();
  torch::NoGradGuard no_grad;
  const torch::Tensor chips = torch::randn({2, 3, chip, chip});
  const torch::Tensor outside = torch::ones({chip, chip}, torch::kBool);
  const std::int64_t low = chip / 2 - radius, high = chip / 2 + radius;
  outside.narrow(0, low, high - low + 1).narrow(1, low, high - low + 1).fill_(false);
  const torch::Tensor changed = torch::where(outside, torch::randn({2, 3, chip, chip}) * 3, chips);
  const torch::Tensor before = colour->features(chips);
  // shapes: 3 Lab + 3 bands per chip
  CHECK(before.sizes().vec() == std::vector<std::int64_t>{2, 6});
  CHECK(tinct::readout_features(spec) == 6);
  CHECK(max_abs_difference(before, colour->features(changed)) < 1e-5f);
  // the last three columns are the bands' 3 x 3 mean at (H/2, W/2), by slicing rows and
  // columns H/2 - 1 .. H/2 + 1 here
  const torch::Tensor window = chips.narrow(2, chip / 2 - 1, 3).narrow(3, chip / 2 - 1, 3).mean({2, 3});
  CHECK(max_abs_difference(before.narrow(1, 3, 3), window) < 1e-5f);
  // a change of one band next to the label pixel moves that band's column by a ninth of it,
  // and the predicted colour too
  torch::Tensor near = chips.clone();
  near[0][1][chip / 2 + 1][chip / 2 - 1] += 9.0;
  const torch::Tensor moved = colour->features(near) - before;
  CHECK(moved[0][4].item<float>() == Approx(1.0).margin(1e-4));
  CHECK(moved[0][3].abs().item<float>() < 1e-5f);
  CHECK(moved.narrow(1, 0, 3)[0].abs().max().item<float>() > 1e-6f);
  CHECK(moved[1].abs().max().item<float>() < 1e-5f);
  // with decoder channels too: 3 Lab + 5 channels + 3 bands
  spec.head.colour_channels = 5;
  ClassifierModel wider(spec);
  wider->eval();
  CHECK(wider->features(chips).size(1) == 11);
  CHECK(tinct::readout_features(spec) == 11);
  CHECK(wider->forward(chips).sizes().vec() == std::vector<std::int64_t>{2, 4});
}

TEST_CASE("every encoder, pool and kind gives features and logits of the right shape", "[heads]") {
  const std::vector<std::string> encoders{"compact", "resnet18", "resnet34"};
  const std::vector<HeadPool> pools{HeadPool::global, HeadPool::centre, HeadPool::hypercolumn, HeadPool::colour};
  const std::vector<HeadKind> kinds{HeadKind::trained, HeadKind::linear_probe, HeadKind::knn};
  // Expected feature counts at width 0.125, by hand from the stage widths (each base x 0.125,
  // rounded to a multiple of 8, at least 8) and the decoder's steps (half the deepest stage,
  // halving, at least 8), plus 3 Lab outputs:
  //   compact stages 8 8 8 16 32; decoder steps 16 8 8 8 -> hypercolumn 72 + 40 + 3 = 115
  //   resnet stages 8 8 8 16 32 64; decoder steps 32 16 8 8 8 -> 136 + 72 + 3 = 211
  const std::map<std::string, std::map<HeadPool, std::int64_t>> expected{
      {"compact", {{HeadPool::global, 32}, {HeadPool::centre, 32}, {HeadPool::hypercolumn, 115}, {HeadPool::colour, 3}}},
      {"resnet18", {{HeadPool::global, 64}, {HeadPool::centre, 64}, {HeadPool::hypercolumn, 211}, {HeadPool::colour, 3}}},
      {"resnet34", {{HeadPool::global, 64}, {HeadPool::centre, 64}, {HeadPool::hypercolumn, 211}, {HeadPool::colour, 3}}}};
  torch::NoGradGuard no_grad;
  const torch::Tensor chips = torch::randn({2, 3, 64, 64});
  for (const auto& encoder : encoders) {
    for (const HeadPool pool : pools) {
      for (const HeadKind kind : kinds) {
        INFO(encoder << ", pool " << tinct::to_string(pool) << ", kind " << tinct::to_string(kind));
        ClassifierModel model(spec_of(encoder, pool, kind));
        model->eval();
        const torch::Tensor features = model->features(chips);
        CHECK(features.sizes().vec() == std::vector<std::int64_t>{2, expected.at(encoder).at(pool)});
        CHECK(tinct::readout_features(model->spec()) == expected.at(encoder).at(pool));
        if (model->knn) model->knn->set_bank(features, torch::tensor({0L, 3L}));
        CHECK(model->forward(chips).sizes().vec() == std::vector<std::int64_t>{2, 4});
      }
    }
  }
  ClassifierSpec with_channels = spec_of("compact", HeadPool::colour);
  with_channels.head.colour_channels = 5;
  ClassifierModel colour(with_channels);
  colour->eval();
  CHECK(colour->features(chips).size(1) == 8);
  with_channels.head.colour_channels = 9;  // the last decoder step has 8
  CHECK_THAT(usage_error_of([&] { ClassifierModel too_many(with_channels); }), Contains("8 channels"));
  ClassifierSpec bins = spec_of("compact", HeadPool::colour);
  bins.model.decoder.output = "ab_bins";
  bins.model.decoder.ab_bins_per_axis = 4;
  CHECK_THAT(usage_error_of([&] { ClassifierModel wrong(bins); }), Contains("model.output lab"));
}

TEST_CASE("the knn head votes among the k nearest standardised rows", "[heads]") {
  // By hand: rows 0, 1, 3, 5, 6 on a line (standardising one column keeps the order); query
  // 4.2 is nearest to 5, 3, 6 (classes 1, 1, 2): shares 0, 2/3, 1/3.
  tinct::KnnHead knn(1, 3, 3);
  knn->set_bank(torch::tensor({0.0f, 1.0f, 3.0f, 5.0f, 6.0f}).view({5, 1}) * 1.0f, torch::tensor({0L, 0L, 1L, 1L, 2L}));
  const torch::Tensor shares = torch::softmax(knn->forward(torch::tensor({{4.2f}})), 1);
  CHECK(shares[0][1].item<float>() == Approx(2.0 / 3.0));
  CHECK(shares[0][0].item<float>() == Approx(0.0).margin(1e-8));
  CHECK(shares[0][2].item<float>() == Approx(1.0 / 3.0));
  // a tie of votes (1 : 1 with k 2, rows 3 and 5 equally far from 4) goes to the lower class
  tinct::KnnHead two(1, 3, 2);
  two->set_bank(torch::tensor({3.0f, 5.0f}).view({2, 1}), torch::tensor({2L, 1L}));
  CHECK(torch::softmax(two->forward(torch::tensor({{4.0f}})), 1).argmax(1).item<std::int64_t>() == 1);
}

TEST_CASE("the head section reads pools and kinds and refuses keys that do not apply", "[heads]") {
  const tinct::HeadSpec defaults = head_from("config: finetune\n");
  CHECK(defaults.pool == HeadPool::global);
  CHECK(defaults.kind == HeadKind::trained);
  const tinct::HeadSpec knn = head_from("head: {pool: hypercolumn, kind: knn, k: 7}\n");
  CHECK(knn.pool == HeadPool::hypercolumn);
  CHECK(knn.k == 7);
  const tinct::HeadSpec probe = head_from("head: {pool: colour, kind: linear_probe, l2: 0.5, colour_channels: 4}\n");
  CHECK(probe.l2 == 0.5);
  CHECK(probe.colour_channels == 4);
  CHECK_FALSE(probe.input_bands);
  CHECK(head_from("head: {pool: colour, kind: knn, input_bands: true}\n").input_bands);
  CHECK(head_from("head: {kind: linear_probe, l2: auto}\n").l2 == 0.0);
  CHECK_THAT(usage_error_of([] { head_from("head: {pool: middle}\n"); }), Contains("pool"));
  CHECK_THAT(usage_error_of([] { head_from("head: {k: 3}\n"); }), Contains("applies only with kind: knn"));
  CHECK_THAT(usage_error_of([] { head_from("head: {kind: knn, dropout: 0.1}\n"); }),
             Contains("applies only with kind: trained"));
  CHECK_THAT(usage_error_of([] { head_from("head: {colour_channels: 2}\n"); }), Contains("pool: colour"));
  CHECK_THAT(usage_error_of([] { head_from("head: {pool: hypercolumn, input_bands: true}\n"); }),
             Contains("pool: colour"));
}
