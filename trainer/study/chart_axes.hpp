// Axes for the report's charts: "nice" tick values (steps of 1, 2 or 5 x 10^k), linear or
// log scales from data to pixels, and a frame that draws the grid, the axis lines, tick
// labels and axis titles (with units) around a plot area. Categorical axes are linear
// axes over 0..n-1 with one labelled tick per category.
#pragma once

#include <string>
#include <vector>

#include "study/svg_writer.hpp"

namespace tinct {

struct Tick {
  double value = 0;
  std::string label;
};

struct Axis {
  std::string title;  // with its unit, e.g. "labels per class (log scale)"
  double low = 0, high = 1;
  bool log = false;
  std::vector<Tick> ticks;
  double tick_rotate = 0;  // degrees; long category names read better at an angle
};

// Ticks at multiples of a 1/2/5 step covering [low, high]; the axis range is widened to
// the outer ticks. Labels carry the step's decimals. low == high is widened first.
Axis nice_axis(const std::string& title, double low, double high, int target_ticks = 5);

// An axis for a score in [0, 1] (F1, accuracy): spans at least 0.2, so a narrow spread of
// scores is not blown up to look like a large one, and never leaves [0, 1].
Axis score_axis(const std::string& title, double low, double high);

// One tick per category at 0..n-1, the range padded by half a category on each side.
Axis category_axis(const std::string& title, const std::vector<std::string>& names);

struct PlotArea {
  double left = 0, top = 0, width = 0, height = 0;
  double right() const { return left + width; }
  double bottom() const { return top + height; }
};

class ChartFrame {
 public:
  ChartFrame(PlotArea area, Axis x, Axis y);

  double x(double value) const;  // data to pixels
  double y(double value) const;
  const PlotArea& area() const { return area_; }
  const Axis& x_axis() const { return x_; }
  const Axis& y_axis() const { return y_; }

  // Horizontal grid at the y ticks (vertical ones too when x_grid), axis lines, tick labels
  // and axis titles. Draw it first: data goes on top.
  void draw(SvgWriter& svg, bool x_grid = false) const;

 private:
  static double position(const Axis& axis, double value, double from, double to);

  PlotArea area_;
  Axis x_, y_;
};

}  // namespace tinct
