// The shortcuts of pair's single pass against the plain computations they replace:
// colour by lookup tables against the stretch and sRGB formula, the float rounding
// to uint16 against std::lround, and windows kept from strips against direct copies.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdint>
#include <limits>
#include <random>
#include <vector>

#include "chips/band_storage.hpp"
#include "colour/srgb_lab.hpp"
#include "pairing/colour_composer.hpp"
#include "pairing/window_capture.hpp"

namespace {

// Lab codes the formula way: each band's stretch, then the sRGB fast path.
std::vector<std::uint8_t> formula_codes(const tinct::ColourComposer& composer, const std::vector<float>& rgb) {
  const std::size_t n = rgb.size() / 3;
  std::vector<float> srgb(rgb.size());
  for (std::size_t b = 0; b < 3; ++b) {
    for (std::size_t i = 0; i < n; ++i) {
      srgb[b * n + i] = static_cast<float>(composer.stretches()[b].apply(rgb[b * n + i]));
    }
  }
  std::vector<std::uint8_t> lab(rgb.size());
  tinct::srgb_to_lab_codes(srgb.data(), srgb.data() + n, srgb.data() + 2 * n, n, lab.data(), lab.data() + n,
                           lab.data() + 2 * n);
  return lab;
}

}  // namespace

TEST_CASE("integer colour composed by lookup gives the formula's codes", "[pair]") {
  const std::string type = GENERATE(std::string("Byte"), std::string("UInt16"), std::string("Int16"));
  const double gamma = GENERATE(1.0, 2.2);
  const double low = type == "Int16" ? -32768 : 0, high = type == "Byte" ? 255 : (type == "UInt16" ? 65535 : 32767);
  std::mt19937 rng(11);
  std::uniform_int_distribution<int> integer(static_cast<int>(low), static_cast<int>(high));
  const std::size_t n = 20000;
  std::vector<float> rgb(3 * n);
  for (std::size_t i = 0; i < rgb.size(); ++i) rgb[i] = static_cast<float>(integer(rng));
  // What lookups must pass to the formula: NaN (nodata) and values between integers
  // (a warped view of an integer file).
  for (std::size_t i = 0; i < rgb.size(); i += 97) rgb[i] = std::numeric_limits<float>::quiet_NaN();
  for (std::size_t i = 5; i < rgb.size(); i += 89) rgb[i] = static_cast<float>(integer(rng)) + 0.37f;
  auto fit = tinct::StretchFit::for_types({type, type, type});
  REQUIRE(fit);
  fit->add(rgb.data(), rgb.data() + n, rgb.data() + 2 * n, n);
  tinct::StretchSettings settings;
  settings.gamma = gamma;
  const tinct::ColourComposer composer = fit->composer(settings);
  std::vector<std::uint8_t> lab(3 * n), valid(n, 1);
  composer.compose(rgb.data(), n, lab.data(), valid.data());
  CHECK(lab == formula_codes(composer, rgb));
  CHECK(valid[0] == 0);  // the first pixel's red is NaN
  // The stretch equals one from histograms fed value by value (integers are counted apart).
  for (std::size_t b = 0; b < 3; ++b) {
    tinct::PercentileHistogram direct(low, high, static_cast<std::size_t>(high - low) + 1);
    for (std::size_t i = 0; i < n; ++i) {
      if (std::isfinite(rgb[i]) && std::isfinite(rgb[n + i]) && std::isfinite(rgb[2 * n + i])) direct.add(rgb[b * n + i]);
    }
    const tinct::BandStretch expected = tinct::make_stretch(direct, settings);
    CHECK(composer.stretches()[b].low == expected.low);
    CHECK(composer.stretches()[b].high == expected.high);
  }
}

TEST_CASE("values round to uint16 as std::lround, clamped to 0..65535", "[store]") {
  const float nan = std::numeric_limits<float>::quiet_NaN();
  // 0.49999997 is the float below 0.5: in float, it plus 0.5 rounds up to 1.
  const std::vector<float> values{0.0f, 0.49999997f, 0.5f, 1.5f, 2.5f, 0.75000006f, 1.4999999f, 32767.5f,
                                  65534.5f, 65535.0f, 65535.4f, 65535.6f, 70000.0f, -0.4f, -3.0f, nan,
                                  std::numeric_limits<float>::infinity(), 12345.678f};
  std::vector<std::uint8_t> valid(values.size(), 1);
  valid[11] = 0;
  std::vector<std::uint16_t> u16;
  std::vector<float> f32;
  tinct::to_stored_values(values, valid, tinct::StorageType::uint16, u16, f32);
  for (std::size_t i = 0; i < values.size(); ++i) {
    const double v = values[i];
    long expected = std::isnan(v) ? 0 : std::lround(std::min(std::max(v, 0.0), 65535.0));
    if (!valid[i]) expected = 0;
    INFO("value " << values[i]);
    CHECK(u16[i] == expected);
  }
}

TEST_CASE("windows kept from strips equal the same windows cut from the whole image", "[pair]") {
  const int width = 40, height = 37, size = 8, planes = 3;
  std::vector<float> image(static_cast<std::size_t>(planes) * width * height);
  for (std::size_t i = 0; i < image.size(); ++i) image[i] = static_cast<float>(i % 1013) * 0.5f;
  tinct::WindowCapture capture({{0, 0}, {31, 13}, {5, 29}}, size, {2, 0});
  // Strips of 6 rows, the last one overlapping the one before (chips at a smaller stride).
  std::vector<int> tops{0, 6, 12, 18, 24, 30, 31};
  for (int top : tops) {
    const int rows = std::min(6, height - top);
    std::vector<float> strip(static_cast<std::size_t>(planes) * width * rows);
    for (int p = 0; p < planes; ++p) {
      for (int r = 0; r < rows; ++r) {
        for (int c = 0; c < width; ++c) {
          strip[(static_cast<std::size_t>(p) * rows + r) * width + c] = image[(static_cast<std::size_t>(p) * height + top + r) * width + c];
        }
      }
    }
    capture.add_strip(strip.data(), width, top, rows);
  }
  const std::size_t n = size * size;
  std::vector<float> out(2 * n);
  REQUIRE(capture.read(31, 13, size, size, {0, 2}, out.data()));
  for (int r = 0; r < size; ++r) {
    for (int c = 0; c < size; ++c) {
      CHECK(out[r * size + c] == image[(13 + r) * width + 31 + c]);                                  // plane 0
      CHECK(out[n + r * size + c] == image[(2 * static_cast<std::size_t>(height) + 13 + r) * width + 31 + c]);  // plane 2
    }
  }
  CHECK(capture.read(5, 29, size, size, {2}, out.data()));
  CHECK_FALSE(capture.read(1, 0, size, size, {0}, out.data()));   // not a kept window
  CHECK_FALSE(capture.read(0, 0, size, size, {1}, out.data()));   // plane 1 was not kept
  CHECK_FALSE(capture.read(0, 0, 4, 4, {0}, out.data()));         // another size
}

TEST_CASE("a window whose rows have not all gone by is not served", "[pair]") {
  tinct::WindowCapture capture({{0, 4}}, 4, {0});
  std::vector<float> strip(10 * 6, 1.0f);
  capture.add_strip(strip.data(), 10, 0, 6);  // rows 0..5: the window needs 4..7
  std::vector<float> out(16);
  CHECK_FALSE(capture.read(0, 4, 4, 4, {0}, out.data()));
  capture.add_strip(strip.data(), 10, 6, 6);
  CHECK(capture.read(0, 4, 4, 4, {0}, out.data()));
}
