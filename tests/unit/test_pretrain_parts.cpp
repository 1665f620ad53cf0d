// The parts of pretraining on tiny tensors: colour losses, ab bins and rebalancing,
// CIE76 delta E, the learning-rate schedule and safetensors files. Every check value names
// its source: a hand computation shown beside it, REFERENCES.md (scikit-image), the paper
// (Zhang, Isola & Efros 2016) or the safetensors format description.
// LibTorch first: c10's logging defines a CHECK that aborts; Catch's CHECK must win.
#include <torch/torch.h>
#undef CHECK
#include <catch2/catch.hpp>

#include <array>
#include <cmath>
#include <cstdint>
#include <fstream>
#include <map>
#include <string>
#include <vector>

#include "pretrain/colour_loss.hpp"
#include "training/lr_schedule.hpp"
#include "runs/safetensors.hpp"
#include "temp_folder.hpp"
#include "util/error.hpp"

using tinct::AbBinning;
using tinct::ColourLossKind;
using tinct::ColourLossSettings;

namespace {

// (1, 3, 1, W) float from W pixels of (c0, c1, c2).
torch::Tensor pixels(const std::vector<std::array<double, 3>>& values) {
  const auto width = static_cast<std::int64_t>(values.size());
  torch::Tensor out = torch::empty({1, 3, 1, width}, torch::kFloat);
  auto access = out.accessor<float, 4>();
  for (std::int64_t x = 0; x < width; ++x) {
    for (int c = 0; c < 3; ++c) access[0][c][0][x] = static_cast<float>(values[x][c]);
  }
  return out;
}

// (1, 1, W) bool.
torch::Tensor mask(const std::vector<int>& valid) {
  return torch::tensor(std::vector<std::int64_t>(valid.begin(), valid.end()))
      .to(torch::kBool)
      .view({1, 1, -1});
}

// Lab units -> scaled (L/100, a/128, b/128).
std::array<double, 3> scaled(double l, double a, double b) { return {l / 100, a / 128, b / 128}; }

double value(const torch::Tensor& t) { return t.item<double>(); }

ColourLossSettings settings_of(ColourLossKind kind) {
  ColourLossSettings settings;
  settings.kind = kind;
  return settings;
}

// Two pixels against a zero target: errors (0.5, -0.05, 0.2) and (0.1, 0.3, -0.02).
torch::Tensor two_pixels() { return pixels({{0.5, -0.05, 0.2}, {0.1, 0.3, -0.02}}); }
torch::Tensor zero_target() { return torch::zeros({1, 3, 1, 2}); }

}  // namespace

TEST_CASE("colour_targets decodes the 8-bit Lab encoding to scaled Lab") {
  // DESIGN.md 8-bit encoding (L*255/100, a+128, b+128): codes (255, 128, 128) are L 100,
  // a 0, b 0 -> (1, 0, 0); codes (0, 0, 255) are L 0, a -128, b 127 -> (0, -1, 127/128).
  torch::Tensor codes = torch::tensor({255, 0, 128, 0, 128, 255}, torch::kUInt8).view({1, 3, 1, 2});
  const torch::Tensor target = tinct::colour_targets(codes);
  REQUIRE(target.scalar_type() == torch::kFloat);
  CHECK(value(target[0][0][0][0]) == Approx(1.0));
  CHECK(value(target[0][1][0][0]) == Approx(0.0).margin(1e-7));
  CHECK(value(target[0][2][0][0]) == Approx(0.0).margin(1e-7));
  CHECK(value(target[0][0][0][1]) == Approx(0.0).margin(1e-7));
  CHECK(value(target[0][1][0][1]) == Approx(-1.0));
  CHECK(value(target[0][2][0][1]) == Approx(127.0 / 128.0));
}

