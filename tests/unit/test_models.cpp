// trainer/models: ResNet encoders against torchvision's counts and shapes, the compact
// encoder's size, every encoder with the colour decoder on 32 and 64 px chips, the
// classifier head, and the model spec (YAML round trip, config reading, errors).
// LibTorch first: glog (through c10) defines a CHECK that aborts; Catch's CHECK must win.
#include <torch/torch.h>
#undef CHECK
#include <catch2/catch.hpp>

#include "models/ab_bins.hpp"
#include "models/classifier_head.hpp"
#include "models/colourisation_model.hpp"
#include "models/compact_encoder.hpp"
#include "models/encoder.hpp"
#include "models/model_spec.hpp"
#include "models/model_stats.hpp"
#include "models/resnet_encoder.hpp"
#include "util/config_node.hpp"
#include "util/error.hpp"

using Catch::Matchers::Contains;
using tinct::ClassifierHead;
using tinct::ColourisationModel;
using tinct::ConfigNode;
using tinct::EncoderSpec;
using tinct::ModelSpec;

namespace {

// A torchvision-style classifier: encoder, global average pooling and fc (Linear(512, classes)).
struct ClassifierImpl : torch::nn::Module {
  ClassifierImpl(const std::string& name, int bands, std::int64_t classes)
      : encoder(tinct::make_encoder(EncoderSpec{name, bands, 1.0})),
        head(encoder->feature_channels(), classes, /*dropout=*/0.0) {
    register_module("encoder", encoder);
    register_module("head", head);
  }
  torch::Tensor forward(torch::Tensor x) { return head(encoder->forward(x)); }
  tinct::Encoder encoder;
  ClassifierHead head;
};
TORCH_MODULE(Classifier);

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

using Shape = std::vector<std::int64_t>;

Shape shape_of(const torch::Tensor& t) { return t.sizes().vec(); }

ModelSpec model_spec(const std::string& encoder, int bands, double width, bool skips,
                     const std::string& output) {
  ModelSpec spec;
  spec.encoder = {encoder, bands, width};
  spec.decoder.skips = skips;
  spec.decoder.output = output;
  spec.decoder.ab_bins_per_axis = output == "ab_bins" ? 10 : 0;
  return spec;
}

}  // namespace

// REFERENCES.md section 1: torchvision 0.14.1 resnet18()/resnet34(), weights=None; the
// 12-band variants replace conv1 by Conv2d(12, 64, 7, stride 2, pad 3, bias=False) and fc
// by Linear(512, 2). 3-band totals equal torchvision's num_params metadata.
TEST_CASE("resnet parameter counts match torchvision", "[models]") {
  struct Row {
    std::string name;
    int bands;
    std::int64_t classes, with_fc, without_fc;
  };
  const std::vector<Row> rows = {
      {"resnet18", 3, 1000, 11689512, 11176512},
      {"resnet18", 12, 2, 11205762, 11204736},
      {"resnet34", 3, 1000, 21797672, 21284672},
      {"resnet34", 12, 2, 21313922, 21312896},
  };
  for (const Row& row : rows) {
    INFO(row.name << " " << row.bands << " bands, " << row.classes << " classes");
    Classifier model(row.name, row.bands, row.classes);
    CHECK(tinct::parameter_count(*model) == row.with_fc);
    CHECK(tinct::parameter_count(*model->encoder) == row.without_fc);
  }
}

// REFERENCES.md section 1 (computed): parameter tensors and state dict entries with fc;
// entries count BN running_mean, running_var and num_batches_tracked.
TEST_CASE("resnet state dicts have torchvision's entries and names", "[models]") {
  for (const auto& [name, tensors, entries] :
       std::vector<std::tuple<std::string, std::size_t, std::size_t>>{{"resnet18", 62, 122},
                                                                       {"resnet34", 110, 218}}) {
    INFO(name);
    Classifier model(name, 3, 1000);
    CHECK(model->parameters().size() == tensors);
    CHECK(model->named_parameters().size() + model->named_buffers().size() == entries);
  }
  const auto encoder = tinct::make_encoder(EncoderSpec{"resnet18", 3, 1.0});
  const auto params = encoder->named_parameters();
  const auto buffers = encoder->named_buffers();
  for (const char* key : {"conv1.weight", "bn1.weight", "layer1.0.conv1.weight",
                          "layer1.1.bn2.bias", "layer2.0.downsample.0.weight",
                          "layer4.1.conv2.weight"}) {
    INFO(key);
    CHECK(params.contains(key));
  }
  CHECK_FALSE(params.contains("layer1.0.downsample.0.weight"));
  CHECK(buffers.contains("layer3.0.downsample.1.running_var"));
  CHECK(buffers.contains("bn1.num_batches_tracked"));
  CHECK(shape_of(params["conv1.weight"]) == Shape{64, 3, 7, 7});
}

