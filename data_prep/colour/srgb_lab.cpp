// The formula in double for single colours; the chip fast path samples the transfer
// function and the Lab f() into tables once and interpolates them in float.
#include "colour/srgb_lab.hpp"

#include <algorithm>
#include <array>
#include <cmath>

namespace tinct {

namespace {

using Matrix3 = std::array<std::array<double, 3>, 3>;

// IEC 61966-2-1 sRGB -> XYZ (D65) with its published 4 decimals.
constexpr Matrix3 kRgbToXyz{{{0.4124, 0.3576, 0.1805},
                             {0.2126, 0.7152, 0.0722},
                             {0.0193, 0.1192, 0.9505}}};

constexpr Matrix3 inverse(const Matrix3& m) {
  const double c00 = m[1][1] * m[2][2] - m[1][2] * m[2][1];
  const double c01 = m[1][2] * m[2][0] - m[1][0] * m[2][2];
  const double c02 = m[1][0] * m[2][1] - m[1][1] * m[2][0];
  const double det = m[0][0] * c00 + m[0][1] * c01 + m[0][2] * c02;
  return {{{c00 / det, (m[0][2] * m[2][1] - m[0][1] * m[2][2]) / det,
            (m[0][1] * m[1][2] - m[0][2] * m[1][1]) / det},
           {c01 / det, (m[0][0] * m[2][2] - m[0][2] * m[2][0]) / det,
            (m[0][2] * m[1][0] - m[0][0] * m[1][2]) / det},
           {c02 / det, (m[0][1] * m[2][0] - m[0][0] * m[2][1]) / det,
            (m[0][0] * m[1][1] - m[0][1] * m[1][0]) / det}}};
}

constexpr Matrix3 kXyzToRgb = inverse(kRgbToXyz);

// White = row sums, summed in the order of the matrix product, so that sRGB white maps
// to exactly x/Xn = y/Yn = z/Zn = 1 and hence a* = b* = 0.
constexpr std::array<double, 3> kWhite{kRgbToXyz[0][0] + kRgbToXyz[0][1] + kRgbToXyz[0][2],
                                       kRgbToXyz[1][0] + kRgbToXyz[1][1] + kRgbToXyz[1][2],
                                       kRgbToXyz[2][0] + kRgbToXyz[2][1] + kRgbToXyz[2][2]};

// CIE 15: the exact rational constants, not the rounded 0.008856 and 903.3.
constexpr double kEpsilon = 216.0 / 24389.0;
constexpr double kKappa = 24389.0 / 27.0;

double lab_f(double t) { return t > kEpsilon ? std::cbrt(t) : (kKappa * t + 16.0) / 116.0; }

double lab_f_inverse(double f) {
  const double t = f * f * f;
  return t > kEpsilon ? t : (116.0 * f - 16.0) / kKappa;
}

std::array<double, 3> multiply(const Matrix3& m, double x, double y, double z) {
  return {m[0][0] * x + m[0][1] * y + m[0][2] * z, m[1][0] * x + m[1][1] * y + m[1][2] * z,
          m[2][0] * x + m[2][1] * y + m[2][2] * z};
}

double clamp01(double v) { return v > 0.0 ? (v < 1.0 ? v : 1.0) : 0.0; }

std::uint8_t to_code(double v) {
  if (!(v > 0.0)) return 0;  // also NaN
  if (v >= 255.0) return 255;
  return static_cast<std::uint8_t>(std::lround(v));
}

// Both functions the fast path needs are sampled on [0,1] and interpolated linearly:
// at most 1e-7 off in linear light and 4e-6 in f() (near t = eps), under 0.005 of a code.
class UnitTable {
 public:
  static constexpr int kSize = 4096;

  template <class F>
  explicit UnitTable(F f) {
    for (int i = 0; i <= kSize; ++i) values_[i] = static_cast<float>(f(double(i) / kSize));
  }

  float operator()(float x) const {
    const float position = x * kSize;
    int i = static_cast<int>(position);
    if (i > kSize - 1) i = kSize - 1;
    const float fraction = position - static_cast<float>(i);
    return values_[i] + fraction * (values_[i + 1] - values_[i]);
  }

 private:
  std::array<float, kSize + 1> values_;
};

struct FastPath {
  UnitTable linear{srgb_to_linear};
  UnitTable f{lab_f};
  std::array<std::array<float, 3>, 3> to_unit_xyz;  // rows of kRgbToXyz / white