TEST_CASE("regression losses match hand computations") {
  const torch::Tensor errors = two_pixels();
  const torch::Tensor zero = zero_target();
  const torch::Tensor both = mask({1, 1});
  // Hand: l1 = (0.5 + 0.05 + 0.2 + 0.1 + 0.3 + 0.02) / (2 pixels x 3 weight) = 1.17 / 6.
  CHECK(value(tinct::regression_loss(errors, zero, both, settings_of(ColourLossKind::l1))) ==
        Approx(0.195));
  // Hand: l2 = (0.25 + 0.0025 + 0.04 + 0.01 + 0.09 + 0.0004) / 6 = 0.3929 / 6.
  CHECK(value(tinct::regression_loss(errors, zero, both, settings_of(ColourLossKind::l2))) ==
        Approx(0.3929 / 6));
  // Hand, beta 0.1: |x| < beta -> 0.5 x^2 / beta, else |x| - beta / 2:
  // 0.45 + 0.0125 + 0.15 + 0.05 + 0.25 + 0.002 = 0.9145, / 6.
  CHECK(value(tinct::regression_loss(errors, zero, both,
                                     settings_of(ColourLossKind::smooth_l1))) ==
        Approx(0.9145 / 6));
  SECTION("smooth_l1 with beta 0 is l1") {
    ColourLossSettings settings = settings_of(ColourLossKind::smooth_l1);
    settings.smooth_l1_beta = 0;
    CHECK(value(tinct::regression_loss(errors, zero, both, settings)) == Approx(0.195));
  }
  SECTION("channel weights scale each channel; the sum of weights normalises") {
    ColourLossSettings settings = settings_of(ColourLossKind::l1);
    settings.channel_weights = {2, 1, 0};
    // Hand: (2 x 0.5 + 0.05 + 2 x 0.1 + 0.3) / (2 pixels x 3) = 1.55 / 6.
    CHECK(value(tinct::regression_loss(errors, zero, both, settings)) == Approx(1.55 / 6));
  }
  SECTION("invalid pixels do not count, in either bool or uint8 masks") {
    // Hand: only pixel 0, (0.5 + 0.05 + 0.2) / 3.
    const auto l1 = settings_of(ColourLossKind::l1);
    CHECK(value(tinct::regression_loss(errors, zero, mask({1, 0}), l1)) == Approx(0.25));
    CHECK(value(tinct::regression_loss(errors, zero, mask({1, 0}).to(torch::kUInt8), l1)) ==
          Approx(0.25));
  }
}

TEST_CASE("a batch without valid pixels gives a zero loss that back-propagates") {
  const torch::Tensor errors = two_pixels();
  const torch::Tensor zero = zero_target();
  for (const auto kind : {ColourLossKind::l1, ColourLossKind::smooth_l1, ColourLossKind::l2}) {
    const torch::Tensor pred = errors.clone().requires_grad_(true);
    const torch::Tensor loss = tinct::regression_loss(pred, zero, mask({0, 0}), settings_of(kind));
    CHECK(value(loss) == 0.0);
    REQUIRE(loss.grad_fn() != nullptr);
    loss.backward();
    CHECK(value(pred.grad().abs().sum()) == 0.0);
  }
  // ... and a gradient that flows when pixels are valid: d l1 / d pred = sign / 6 (hand).
  const torch::Tensor pred = errors.clone().requires_grad_(true);
  tinct::regression_loss(pred, zero, mask({1, 1}), settings_of(ColourLossKind::l1)).backward();
  CHECK(value(pred.grad()[0][0][0][0]) == Approx(1.0 / 6));
  CHECK(value(pred.grad()[0][1][0][0]) == Approx(-1.0 / 6));
}

TEST_CASE("delta_e76 reproduces scikit-image's deltaE_cie76 (REFERENCES.md section 2)") {
  // REFERENCES.md section 2, skimage rgb2lab: red (1,0,0) = 53.2406, 80.0923, 67.2028;
  // (0.2,0.4,0.6) = 42.0080, -0.1540, -32.8429; deltaE_cie76 between them = 128.7431.
  // Grey 0.5 = 53.3890, -0.0015, 0.0028; white = 100, -0.0025, 0.0047; delta E = 46.6110.
  const torch::Tensor pred =
      pixels({scaled(53.2406, 80.0923, 67.2028), scaled(53.3890, -0.0015, 0.0028)});
  const torch::Tensor target =
      pixels({scaled(42.0080, -0.1540, -32.8429), scaled(100, -0.0025, 0.0047)});
  const torch::Tensor red = tinct::delta_e76(pred, target, mask({1, 0}));
  CHECK(red.scalar_type() == torch::kDouble);
  CHECK(red.dim() == 0);
  CHECK(value(red) == Approx(128.7431).margin(0.01));
  CHECK(value(tinct::delta_e76(pred, target, mask({0, 1}))) == Approx(46.6110).margin(0.01));
  CHECK(value(tinct::delta_e76(pred, target, mask({1, 1}))) ==
        Approx((128.7431 + 46.6110) / 2).margin(0.01));
  CHECK(value(tinct::delta_e76(pred, target, mask({0, 0}))) == 0.0);
}