TEST_CASE("resnet initialisation follows torchvision", "[models]") {
  const auto encoder = tinct::make_encoder(EncoderSpec{"resnet18", 3, 1.0});
  const auto params = encoder->named_parameters();
  // Kaiming normal, fan_out, relu: std = sqrt(2 / (out x kH x kW)) = sqrt(2 / 3136) for conv1.
  const double std_conv1 = params["conv1.weight"].std().item<double>();
  CHECK(std_conv1 == Approx(std::sqrt(2.0 / (64 * 7 * 7))).epsilon(0.05));
  CHECK(params["bn1.weight"].eq(1).all().item<bool>());
  CHECK(params["layer2.0.downsample.1.bias"].eq(0).all().item<bool>());
}

// REFERENCES.md section 1: forward hooks on torchvision's models, Conv2d = output elements
// x in/groups x kH x kW, Linear = in x out; nothing else counted.
TEST_CASE("resnet conv and linear MACs match torchvision", "[models]") {
  struct Row {
    std::string name;
    int bands;
    std::int64_t classes, size, macs;
  };
  const std::vector<Row> rows = {
      {"resnet18", 3, 1000, 224, 1814073344}, {"resnet34", 3, 1000, 224, 3663761408},
      {"resnet18", 12, 2, 224, 2167604224},   {"resnet34", 12, 2, 224, 4017292288},
      {"resnet18", 3, 1000, 64, 148557824},   {"resnet18", 12, 2, 64, 176948224},
      {"resnet34", 3, 1000, 64, 299552768},   {"resnet34", 12, 2, 64, 327943168},
  };
  for (const Row& row : rows) {
    INFO(row.name << " " << row.bands << " bands, " << row.classes << " classes, " << row.size
                  << " px");
    Classifier model(row.name, row.bands, row.classes);
    CHECK(tinct::conv_linear_macs(model, {1, row.bands, row.size, row.size}) == row.macs);
    CHECK(model->is_training());  // restored after the count
  }
  // REFERENCES.md hand check: conv1 at 224 = 112 x 112 x 64 x 3 x 7 x 7.
  torch::nn::Conv2d conv1(torch::nn::Conv2dOptions(3, 64, /*kernel_size=*/7).stride(2).padding(3));
  CHECK(tinct::conv_linear_macs(conv1, {1, 3, 224, 224}) == 118013952);
}

// REFERENCES.md section 1 (computed): torchvision resnet18 after the stem (post-maxpool)
// and after layer1..4; stage 0 (before the maxpool) is ours, at stride 2.
TEST_CASE("resnet stage shapes match torchvision", "[models]") {
  const std::vector<std::pair<std::int64_t, std::vector<Shape>>> expected = {
      {224,
       {{64, 112, 112}, {64, 56, 56}, {64, 56, 56}, {128, 28, 28}, {256, 14, 14}, {512, 7, 7}}},
      {64, {{64, 32, 32}, {64, 16, 16}, {64, 16, 16}, {128, 8, 8}, {256, 4, 4}, {512, 2, 2}}},
  };
  torch::NoGradGuard no_grad;
  for (const std::string name : {"resnet18", "resnet34"}) {
    const auto encoder = tinct::make_encoder(EncoderSpec{name, 3, 1.0});
    encoder->eval();
    for (const auto& [size, shapes] : expected) {
      INFO(name << " at " << size);
      const auto stages = encoder->forward_stages(torch::zeros({1, 3, size, size}));
      REQUIRE(stages.size() == shapes.size());
      for (std::size_t i = 0; i < stages.size(); ++i) {
        CHECK(shape_of(stages[i].squeeze(0)) == shapes[i]);
      }
    }
  }
}