  FastPath() {
    for (int row = 0; row < 3; ++row)
      for (int col = 0; col < 3; ++col)
        to_unit_xyz[row][col] = static_cast<float>(kRgbToXyz[row][col] / kWhite[row]);
  }
};

const FastPath& fast_path() {
  static const FastPath tables;
  return tables;
}

float clamp01f(float v) { return v > 0.0f ? (v < 1.0f ? v : 1.0f) : 0.0f; }  // NaN -> 0

std::uint8_t to_code_fast(float v) {
  v += 0.5f;
  if (!(v > 0.0f)) return 0;
  if (v >= 255.0f) return 255;
  return static_cast<std::uint8_t>(v);
}

}  // namespace

double srgb_to_linear(double v) {
  return v <= 0.04045 ? v / 12.92 : std::pow((v + 0.055) / 1.055, 2.4);
}

double linear_to_srgb(double l) {
  return l <= 0.0031308 ? 12.92 * l : 1.055 * std::pow(l, 1.0 / 2.4) - 0.055;
}

Lab srgb_to_lab(double r, double g, double b) {
  const auto xyz = multiply(kRgbToXyz, srgb_to_linear(r), srgb_to_linear(g), srgb_to_linear(b));
  const double fx = lab_f(xyz[0] / kWhite[0]);
  const double fy = lab_f(xyz[1] / kWhite[1]);
  const double fz = lab_f(xyz[2] / kWhite[2]);
  return {116.0 * fy - 16.0, 500.0 * (fx - fy), 200.0 * (fy - fz)};
}

void lab_to_srgb(const Lab& lab, double& r, double& g, double& b) {
  const double fy = (lab.L + 16.0) / 116.0;
  const double x = kWhite[0] * lab_f_inverse(fy + lab.a / 500.0);
  const double y = kWhite[1] * lab_f_inverse(fy);
  const double z = kWhite[2] * lab_f_inverse(fy - lab.b / 200.0);
  const auto rgb = multiply(kXyzToRgb, x, y, z);
  r = linear_to_srgb(clamp01(rgb[0]));
  g = linear_to_srgb(clamp01(rgb[1]));
  b = linear_to_srgb(clamp01(rgb[2]));
}

LabCode encode_lab(const Lab& lab) {
  return {to_code(lab.L * 255.0 / 100.0), to_code(lab.a + 128.0), to_code(lab.b + 128.0)};
}

Lab decode_lab(LabCode code) {
  return {code.L * 100.0 / 255.0, code.a - 128.0, code.b - 128.0};
}

double delta_e76(const Lab& first, const Lab& second) {
  const double dL = first.L - second.L, da = first.a - second.a, db = first.b - second.b;
  return std::sqrt(dL * dL + da * da + db * db);
}

float srgb_to_linear_fast(float v) { return fast_path().linear(clamp01f(v)); }

void linear_to_lab_codes(const float* r, const float* g, const float* b, std::size_t n,
                         std::uint8_t* L, std::uint8_t* a, std::uint8_t* b_out) {
  const FastPath& t = fast_path();
  const auto& m = t.to_unit_xyz;
  for (std::size_t i = 0; i < n; ++i) {
    const float fx = t.f(m[0][0] * r[i] + m[0][1] * g[i] + m[0][2] * b[i]);
    const float fy = t.f(m[1][0] * r[i] + m[1][1] * g[i] + m[1][2] * b[i]);
    const float fz = t.f(m[2][0] * r[i] + m[2][1] * g[i] + m[2][2] * b[i]);
    L[i] = to_code_fast((116.0f * fy - 16.0f) * 2.55f);
    a[i] = to_code_fast(500.0f * (fx - fy) + 128.0f);
    b_out[i] = to_code_fast(200.0f * (fy - fz) + 128.0f);
  }
}

void srgb_to_lab_codes(const float* r, const float* g, const float* b, std::size_t n,
                       std::uint8_t* L, std::uint8_t* a, std::uint8_t* b_out) {
  constexpr std::size_t kRun = 1024;  // linear values of a run of pixels stay in cache
  std::array<float, 3 * kRun> linear;
  for (std::size_t start = 0; start < n; start += kRun) {
    const std::size_t count = std::min(kRun, n - start);
    for (std::size_t i = 0; i < count; ++i) {
      linear[i] = srgb_to_linear_fast(r[start + i]);
      linear[kRun + i] = srgb_to_linear_fast(g[start + i]);
      linear[2 * kRun + i] = srgb_to_linear_fast(b[start + i]);
    }
    linear_to_lab_codes(linear.data(), linear.data() + kRun, linear.data() + 2 * kRun, count, L + start,
                        a + start, b_out + start);
  }
}

}  // namespace tinct