TEST_CASE("rebalancing weights follow Zhang et al. 2016 equation 4") {
  SECTION("a uniform distribution gives every bin weight 1") {
    // Paper: w proportional to ((1 - lambda) p + lambda / Q)^-1 is constant when p = 1/Q, and
    // E_p[w] = 1 makes it 1.
    const torch::Tensor w = tinct::rebalancing_weights(torch::full({9}, 5, torch::kLong), 0.5);
    CHECK(value(w.min()) == Approx(1.0));
    CHECK(value(w.max()) == Approx(1.0));
  }
  SECTION("skewed counts: sum p w = 1 and rarer bins weigh more") {
    // Hand, counts (6, 3, 1, 0), lambda 0.5, Q 4: p = (0.6, 0.3, 0.1, 0);
    // 1 / (0.5 p + 0.125) = (2.35294, 3.63636, 5.71429, 8), sum p w = 3.07406, so
    // w = (0.765408, 1.182903, 1.858847, 2.602386).
    const torch::Tensor counts = torch::tensor({6, 3, 1, 0}, torch::kLong);
    const torch::Tensor w = tinct::rebalancing_weights(counts, 0.5);
    CHECK(value(w[0]) == Approx(0.765408).epsilon(1e-5));
    CHECK(value(w[1]) == Approx(1.182903).epsilon(1e-5));
    CHECK(value(w[2]) == Approx(1.858847).epsilon(1e-5));
    CHECK(value(w[3]) == Approx(2.602386).epsilon(1e-5));
    const torch::Tensor p = counts.to(torch::kFloat) / 10;
    CHECK(value((p * w).sum()) == Approx(1.0));
    CHECK(value(w[0]) < value(w[1]));
    CHECK(value(w[1]) < value(w[2]));
  }
  SECTION("lambda 1 (the uniform prior alone) gives weight 1 everywhere") {
    const torch::Tensor w = tinct::rebalancing_weights(torch::tensor({6, 3, 1, 0}), 1.0);
    CHECK(value(w.min()) == Approx(1.0));
    CHECK(value(w.max()) == Approx(1.0));
  }
  SECTION("no counted pixel and a lambda outside (0, 1] are errors") {
    CHECK_THROWS_AS(tinct::rebalancing_weights(torch::zeros({4}, torch::kLong), 0.5), tinct::Error);
    CHECK_THROWS_AS(tinct::rebalancing_weights(torch::ones({4}), 0.0), tinct::Error);
  }
}

TEST_CASE("ab binning puts corners, the centre and out-of-range values in grid cells") {
  // Hand, per_axis 10: cells 22 units wide over [-110, 110], bin = ia * 10 + ib.
  const AbBinning ten(10);
  CHECK(ten.count() == 100);
  const torch::Tensor lab = pixels({scaled(50, -110, -110), scaled(50, 110, 110),
                                    scaled(50, 110, -110), scaled(50, -128, 127),
                                    scaled(50, 0, 0), scaled(50, -33, 55)});
  const torch::Tensor bins = tinct::ab_bin_index(lab, ten);  // (1, 1, 6)
  REQUIRE(bins.scalar_type() == torch::kLong);
  REQUIRE(bins.sizes() == torch::IntArrayRef({1, 1, 6}));
  CHECK(bins[0][0][0].item<std::int64_t>() == 0);   // lowest corner
  CHECK(bins[0][0][1].item<std::int64_t>() == 99);  // a = b = 110: the top edge stays in cell 9
  CHECK(bins[0][0][2].item<std::int64_t>() == 90);  // ia 9, ib 0
  CHECK(bins[0][0][3].item<std::int64_t>() == 9);   // 8-bit extremes clamp to the edge cells
  CHECK(bins[0][0][4].item<std::int64_t>() == 55);  // 0 is the edge between cells 4 and 5
  CHECK(bins[0][0][5].item<std::int64_t>() == 37);  // (-33 + 110) / 22 = 3.5, (55 + 110) / 22 = 7.5

  // Hand, per_axis 11: 20-unit cells; (0, 0) is the centre of cell (5, 5) = 60.
  const AbBinning eleven(11);
  CHECK(tinct::ab_bin_index(pixels({scaled(50, 0, 0)}), eleven).item<std::int64_t>() == 60);
  CHECK(eleven.centre(5) == Approx(0.0).margin(1e-12));

  // Bin centres: -110 + (i + 0.5) x 22, scaled by 1/128; bin 37 is (-33, 55).
  const torch::Tensor centres = ten.centres_scaled();  // (100, 2)
  CHECK(value(centres[37][0]) == Approx(-33.0 / 128));
  CHECK(value(centres[37][1]) == Approx(55.0 / 128));
  CHECK(value(centres[0][0]) == Approx(-99.0 / 128));

  // Counting skips invalid pixels: pixels 0..5 valid except 1.
  const torch::Tensor counts = tinct::count_ab_bins(lab, mask({1, 0, 1, 1, 1, 1}), ten);
  CHECK(counts.numel() == 100);
  CHECK(counts.sum().item<std::int64_t>() == 5);
  CHECK(counts[99].item<std::int64_t>() == 0);
  CHECK(counts[37].item<std::int64_t>() == 1);
}