TEST_CASE("width scales every stage, rounded to multiples of 8", "[models]") {
  CHECK(tinct::scaled_channels(64, 1.0) == 64);
  CHECK(tinct::scaled_channels(64, 0.5) == 32);
  CHECK(tinct::scaled_channels(64, 0.3) == 16);   // 19.2 -> 16
  CHECK(tinct::scaled_channels(16, 0.25) == 8);   // at least 8
  CHECK(tinct::scaled_channels(100, 1.0) == 100);  // width 1 is exact
  CHECK(tinct::scaled_channels(64, 1.5) == 96);
  const auto half = tinct::make_encoder(EncoderSpec{"resnet18", 3, 0.5});
  CHECK(half->stage_channels() == std::vector<std::int64_t>{32, 32, 32, 64, 128, 256});
  const auto compact = tinct::make_encoder(EncoderSpec{"compact", 3, 0.5});
  CHECK(compact->stage_channels() == std::vector<std::int64_t>{8, 16, 32, 64, 128});
}

// Computed by this test and recorded in compact_encoder.hpp. By hand, width 1, 12 bands:
// params: stem 12*16*9 + stages (in*C*9 + C*C*9 per stage) + BN 2 per channel;
// MACs at 64 px: stem 64*64*16*12*9 + each stage (H/2)^2 * C * (in + C) * 9.
TEST_CASE("compact encoder size", "[models]") {
  const auto compact = tinct::make_encoder(EncoderSpec{"compact", 12, 1.0});
  const auto resnet18 = tinct::make_encoder(EncoderSpec{"resnet18", 12, 1.0});
  const std::int64_t compact_params = tinct::parameter_count(*compact);
  const std::int64_t compact_macs = tinct::conv_linear_macs(compact, {1, 12, 64, 64});
  const std::int64_t resnet_macs = tinct::conv_linear_macs(resnet18, {1, 12, 64, 64});
  const std::int64_t by_hand_params = 12 * 16 * 9 + 2 * 16 +
                                      (16 * 32 + 32 * 32) * 9 + 4 * 32 +
                                      (32 * 64 + 64 * 64) * 9 + 4 * 64 +
                                      (64 * 128 + 128 * 128) * 9 + 4 * 128 +
                                      (128 * 256 + 256 * 256) * 9 + 4 * 256;
  const std::int64_t by_hand_macs = 64 * 64 * 16 * 12 * 9 + 32 * 32 * 32 * (16 + 32) * 9 +
                                    16 * 16 * 64 * (32 + 64) * 9 +
                                    8 * 8 * 128 * (64 + 128) * 9 + 4 * 4 * 256 * (128 + 256) * 9;
  CHECK(compact_params == by_hand_params);
  CHECK(compact_macs == by_hand_macs);
  CHECK(compact_params == 1178720);
  CHECK(compact_macs == 63700992);
  // resnet18 without fc at 64 px, 12 bands: REFERENCES.md 176,948,224 minus 1,024 for fc.
  CHECK(tinct::parameter_count(*resnet18) == 11204736);
  CHECK(resnet_macs == 176947200);
  CHECK(compact_macs * 2 < resnet_macs);
  CHECK(compact_params * 9 < tinct::parameter_count(*resnet18));

  // The default decoder on it (skips, lab): four steps of h*w*C*(Cin + Cskip)*9, then the
  // 1x1 head 64*64*3*16. Recorded in compact_encoder.hpp.
  ColourisationModel model(model_spec("compact", 12, 1.0, true, "lab"));
  const std::int64_t decoder_macs = 8 * 8 * 128 * (256 + 128) * 9 + 16 * 16 * 64 * (128 + 64) * 9 +
                                    32 * 32 * 32 * (64 + 32) * 9 + 64 * 64 * 16 * (32 + 16) * 9 +
                                    64 * 64 * 3 * 16;
  CHECK(decoder_macs == 113442816);
  CHECK(tinct::conv_linear_macs(model, {1, 12, 64, 64}) == compact_macs + decoder_macs);
  CHECK(compact_macs + decoder_macs == 177143808);
}

