#include "study/chart_axes.hpp"

#include <algorithm>
#include <cmath>

#include "study/report_numbers.hpp"

namespace tinct {

namespace {

const char* const kAxisColour = "#444444";
const char* const kGridColour = "#e3e3e3";

double nice_step(double span, int target_ticks) {
  const double rough = span / std::max(1, target_ticks);
  const double magnitude = std::pow(10.0, std::floor(std::log10(rough)));
  for (const double factor : {1.0, 2.0, 5.0, 10.0}) {
    if (factor * magnitude >= rough * (1 - 1e-9)) return factor * magnitude;  // 0.6 / 6 is 0.10000000000000002
  }
  return 10 * magnitude;
}

}  // namespace

Axis nice_axis(const std::string& title, double low, double high, int target_ticks) {
  if (!std::isfinite(low) || !std::isfinite(high)) low = 0, high = 1;
  if (high < low) std::swap(low, high);
  if (high - low < 1e-12) {
    const double pad = low == 0 ? 1 : std::fabs(low) * 0.1;
    low -= pad, high += pad;
  }
  const double step = nice_step(high - low, target_ticks);
  const int decimals = std::max(0, static_cast<int>(-std::floor(std::log10(step) + 1e-9)));
  Axis axis;
  axis.title = title;
  axis.low = std::floor(low / step + 1e-6) * step;  // 0.3 / 0.1 is 2.9999999999999996
  axis.high = std::ceil(high / step - 1e-6) * step;
  for (double value = axis.low; value <= axis.high + step * 1e-6; value += step) {
    const double snapped = std::round(value / step) * step;  // no 0.30000000000000004
    axis.ticks.push_back({snapped, fixed_text(snapped, decimals)});
  }
  return axis;
}

Axis score_axis(const std::string& title, double low, double high) {
  constexpr double kMinimumSpan = 0.2;
  low = std::clamp(low, 0.0, 1.0), high = std::clamp(high, low, 1.0);
  if (high - low < kMinimumSpan) {
    const double middle = std::clamp((low + high) / 2, kMinimumSpan / 2, 1 - kMinimumSpan / 2);
    low = middle - kMinimumSpan / 2, high = middle + kMinimumSpan / 2;
  }
  return nice_axis(title, low, high, 6);
}

Axis category_axis(const std::string& title, const std::vector<std::string>& names) {
  Axis axis;
  axis.title = title;
  axis.low = -0.5;
  axis.high = static_cast<double>(names.size()) - 0.5;
  for (std::size_t i = 0; i < names.size(); ++i) {
    axis.ticks.push_back({static_cast<double>(i), names[i]});
  }
  return axis;
}

ChartFrame::ChartFrame(PlotArea area, Axis x, Axis y)
    : area_(area), x_(std::move(x)), y_(std::move(y)) {}

double ChartFrame::position(const Axis& axis, double value, double from, double to) {
  double t = 0.5;
  if (axis.log && axis.low > 0 && axis.high > axis.low && value > 0) {
    t = std::log(value / axis.low) / std::log(axis.high / axis.low);
  } else if (!axis.log && axis.high > axis.low) {
    t = (value - axis.low) / (axis.high - axis.low);
  }
  return from + t * (to - from);
}

double ChartFrame::x(double value) const { return position(x_, value, area_.left, area_.right()); }
double ChartFrame::y(double value) const { return position(y_, value, area_.bottom(), area_.top); }

void ChartFrame::draw(SvgWriter& svg, bool x_grid) const {
  const Stroke grid{kGridColour, 1};
  const Stroke axis{kAxisColour, 1};
  TextStyle tick_style;
  tick_style.size = 11;
  tick_style.colour = kAxisColour;

  tick_style.anchor = Anchor::end;
  tick_style.centred_v = true;
  for (const auto& tick : y_.ticks) {
    const double py = y(tick.value);
    svg.line({area_.left, py}, {area_.right(), py}, grid);
    svg.line({area_.left - 4, py}, {area_.left, py}, axis);
    svg.text({area_.left - 7, py}, tick.label, tick_style);
  }
  tick_style.centred_v = false;
  tick_style.anchor = x_.tick_rotate != 0 ? Anchor::end : Anchor::middle;
  tick_style.rotate = x_.tick_rotate;
  for (const auto& tick : x_.ticks) {
    const double px = x(tick.value);
    if (x_grid) svg.line({px, area_.top}, {px, area_.bottom()}, grid);
    svg.line({px, area_.bottom()}, {px, area_.bottom() + 4}, axis);
    svg.text({px, area_.bottom() + 17}, tick.label, tick_style);
  }
  svg.line({area_.left, area_.top}, {area_.left, area_.bottom()}, axis);
  svg.line({area_.left, area_.bottom()}, {area_.right(), area_.bottom()}, axis);

  TextStyle title_style;
  title_style.size = 12;
  title_style.anchor = Anchor::middle;
  title_style.colour = "#222222";
  if (!x_.title.empty()) {
    // Angled tick labels need room below them.
    const double below = x_.tick_rotate != 0 ? 78 : 38;
    svg.text({area_.left + area_.width / 2, area_.bottom() + below}, x_.title, title_style);
  }
  if (!y_.title.empty()) {
    title_style.rotate = -90;
    const Point at{area_.left - 46, area_.top + area_.height / 2};
    svg.text(at, y_.title, title_style);
  }
}

}  // namespace tinct