TEST_CASE("the annealed mean of the bin distribution (Zhang et al. 2016, T = 0.38)") {
  const AbBinning ten(10);
  SECTION("a one-hot distribution gives that bin's centre") {
    torch::Tensor logits = torch::zeros({1, 100, 1, 1});
    logits[0][37][0][0] = 50;  // exp(50 / 0.38) dwarfs the other 99 bins
    const torch::Tensor ab = tinct::ab_from_logits(logits, ten, tinct::kAnnealedMeanTemperature);
    REQUIRE(ab.sizes() == torch::IntArrayRef({1, 2, 1, 1}));
    CHECK(value(ab[0][0][0][0]) == Approx(-33.0 / 128));  // bin 37 centre (hand, above)
    CHECK(value(ab[0][1][0][0]) == Approx(55.0 / 128));
  }
  SECTION("two bins: the temperature sharpens z^(1/T), as the paper's f_T") {
    // Hand: z = (0.75, 0.25) on bins 37 (-33, 55) and 62 (33, -55); z^(1/0.38) renormalised =
    // (0.947404, 0.052596), so a = -29.528662, b = 49.214437.
    torch::Tensor logits = torch::full({1, 100, 1, 1}, -1e9);
    logits[0][37][0][0] = std::log(0.75);
    logits[0][62][0][0] = std::log(0.25);
    const torch::Tensor ab = tinct::ab_from_logits(logits, ten, 0.38);
    CHECK(value(ab[0][0][0][0]) * 128 == Approx(-29.528662).epsilon(1e-5));
    CHECK(value(ab[0][1][0][0]) * 128 == Approx(49.214437).epsilon(1e-5));
  }
  SECTION("uniform logits give the grid's mean, (0, 0)") {
    const torch::Tensor ab = tinct::ab_from_logits(torch::zeros({1, 100, 1, 1}), ten, 0.38);
    CHECK(value(ab.abs().max()) == Approx(0.0).margin(1e-6));
  }
}