TEST_CASE("encoder stage lists agree with the tensors they return", "[models]") {
  torch::NoGradGuard no_grad;
  for (const std::string& name : tinct::encoder_names()) {
    const auto encoder = tinct::make_encoder(EncoderSpec{name, 5, 1.0});
    encoder->eval();
    const auto stages = encoder->forward_stages(torch::zeros({1, 5, 64, 64}));
    const auto channels = encoder->stage_channels();
    const auto strides = encoder->stage_strides();
    INFO(name);
    REQUIRE(stages.size() == channels.size());
    REQUIRE(stages.size() == strides.size());
    for (std::size_t i = 0; i < stages.size(); ++i) {
      CHECK(shape_of(stages[i]) ==
            Shape{1, channels[i], 64 / strides[i], 64 / strides[i]});
    }
    CHECK(encoder->feature_channels() == channels.back());
    CHECK(shape_of(encoder->forward(torch::zeros({1, 5, 64, 64}))) == shape_of(stages.back()));
    CHECK(tinct::chip_size_multiple(EncoderSpec{name, 5, 1.0}) == strides.back());
  }
}

TEST_CASE("every encoder with the decoder gives chip-sized outputs", "[models]") {
  torch::NoGradGuard no_grad;
  for (const std::string& name : tinct::encoder_names()) {
    for (const double width : {1.0, 0.5}) {
      for (const bool skips : {true, false}) {
        for (const std::string output : {"lab", "ab_bins"}) {
          for (const int bands : {3, 6, 12}) {
            ColourisationModel model(model_spec(name, bands, width, skips, output));
            const std::int64_t channels = output == "lab" ? 3 : 1 + 10 * 10;
            CHECK(model->decoder->output_channels() == channels);
            for (const std::int64_t size : {32, 64}) {
              INFO(name << " width " << width << (skips ? " skips " : " no skips ") << output
                        << " " << bands << " bands " << size << " px");
              // Training mode: BN on batch statistics, the harder case for 1x1 maps.
              const torch::Tensor out = model(torch::randn({2, bands, size, size}));
              CHECK(shape_of(out) == Shape{2, channels, size, size});
              CHECK(torch::isfinite(out).all().item<bool>());
            }
          }
        }
      }
    }
  }
}

TEST_CASE("the colourisation model trains end to end and names its parts", "[models]") {
  ColourisationModel model(model_spec("compact", 4, 1.0, true, "lab"));
  const auto params = model->named_parameters();
  // Compact stages 16/32/64/128/256: steps halve from 128, concatenating the stage at
  // each stride; the 1x1 head maps the last 16 channels to Lab.
  CHECK(shape_of(params["decoder.up8.conv.weight"]) == Shape{128, 384, 3, 3});
  CHECK(shape_of(params["decoder.up4.conv.weight"]) == Shape{64, 192, 3, 3});
  CHECK(shape_of(params["decoder.up2.conv.weight"]) == Shape{32, 96, 3, 3});
  CHECK(shape_of(params["decoder.up1.conv.weight"]) == Shape{16, 48, 3, 3});
  CHECK(shape_of(params["decoder.head.weight"]) == Shape{3, 16, 1, 1});
  CHECK(params.contains("encoder.stem.weight"));

  torch::manual_seed(1);
  const torch::Tensor x = torch::randn({2, 4, 32, 32});
  const torch::Tensor target = torch::rand({2, 3, 32, 32});
  torch::optim::SGD optimizer(model->parameters(), torch::optim::SGDOptions(0.05));
  const double first = torch::mse_loss(model(x), target).item<double>();
  for (int step = 0; step < 5; ++step) {
    optimizer.zero_grad();
    const torch::Tensor loss = torch::mse_loss(model(x), target);
    loss.backward();
    optimizer.step();
  }
  CHECK(params["encoder.stem.weight"].grad().abs().sum().item<double>() > 0);
  CHECK(torch::mse_loss(model(x), target).item<double>() < first);
}

