// How numbers read in the report, its sentences and the terminal table: fixed decimals
// that never hide a sign (an interval end of 0.004 is not printed as 0.00), p values in the
// usual style, shares as percentages. ASCII only, so terminal and HTML agree.
#pragma once

#include <initializer_list>
#include <string>

namespace tinct {

std::string fixed_text(double value, int decimals);  // "0.080", "-0.013"; never "-0.000"
std::string signed_text(double value, int decimals);  // "+0.080", "-0.013", "0.000"

// The fewest decimals in [min, max] at which no non-zero value rounds to zero.
int decimals_keeping_sign(std::initializer_list<double> values, int min = 2, int max = 4);

// "0.41", "0.004", "< 0.001". Values below `alpha` never print as alpha or above
// (0.0496 -> "0.0496", not "0.050"), so the printed p agrees with the verdict.
std::string p_text(double p, double alpha = 0.05);

std::string percent_text(double share);  // 0.183 -> "18 %", 0.004 -> "0.4 %"
std::string count_text(double value);     // 10 -> "10", 2.5 -> "2.5"

}  // namespace tinct