TEST_CASE("the ab_bins loss: rebalanced cross-entropy plus smooth L1 on L") {
  ColourLossSettings settings = settings_of(ColourLossKind::ab_bins);
  settings.ab_bins_per_axis = 2;
  const AbBinning two(2);
  CHECK(tinct::colour_output_channels(settings) == 5);
  CHECK(tinct::colour_output_channels(settings_of(ColourLossKind::l2)) == 3);

  // One pixel, target a = 50, b = -50: ia 1, ib 0 -> bin 2 (hand), weight 2.
  const torch::Tensor target = pixels({scaled(50, 50, -50)});
  const torch::Tensor weights = torch::tensor({0.5f, 1.0f, 2.0f, 4.0f});
  torch::Tensor pred = torch::zeros({1, 5, 1, 1});
  pred[0][0][0][0] = 0.7;  // L: |0.7 - 0.5| = 0.2 > beta 0.1 -> 0.2 - 0.05 = 0.15 (hand)
  pred.requires_grad_(true);
  // Hand: uniform logits over 4 bins -> -log(1/4) = log 4; 2 x log 4 + 0.15 = 2.922589.
  const torch::Tensor loss = tinct::colour_loss(pred, target, mask({1}), settings, weights);
  CHECK(value(loss) == Approx(2 * std::log(4.0) + 0.15));
  loss.backward();
  // d/d logit of the target bin: weight x (softmax - 1) = 2 x (0.25 - 1) = -1.5 (hand).
  CHECK(value(pred.grad()[0][3][0][0]) == Approx(-1.5));

  const torch::Tensor none = tinct::ab_bins_loss(pred, target, mask({0}), two, weights, settings);
  CHECK(value(none) == 0.0);
  CHECK(none.grad_fn() != nullptr);

  // The annealed prediction for previews: L passes through, ab is the grid mean (0, 0).
  const torch::Tensor lab = tinct::lab_from_ab_bins_output(pred.detach(), two, 0.38);
  REQUIRE(lab.sizes() == torch::IntArrayRef({1, 3, 1, 1}));
  CHECK(value(lab[0][0][0][0]) == Approx(0.7));
  CHECK(value(lab[0][1][0][0]) == Approx(0.0).margin(1e-6));
}

TEST_CASE("loss settings are checked") {
  ColourLossSettings settings;
  CHECK_NOTHROW(tinct::check_colour_loss_settings(settings));
  settings.channel_weights = {0, 0, 0};
  CHECK_THROWS_AS(tinct::check_colour_loss_settings(settings), tinct::Error);
  settings = settings_of(ColourLossKind::ab_bins);
  settings.ab_bins_per_axis = 1;
  CHECK_THROWS_AS(tinct::check_colour_loss_settings(settings), tinct::Error);
}

TEST_CASE("learning rate: linear warm-up then cosine decay") {
  // total 100 steps, warm-up 10, base 1e-3, min 1e-5; values by the documented formula.
  const auto lr = [](std::int64_t step) {
    return tinct::learning_rate_at(step, 100, 10, 1e-3, 1e-5);
  };
  CHECK(lr(0) == Approx(1e-4));    // base x 1 / 10
  CHECK(lr(4) == Approx(5e-4));    // base x 5 / 10
  CHECK(lr(9) == Approx(1e-3));    // the last warm-up step reaches the peak
  CHECK(lr(10) == Approx(1e-3));   // progress 0: cos 0 = 1
  CHECK(lr(55) == Approx((1e-3 + 1e-5) / 2));  // progress 45 / 90 = 0.5: cos(pi / 2) = 0
  CHECK(lr(100) == Approx(1e-5));  // progress 1: cos pi = -1
  CHECK(lr(150) == Approx(1e-5));  // clamped past the end
  for (std::int64_t step = 10; step < 100; ++step) CHECK(lr(step + 1) <= lr(step));
  CHECK(tinct::learning_rate_at(0, 10, 0, 0.1, 0.0) == Approx(0.1));  // no warm-up
  CHECK_THROWS_AS(tinct::learning_rate_at(0, 10, 10, 0.1, 0.0), tinct::Error);
  CHECK_THROWS_AS(tinct::learning_rate_at(0, 10, 2, 0.1, 0.2), tinct::Error);
}

TEST_CASE("set_learning_rate sets every group of AdamW and SGD, with group scales") {
  torch::nn::Linear layer(2, 1);
  std::vector<torch::optim::OptimizerParamGroup> groups;
  groups.emplace_back(std::vector<torch::Tensor>{layer->weight});
  groups.emplace_back(std::vector<torch::Tensor>{layer->bias});
  torch::optim::AdamW adamw(groups, torch::optim::AdamWOptions(1e-3));
  tinct::set_learning_rate(adamw, 0.01, {1.0, 0.1});
  const auto adamw_lr = [&](std::size_t i) {
    return static_cast<torch::optim::AdamWOptions&>(adamw.param_groups()[i].options()).lr();
  };
  CHECK(adamw_lr(0) == Approx(0.01));
  CHECK(adamw_lr(1) == Approx(0.001));
  CHECK_THROWS(tinct::set_learning_rate(adamw, 0.01, {1.0}));

  torch::optim::SGD sgd(layer->parameters(), torch::optim::SGDOptions(0.1).momentum(0.9));
  tinct::set_learning_rate(sgd, 0.05);
  for (auto& group : sgd.param_groups()) {
    CHECK(static_cast<torch::optim::SGDOptions&>(group.options()).lr() == Approx(0.05));
  }
}