TEST_CASE("decoder channels follow the spec and skips", "[models]") {
  ModelSpec spec = model_spec("resnet18", 3, 1.0, false, "ab_bins");
  spec.decoder.channels = 64;
  ColourisationModel model(spec);
  const auto params = model->named_parameters();
  // No skips: each step sees only the previous one; 64, 32, 16, 8, 8 (not below 8).
  CHECK(shape_of(params["decoder.up16.conv.weight"]) == Shape{64, 512, 3, 3});
  CHECK(shape_of(params["decoder.up8.conv.weight"]) == Shape{32, 64, 3, 3});
  CHECK(shape_of(params["decoder.up2.conv.weight"]) == Shape{8, 16, 3, 3});
  CHECK(shape_of(params["decoder.up1.conv.weight"]) == Shape{8, 8, 3, 3});
  CHECK(shape_of(params["decoder.head.weight"]) == Shape{101, 8, 1, 1});
  // With skips the stride-2 step takes the stem before the maxpool (64 channels) and the
  // stride-4 step layer1 (not the maxpool output).
  ColourisationModel skipped(model_spec("resnet18", 3, 1.0, true, "lab"));
  const auto skip_params = skipped->named_parameters();
  CHECK(shape_of(skip_params["decoder.up4.conv.weight"]) == Shape{64, 192, 3, 3});
  CHECK(shape_of(skip_params["decoder.up2.conv.weight"]) == Shape{32, 128, 3, 3});
  CHECK(shape_of(skip_params["decoder.up1.conv.weight"]) == Shape{16, 32, 3, 3});
}

TEST_CASE("chips that do not fit the encoder's stride are refused", "[models]") {
  torch::NoGradGuard no_grad;
  ColourisationModel resnet(model_spec("resnet18", 3, 1.0, true, "lab"));
  CHECK_THAT(usage_error_of([&] { resnet(torch::zeros({1, 3, 48, 48})); }),
             Contains("multiples of 32 (encoder resnet18)"));
  CHECK_THAT(usage_error_of([&] { resnet(torch::zeros({1, 4, 64, 64})); }),
             Contains("(B, 3, H, W)"));
  ColourisationModel compact(model_spec("compact", 3, 1.0, true, "lab"));
  compact->eval();
  CHECK(shape_of(compact(torch::zeros({1, 3, 48, 48}))) == Shape{1, 3, 48, 48});
}

TEST_CASE("classifier head pools, drops out and maps to classes", "[models]") {
  ClassifierHead plain(256, 5, 0.2);
  CHECK(tinct::parameter_count(*plain) == 256 * 5 + 5);
  ClassifierHead hidden(256, 5, 0.2, 64);
  CHECK(tinct::parameter_count(*hidden) == 256 * 64 + 64 + 64 * 5 + 5);
  CHECK(shape_of(hidden(torch::randn({3, 256, 4, 4}))) == Shape{3, 5});
  hidden->eval();
  const torch::Tensor x = torch::randn({2, 256, 2, 2});
  CHECK(torch::equal(hidden(x), hidden(x)));  // no dropout in eval
  CHECK_THAT(usage_error_of([] { ClassifierHead(256, 5, 1.0); }), Contains("dropout"));
}

TEST_CASE("ab bin centres tile [-110, 110] with a slowest", "[models]") {
  const auto two = tinct::ab_bin_centres(2);
  REQUIRE(two.size() == 4);
  CHECK(two[0] == std::pair<float, float>{-55.0f, -55.0f});
  CHECK(two[1] == std::pair<float, float>{-55.0f, 55.0f});
  CHECK(two[2] == std::pair<float, float>{55.0f, -55.0f});
  const auto fine = tinct::ab_bin_centres(22);  // 10-unit bins
  REQUIRE(fine.size() == 484);
  CHECK(fine.front().first == Approx(-105.0f));
  CHECK(fine[1].second == Approx(-95.0f));
  CHECK(fine.back().second == Approx(105.0f));
  CHECK(tinct::decoder_output_channels({true, 0, "ab_bins", 22}) == 485);
  CHECK(tinct::decoder_output_channels({}) == 3);
}

