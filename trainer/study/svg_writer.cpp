#include "study/svg_writer.hpp"

#include <cmath>
#include <cstdio>

#include "study/markup_text.hpp"

namespace tinct {

namespace {

std::string stroke_attributes(const Stroke& stroke) {
  std::string out = " stroke=\"" + escape_markup(stroke.colour) + "\" stroke-width=\"" +
                    svg_number(stroke.width) + "\"";
  if (!stroke.dash.empty()) out += " stroke-dasharray=\"" + escape_markup(stroke.dash) + "\"";
  if (stroke.opacity < 1) out += " stroke-opacity=\"" + svg_number(stroke.opacity) + "\"";
  return out;
}

std::string points_attribute(const std::vector<Point>& points) {
  std::string out;
  for (const auto& p : points) {
    out += (out.empty() ? "" : " ") + svg_number(p.x) + "," + svg_number(p.y);
  }
  return out;
}

std::vector<Point> marker_outline(MarkerShape shape, Point at, double r) {
  switch (shape) {
    case MarkerShape::square:
      return {{at.x - r, at.y - r}, {at.x + r, at.y - r}, {at.x + r, at.y + r}, {at.x - r, at.y + r}};
    case MarkerShape::triangle:
      return {{at.x, at.y - 1.2 * r}, {at.x + 1.1 * r, at.y + 0.8 * r}, {at.x - 1.1 * r, at.y + 0.8 * r}};
    case MarkerShape::triangle_down:
      return {{at.x, at.y + 1.2 * r}, {at.x + 1.1 * r, at.y - 0.8 * r}, {at.x - 1.1 * r, at.y - 0.8 * r}};
    case MarkerShape::diamond:
      return {{at.x, at.y - 1.3 * r}, {at.x + 1.3 * r, at.y}, {at.x, at.y + 1.3 * r}, {at.x - 1.3 * r, at.y}};
    case MarkerShape::circle: break;
  }
  return {};
}

}  // namespace

std::string svg_number(double value) {
  if (!std::isfinite(value)) return "0";
  char text[64];
  std::snprintf(text, sizeof(text), "%.2f", value);
  std::string out = text;
  while (out.back() == '0') out.pop_back();
  if (out.back() == '.') out.pop_back();
  return out == "-0" ? "0" : out;
}

double estimated_text_width(const std::string& text, double size) {
  std::size_t characters = 0;  // UTF-8 continuation bytes do not start a character
  for (const char c : text) characters += (static_cast<unsigned char>(c) & 0xC0) != 0x80;
  return 0.58 * size * static_cast<double>(characters);
}

SvgWriter::SvgWriter(double width, double height, const std::string& label)
    : width_(width), height_(height), label_(label) {}

void SvgWriter::shape_with_tooltip(const std::string& open, const std::string& tooltip) {
  if (tooltip.empty()) {
    body_ += open + "/>\n";
  } else {
    const std::string tag = open.substr(1, open.find(' ') - 1);
    body_ += open + "><title>" + escape_markup(tooltip) + "</title></" + tag + ">\n";
  }
}

void SvgWriter::line(Point from, Point to, const Stroke& stroke) {
  body_ += "<line x1=\"" + svg_number(from.x) + "\" y1=\"" + svg_number(from.y) + "\" x2=\"" +
           svg_number(to.x) + "\" y2=\"" + svg_number(to.y) + "\"" + stroke_attributes(stroke) + "/>\n";
}

void SvgWriter::polyline(const std::vector<Point>& points, const Stroke& stroke) {
  if (points.size() < 2) return;
  body_ += "<polyline points=\"" + points_attribute(points) + "\" fill=\"none\"" +
           stroke_attributes(stroke) + " stroke-linejoin=\"round\"/>\n";
}

void SvgWriter::area(const std::vector<Point>& outline, const std::string& fill, double opacity) {
  if (outline.size() < 3) return;
  body_ += "<polygon points=\"" + points_attribute(outline) + "\" fill=\"" + escape_markup(fill) +
           "\" fill-opacity=\"" + svg_number(opacity) + "\" stroke=\"none\"/>\n";
}

void SvgWriter::rect(double x, double y, double width, double height, const std::string& fill,
                     const std::string& tooltip, const Stroke* outline) {
  std::string open = "<rect x=\"" + svg_number(x) + "\" y=\"" + svg_number(y) + "\" width=\"" +
                     svg_number(width) + "\" height=\"" + svg_number(height) + "\" fill=\"" +
                     escape_markup(fill) + "\"";
  if (outline) open += stroke_attributes(*outline);
  shape_with_tooltip(open, tooltip);
}

void SvgWriter::marker(MarkerShape shape, Point at, double size, const std::string& colour,
                       bool hollow, const std::string& tooltip) {
  const double r = size / 2;
  const std::string paint = hollow ? " fill=\"#ffffff\" stroke=\"" + escape_markup(colour) + "\" stroke-width=\"1.6\""
                                   : " fill=\"" + escape_markup(colour) + "\" stroke=\"#ffffff\" stroke-width=\"0.8\"";
  if (shape == MarkerShape::circle) {
    shape_with_tooltip("<circle cx=\"" + svg_number(at.x) + "\" cy=\"" + svg_number(at.y) +
                           "\" r=\"" + svg_number(r) + "\"" + paint,
                       tooltip);
  } else {
    shape_with_tooltip("<polygon points=\"" + points_attribute(marker_outline(shape, at, r)) + "\"" + paint,
                       tooltip);
  }
}

void SvgWriter::text(Point at, const std::string& text, const TextStyle& style) {
  static const char* const kAnchors[] = {"start", "middle", "end"};
  std::string open = "<text x=\"" + svg_number(at.x) + "\" y=\"" + svg_number(at.y) +
                     "\" font-size=\"" + svg_number(style.size) + "\" text-anchor=\"" +
                     kAnchors[static_cast<int>(style.anchor)] + "\" fill=\"" +
                     escape_markup(style.colour) + "\"";
  if (style.bold) open += " font-weight=\"600\"";
  if (style.centred_v) open += " dominant-baseline=\"central\"";
  if (style.rotate != 0) {
    open += " transform=\"rotate(" + svg_number(style.rotate) + " " + svg_number(at.x) + " " +
            svg_number(at.y) + ")\"";
  }
  body_ += open + ">" + escape_markup(text) + "</text>\n";
}

std::string SvgWriter::finish() const {
  return "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 " + svg_number(width_) + " " +
         svg_number(height_) + "\" width=\"" + svg_number(width_) + "\" height=\"" +
         svg_number(height_) + "\" role=\"img\" aria-label=\"" + escape_markup(label_) + "\">\n" +
         body_ + "</svg>\n";
}

}  // namespace tinct