TEST_CASE("safetensors files round-trip names, order, dtypes, shapes, values and metadata") {
  tinct::testing::TempFolder folder;
  const auto path = folder / "weights.safetensors";
  const tinct::NamedTensors tensors = {
      {"encoder.conv.weight", torch::randn({4, 3, 3, 3}).requires_grad_(true)},
      {"f64", torch::tensor({0.1, -1e-300, 1e300}, torch::kDouble)},
      {"f16", torch::tensor({1.5, -2.0, 65504.0}).to(torch::kHalf)},
      {"bf16", torch::tensor({1.0, -3.140625}).to(torch::kBFloat16)},
      {"i64", torch::tensor({-(std::int64_t{1} << 62), std::int64_t{7}})},
      {"i32", torch::tensor({-2147483647 - 1, 2147483647}, torch::kInt)},
      {"u8", torch::arange(256).to(torch::kByte)},
      {"bool", torch::tensor({1, 0, 1}).to(torch::kBool)},
      {"scalar", torch::tensor(2.5)},
      {"empty", torch::zeros({0, 3})},
      {"transposed", torch::arange(6, torch::kFloat).view({2, 3}).t()},  // not contiguous
  };
  const std::map<std::string, std::string> metadata = {
      {"format", "tinct"}, {"note", "quote \" backslash \\ newline \n tab \t, Lab \xc3\xa9"}};
  tinct::write_safetensors(path, tensors, metadata);

  std::map<std::string, std::string> read_metadata;
  const tinct::NamedTensors back = tinct::read_safetensors(path, &read_metadata);
  CHECK(read_metadata == metadata);
  REQUIRE(back.size() == tensors.size());
  for (std::size_t i = 0; i < back.size(); ++i) {
    INFO(tensors[i].first);
    CHECK(back[i].first == tensors[i].first);
    CHECK(back[i].second.scalar_type() == tensors[i].second.scalar_type());
    CHECK(back[i].second.sizes() == tensors[i].second.sizes());
    CHECK(torch::equal(back[i].second, tensors[i].second.detach()));
  }

  // Format description: u64 little-endian N, a JSON header starting with '{'; tinct pads N
  // so the data section starts at a multiple of 8.
  std::ifstream in(path, std::ios::binary);
  unsigned char length[8];
  in.read(reinterpret_cast<char*>(length), 8);
  std::uint64_t n = 0;
  for (int i = 7; i >= 0; --i) n = (n << 8) | length[i];
  CHECK((8 + n) % 8 == 0);
  CHECK(static_cast<char>(in.get()) == '{');
  // Data size: 108 x 4 + 3 x 8 + 3 x 2 + 2 x 2 + 2 x 8 + 2 x 4 + 256 + 3 + 4 + 0 + 6 x 4 = 777.
  CHECK(std::filesystem::file_size(path) == 8 + n + 777);
}

TEST_CASE("safetensors errors say which file and what is wrong") {
  tinct::testing::TempFolder folder;
  const auto path = folder / "w.safetensors";
  const tinct::NamedTensors repeated = {{"a", torch::ones(1)}, {"a", torch::ones(1)}};
  CHECK_THROWS_AS(tinct::write_safetensors(path, repeated), tinct::Error);
  const tinct::NamedTensors reserved = {{"__metadata__", torch::ones(1)}};
  CHECK_THROWS_AS(tinct::write_safetensors(path, reserved), tinct::Error);
  CHECK_FALSE(std::filesystem::exists(path));

  tinct::write_safetensors(path, {{"a", torch::ones({4})}});
  const std::string whole = tinct::testing::read_text(path);
  const auto truncated = folder.write("truncated.safetensors", whole.substr(0, whole.size() - 1));
  CHECK_THROWS_WITH(tinct::read_safetensors(truncated),
                    Catch::Matchers::Contains("truncated.safetensors") &&
                        Catch::Matchers::Contains("data section"));
  const auto short_file = folder.write("short.safetensors", "abc");
  CHECK_THROWS_AS(tinct::read_safetensors(short_file), tinct::Error);
  CHECK_THROWS_AS(tinct::read_safetensors(folder / "missing.safetensors"), tinct::Error);
}