TEST_CASE("model spec YAML round trips exactly", "[models]") {
  std::vector<ModelSpec> specs(4);
  specs[1] = model_spec("resnet34", 12, 0.15, false, "ab_bins");
  specs[1].decoder.channels = 96;
  specs[2] = model_spec("resnet18", 3, 1.0 / 3.0, true, "lab");
  specs[3] = model_spec("compact", 7, 0.75, true, "ab_bins");
  specs[3].decoder.ab_bins_per_axis = 22;
  specs[0].encoder.bands = 1;
  for (const ModelSpec& spec : specs) {
    const std::string text = tinct::model_spec_yaml(spec);
    INFO(text);
    CHECK(tinct::model_spec_from_yaml(text) == spec);
    CHECK(tinct::model_spec_yaml(tinct::model_spec_from_yaml(text)) == text);
  }
  const std::string text = tinct::model_spec_yaml(specs[1]);
  CHECK_THAT(text, Contains("name: resnet34"));
  CHECK_THAT(text, Contains("width: 0.15\n"));
  CHECK_THAT(text, Contains("skips: false"));
}

TEST_CASE("model spec errors name the key and list valid names", "[models]") {
  const std::string good = tinct::model_spec_yaml(model_spec("resnet18", 3, 1.0, true, "lab"));
  std::string bad = good;
  bad.replace(bad.find("resnet18"), 8, "resnet50");
  const std::string message =
      usage_error_of([&] { tinct::model_spec_from_yaml(bad, "run/encoder.pt"); });
  CHECK_THAT(message,
             Contains("run/encoder.pt: encoder.name: expected one of compact, resnet18, resnet34"));
  CHECK_THAT(usage_error_of([] { tinct::make_encoder(EncoderSpec{"resnet50", 3, 1.0}); }),
             Contains("unknown encoder \"resnet50\"; valid encoders: compact, resnet18, resnet34"));
  CHECK_THAT(usage_error_of([] { ColourisationModel(model_spec("vgg", 3, 1.0, true, "lab")); }),
             Contains("valid encoders: compact, resnet18, resnet34"));
  CHECK_THAT(usage_error_of([&] { tinct::model_spec_from_yaml(good + "extra: 1\n"); }),
             Contains("extra: unknown key"));
  CHECK_THAT(usage_error_of([] { tinct::model_spec_from_yaml("encoder: {name: compact}\n"); }),
             Contains("encoder.bands: required"));
}

TEST_CASE("the model section of a config", "[models]") {
  {
    const ConfigNode root = ConfigNode::from_text("model: {}\n", "p.yaml", ".");
    const ModelSpec spec = tinct::read_model_spec(root.section("model"), 6);
    ModelSpec expected;
    expected.encoder.bands = 6;
    CHECK(spec == expected);
    CHECK_THAT(tinct::resolved_text(root), Contains("encoder: compact"));
  }
  {
    const ConfigNode root = ConfigNode::from_text(
        "model:\n  encoder: resnet34\n  width: 0.5\n  skips: false\n  decoder_channels: 128\n"
        "  output: ab_bins\n",
        "p.yaml", ".");
    const ModelSpec spec = tinct::read_model_spec(root.section("model"), 12);
    CHECK(spec.encoder == EncoderSpec{"resnet34", 12, 0.5});
    CHECK(spec.decoder == tinct::DecoderSpec{false, 128, "ab_bins", 22});
  }
  const auto error_of = [](const std::string& text) {
    const ConfigNode root = ConfigNode::from_text(text, "p.yaml", ".");
    return usage_error_of([&] { tinct::read_model_spec(root.section("model"), 3); });
  };
  const std::string typo = error_of("model:\n  encoder: resnt18\n");
  CHECK_THAT(typo, Contains("p.yaml: model.encoder: expected one of compact, resnet18, resnet34"));
  CHECK_THAT(typo, Contains("did you mean \"resnet18\"?"));
  CHECK_THAT(error_of("model:\n  widht: 2\n"),
             Contains("model.widht: unknown key; did you mean \"width\"?"));
  CHECK_THAT(error_of("model:\n  width: 0\n"),
             Contains("model.width: expected a number from 0.125 to 4"));
  CHECK_THAT(error_of("model:\n  ab_bins_per_axis: 10\n"),
             Contains("model.ab_bins_per_axis: applies only with output: ab_bins"));
  CHECK_THAT(error_of("model:\n  output: bins\n"), Contains("expected one of lab, ab_bins"));
}
