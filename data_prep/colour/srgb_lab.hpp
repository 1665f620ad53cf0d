// sRGB <-> CIE L*a*b* (D65, 2 degree observer) by the IEC 61966-2-1 formula: the
// transfer function, the 4-decimal sRGB->XYZ matrix with white = its row sums, and
// CIE 15 Lab. Also the 8-bit Lab code (as OpenCV's CV_8UC3), CIE76 distance and a
// planar fast path for whole chips. Leaves out other white points, chromatic
// adaptation and the newer colour differences (CIE94, CIEDE2000).
#pragma once

#include <cstddef>
#include <cstdint>

namespace tinct {

struct Lab {
  double L, a, b;
};

// 8-bit code: L*255/100, a+128, b+128, rounded and clamped to 0..255.
struct LabCode {
  std::uint8_t L, a, b;
};

double srgb_to_linear(double v);
double linear_to_srgb(double l);

// r, g, b: sRGB in [0,1]; values outside are not clamped (the formula extends).
Lab srgb_to_lab(double r, double g, double b);
// Exact inverse of srgb_to_lab; out-of-gamut colours are clamped to [0,1].
void lab_to_srgb(const Lab& lab, double& r, double& g, double& b);

LabCode encode_lab(const Lab& lab);
Lab decode_lab(LabCode code);

double delta_e76(const Lab& first, const Lab& second);

// Planar sRGB (n values per plane) to planar 8-bit Lab codes, by lookup tables; within
// one code of encode_lab(srgb_to_lab(...)). Inputs are clamped to [0,1], NaN counts as
// 0 (mask invalid pixels separately).
void srgb_to_lab_codes(const float* r, const float* g, const float* b, std::size_t n,
                       std::uint8_t* L, std::uint8_t* a, std::uint8_t* b_out);
// The two steps of srgb_to_lab_codes, for callers that tabulate the first per value:
// sRGB (clamped, NaN as 0) to linear light, then planar linear RGB to Lab codes.
float srgb_to_linear_fast(float v);
void linear_to_lab_codes(const float* r, const float* g, const float* b, std::size_t n,
                         std::uint8_t* L, std::uint8_t* a, std::uint8_t* b_out);

}  // namespace tinct
