// sRGB <-> CIE Lab against REFERENCES.md section 2: the formula column (numpy), the
// transfer-function table, OpenCV's 8-bit codes and skimage's CIE76 values; plus round
// trips and the planar fast path against the scalar one.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <random>
#include <vector>

#include "colour/srgb_lab.hpp"

using Catch::Matchers::WithinAbs;

namespace {

struct LabRow {
  double r, g, b;
  tinct::Lab lab;
};

// REFERENCES.md section 2, "formula" column: IEC 61966-2-1 with its 4-decimal matrix,
// white = row sums, CIE 15 Lab, computed in numpy.
const std::vector<LabRow> kFormulaRows{
    {1, 1, 1, {100.0000, 0.0000, 0.0000}},
    {0.5, 0.5, 0.5, {53.3890, 0, 0}},
    {1, 0, 0, {53.2329, 80.1053, 67.2228}},
    {0, 1, 0, {87.7370, -86.1884, 83.1861}},
    {0, 0, 1, {32.3026, 79.1936, -107.8537}},
    {0.2, 0.4, 0.6, {42.0100, -0.1474, -32.8446}},
    {0, 0, 0, {0, 0, 0}},
};

void check_lab(const tinct::Lab& ours, const tinct::Lab& theirs, double tolerance) {
  CHECK_THAT(ours.L, WithinAbs(theirs.L, tolerance));
  CHECK_THAT(ours.a, WithinAbs(theirs.a, tolerance));
  CHECK_THAT(ours.b, WithinAbs(theirs.b, tolerance));
}

}  // namespace

TEST_CASE("sRGB -> Lab reproduces the REFERENCES.md formula column to 1e-4") {
  for (const auto& row : kFormulaRows) {
    INFO("sRGB " << row.r << ", " << row.g << ", " << row.b);
    check_lab(tinct::srgb_to_lab(row.r, row.g, row.b), row.lab, 1e-4);
  }
}

TEST_CASE("sRGB transfer function matches the REFERENCES.md table to 1e-9") {
  // REFERENCES.md section 2: IEC 61966-2-1 formula, values computed in numpy.
  CHECK_THAT(tinct::srgb_to_linear(0.5), WithinAbs(0.2140411405, 1e-9));
  CHECK_THAT(tinct::srgb_to_linear(0.2), WithinAbs(0.0331047666, 1e-9));
  CHECK_THAT(tinct::srgb_to_linear(0.4), WithinAbs(0.1328683216, 1e-9));
  CHECK_THAT(tinct::srgb_to_linear(0.04045), WithinAbs(0.0031308050, 1e-9));  // lower branch
  CHECK_THAT(tinct::srgb_to_linear(128.0 / 255.0), WithinAbs(0.2158605001, 1e-9));
  CHECK_THAT(tinct::srgb_to_linear(0.6), WithinAbs(0.3185467781, 1e-9));
  CHECK_THAT(tinct::linear_to_srgb(0.0031308), WithinAbs(0.0404499360, 1e-9));
  CHECK_THAT(tinct::linear_to_srgb(0.18), WithinAbs(0.4613561295, 1e-9));
}

TEST_CASE("sRGB -> Lab -> sRGB -> Lab round trips to 1e-9") {
  std::mt19937 rng(1);
  std::uniform_real_distribution<double> unit(0.0, 1.0);
  for (int i = 0; i < 1000; ++i) {
    const double r = unit(rng), g = unit(rng), b = unit(rng);
    const tinct::Lab lab = tinct::srgb_to_lab(r, g, b);
    double r2, g2, b2;
    tinct::lab_to_srgb(lab, r2, g2, b2);
    CHECK_THAT(r2, WithinAbs(r, 1e-9));
    CHECK_THAT(g2, WithinAbs(g, 1e-9));
    CHECK_THAT(b2, WithinAbs(b, 1e-9));
    check_lab(tinct::srgb_to_lab(r2, g2, b2), lab, 1e-9);
  }
}

TEST_CASE("Lab -> sRGB clamps out-of-gamut colours to [0, 1]") {
  double r, g, b;
  tinct::lab_to_srgb({50, 120, -120}, r, g, b);  // far outside the sRGB gamut
  for (double v : {r, g, b}) {
    CHECK(v >= 0.0);
    CHECK(v <= 1.0);
  }
  tinct::lab_to_srgb({100, 0, 0}, r, g, b);
  CHECK_THAT(r, WithinAbs(1.0, 1e-9));
  CHECK_THAT(g, WithinAbs(1.0, 1e-9));
  CHECK_THAT(b, WithinAbs(1.0, 1e-9));
}

