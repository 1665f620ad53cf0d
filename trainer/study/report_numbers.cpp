#include "study/report_numbers.hpp"

#include <cmath>
#include <cstdio>

namespace tinct {

std::string fixed_text(double value, int decimals) {
  if (!std::isfinite(value)) return "n/a";
  char text[64];
  std::snprintf(text, sizeof(text), "%.*f", decimals, value);
  std::string out = text;
  // "-0.000" reads as a sign the value does not have.
  if (out[0] == '-' && out.find_first_not_of("-0.") == std::string::npos) out.erase(0, 1);
  return out;
}

std::string signed_text(double value, int decimals) {
  const std::string out = fixed_text(value, decimals);
  if (out[0] == '-' || out.find_first_not_of("0.") == std::string::npos || out == "n/a") {
    return out;
  }
  return "+" + out;
}

int decimals_keeping_sign(std::initializer_list<double> values, int min, int max) {
  int decimals = min;
  for (const double value : values) {
    while (decimals < max && value != 0 && std::isfinite(value) &&
           std::round(std::fabs(value) * std::pow(10.0, decimals)) == 0) {
      ++decimals;
    }
  }
  return decimals;
}

std::string p_text(double p, double alpha) {
  if (!std::isfinite(p)) return "n/a";
  if (p < 0.001) return "< 0.001";
  int decimals = p < 0.1 ? 3 : 2;
  // Rounding must not carry a p below alpha up to alpha (or one above it down below).
  while (decimals < 6) {
    const double shown = std::stod(fixed_text(p, decimals));
    if ((p < alpha) == (shown < alpha)) break;
    ++decimals;
  }
  return fixed_text(p, decimals);
}

std::string percent_text(double share) {
  const double percent = share * 100;
  // A share just short of all (or of none) must not read as 100 % (or 0 %).
  const bool near_end = std::fabs(percent) < 1 || (percent > 99 && percent < 100);
  const int decimals = percent != 0 && near_end ? 1 : 0;
  return fixed_text(percent, decimals) + " %";
}

std::string count_text(double value) {
  if (value == std::round(value)) return fixed_text(value, 0);
  char text[64];
  std::snprintf(text, sizeof(text), "%g", value);
  return text;
}

}  // namespace tinct
