// A small writer of inline SVG for the report's charts: lines, polylines, filled areas,
// rectangles, markers and text, in pixel coordinates with the origin at the top left.
// Text is escaped; a tooltip becomes a <title> child, which browsers show on hover
// without any script. Knows nothing about data: scales and axes live in chart_axes.
#pragma once

#include <string>
#include <utility>
#include <vector>

namespace tinct {

struct Point {
  double x = 0, y = 0;
};

struct Stroke {
  Stroke(std::string line_colour = "#222222", double line_width = 1, std::string dash_pattern = "",
         double line_opacity = 1)
      : colour(std::move(line_colour)), width(line_width), dash(std::move(dash_pattern)), opacity(line_opacity) {}
  std::string colour;
  double width;
  std::string dash;  // SVG stroke-dasharray, e.g. "6 3"; empty: solid
  double opacity;
};

enum class Anchor { start, middle, end };

struct TextStyle {
  double size = 12;
  Anchor anchor = Anchor::start;
  bool bold = false;
  std::string colour = "#222222";
  double rotate = 0;       // degrees, about the text's anchor point
  bool centred_v = false;  // vertically centred on y instead of sitting on it
};

enum class MarkerShape { circle, square, triangle, diamond, triangle_down };

class SvgWriter {
 public:
  // label: what the chart shows, for screen readers (aria-label).
  SvgWriter(double width, double height, const std::string& label);

  void line(Point from, Point to, const Stroke& stroke);
  void polyline(const std::vector<Point>& points, const Stroke& stroke);
  void area(const std::vector<Point>& outline, const std::string& fill, double opacity);
  void rect(double x, double y, double width, double height, const std::string& fill,
            const std::string& tooltip = "", const Stroke* outline = nullptr);
  // size: the marker's width in pixels; hollow markers are drawn as outlines.
  void marker(MarkerShape shape, Point at, double size, const std::string& colour, bool hollow,
              const std::string& tooltip = "");
  void text(Point at, const std::string& text, const TextStyle& style = {});

  double width() const { return width_; }
  double height() const { return height_; }
  std::string finish() const;  // the complete <svg> element

 private:
  void shape_with_tooltip(const std::string& open, const std::string& tooltip);

  double width_, height_;
  std::string label_;
  std::string body_;
};

std::string svg_number(double value);  // at most two decimals, no trailing zeros

// A rough width of `text` in the report's sans-serif font, for margins (no font metrics).
double estimated_text_width(const std::string& text, double size);

}  // namespace tinct