TEST_CASE("8-bit Lab codes agree with OpenCV cvtColor within 2 codes") {
  // REFERENCES.md section 2, 8-bit table: OpenCV 4.6.0 cvtColor on uint8 BGR; OpenCV is
  // itself off by up to 2 codes from the exact formula, hence the tolerance.
  struct CodeRow {
    int r, g, b, L, a, bb;
  };
  const std::vector<CodeRow> rows{
      {255, 255, 255, 255, 128, 128}, {128, 128, 128, 137, 128, 128}, {255, 0, 0, 136, 208, 195},
      {0, 255, 0, 224, 42, 211},      {0, 0, 255, 82, 207, 20},       {51, 102, 153, 107, 128, 95},
      {0, 0, 0, 0, 128, 128},
  };
  for (const auto& row : rows) {
    INFO("sRGB " << row.r << ", " << row.g << ", " << row.b);
    const tinct::LabCode code =
        tinct::encode_lab(tinct::srgb_to_lab(row.r / 255.0, row.g / 255.0, row.b / 255.0));
    CHECK(std::abs(code.L - row.L) <= 2);
    CHECK(std::abs(code.a - row.a) <= 2);
    CHECK(std::abs(code.b - row.bb) <= 2);
  }
}

TEST_CASE("Lab encoding rounds, clamps and decodes exactly") {
  // The encoding (L*255/100, a+128, b+128) is common practice (OpenCV CV_8UC3).
  const tinct::LabCode white = tinct::encode_lab({100, 0, 0});
  CHECK((white.L == 255 && white.a == 128 && white.b == 128));
  const tinct::LabCode clamped = tinct::encode_lab({-3, -200, 200});
  CHECK((clamped.L == 0 && clamped.a == 0 && clamped.b == 255));
  const tinct::LabCode rounded = tinct::encode_lab({50, 0.5, -0.4});  // 127.5 rounds up
  CHECK((rounded.L == 128 && rounded.a == 129 && rounded.b == 128));
  const tinct::LabCode nan = tinct::encode_lab({NAN, NAN, NAN});
  CHECK((nan.L == 0 && nan.a == 0 && nan.b == 0));
  const tinct::Lab decoded = tinct::decode_lab({255, 0, 255});
  CHECK(decoded.L == 100.0);
  CHECK(decoded.a == -128.0);
  CHECK(decoded.b == 127.0);
  for (int v = 0; v < 256; ++v) {
    const auto c = static_cast<std::uint8_t>(v);
    const tinct::LabCode again = tinct::encode_lab(tinct::decode_lab({c, c, c}));
    CHECK((again.L == c && again.a == c && again.b == c));
  }
}

TEST_CASE("CIE76 delta E matches skimage's worked values") {
  // REFERENCES.md section 2: skimage deltaE_cie76 on skimage's own Lab, which differs from
  // the formula by up to 0.02 per component, hence 0.03.
  CHECK_THAT(tinct::delta_e76(tinct::srgb_to_lab(1, 0, 0), tinct::srgb_to_lab(0.2, 0.4, 0.6)),
             WithinAbs(128.7431, 0.03));
  CHECK_THAT(tinct::delta_e76(tinct::srgb_to_lab(0.5, 0.5, 0.5), tinct::srgb_to_lab(1, 1, 1)),
             WithinAbs(46.6110, 0.03));
  CHECK(tinct::delta_e76({0, 0, 0}, {3, 4, 12}) == 13.0);  // arithmetic: 9 + 16 + 144 = 169
}

TEST_CASE("Planar fast path equals the scalar path within one code") {
  std::mt19937 rng(2);
  std::uniform_real_distribution<float> unit(0.0f, 1.0f);
  std::vector<float> r, g, b;
  for (int v = 0; v < 256; ++v) {  // every grey level and primary ramp
    for (int channel = 0; channel < 4; ++channel) {
      const float x = v / 255.0f;
      r.push_back(channel == 0 || channel == 3 ? x : 0.0f);
      g.push_back(channel == 1 || channel == 3 ? x : 0.0f);
      b.push_back(channel == 2 || channel == 3 ? x : 0.0f);
    }
  }
  for (int i = 0; i < 100000; ++i) {
    r.push_back(unit(rng));
    g.push_back(unit(rng));
    b.push_back(unit(rng));
  }
  const std::size_t n = r.size();
  std::vector<std::uint8_t> L(n), a(n), bb(n);
  tinct::srgb_to_lab_codes(r.data(), g.data(), b.data(), n, L.data(), a.data(), bb.data());
  int worst = 0;
  std::size_t differing = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const tinct::LabCode slow = tinct::encode_lab(tinct::srgb_to_lab(r[i], g[i], b[i]));
    const int diff =
        std::max({std::abs(L[i] - slow.L), std::abs(a[i] - slow.a), std::abs(bb[i] - slow.b)});
    worst = std::max(worst, diff);
    if (diff > 0) ++differing;
  }
  INFO(differing << " of " << n << " colours differ by a code");
  CHECK(worst <= 1);
  CHECK(differing < n / 100);
}

TEST_CASE("Planar fast path clamps out-of-range input and maps NaN to black") {
  const float r[] = {2.0f, -1.0f, NAN}, g[] = {1.5f, -0.5f, NAN}, b[] = {1.0f, 0.0f, NAN};
  std::uint8_t L[3], a[3], bb[3];
  tinct::srgb_to_lab_codes(r, g, b, 3, L, a, bb);
  CHECK((L[0] == 255 && a[0] == 128 && bb[0] == 128));
  for (int i = 1; i < 3; ++i) CHECK((L[i] == 0 && a[i] == 128 && bb[i] == 128));
}
