// trainer/study: the pieces the report's charts and page are made of: base64 against the
// test vectors of RFC 4648 section 10, PNG embedding, markup escaping, tick values, scales,
// the colour scale's end points and the arm styles. Whole pages are checked by
// tests/integration/study_report.py (HTML and XML parsers, headless Chromium).
#include <catch2/catch.hpp>

#include <opencv2/imgcodecs.hpp>

#include "sample_study_report.hpp"
#include "study/arm_style.hpp"
#include "study/chart_axes.hpp"
#include "study/confusion_heatmap.hpp"
#include "study/data_uri.hpp"
#include "study/markup_text.hpp"
#include "study/svg_writer.hpp"
#include "temp_folder.hpp"

using namespace tinct;

TEST_CASE("base64 matches the test vectors of RFC 4648 section 10") {
  CHECK(base64_encode("") == "");
  CHECK(base64_encode("f") == "Zg==");
  CHECK(base64_encode("fo") == "Zm8=");
  CHECK(base64_encode("foo") == "Zm9v");
  CHECK(base64_encode("foob") == "Zm9vYg==");
  CHECK(base64_encode("fooba") == "Zm9vYmE=");
  CHECK(base64_encode("foobar") == "Zm9vYmFy");
  CHECK(base64_encode(std::string("\xff\xfe\x00", 3)) == "//4A");  // high bytes and a zero byte
}

TEST_CASE("a PNG is embedded with its size, anything else is refused") {
  testing::TempFolder folder;
  const auto png = folder / "chips.png";
  cv::imwrite(png.string(), cv::Mat(24, 40, CV_8UC3, cv::Scalar(10, 20, 30)));
  const auto embedded = embed_png(png);
  REQUIRE(embedded);
  CHECK(embedded->width == 40);
  CHECK(embedded->height == 24);
  CHECK(embedded->uri.rfind("data:image/png;base64,iVBORw0KGgo", 0) == 0);  // the PNG signature in base64
  CHECK_FALSE(embed_png(folder / "missing.png"));
  CHECK_FALSE(embed_png(folder.write("fake.png", "not a png at all, only text")));
}

TEST_CASE("markup characters are escaped and forbidden control characters dropped") {
  CHECK(escape_markup("a<b> & \"c\" 'd'") == "a&lt;b&gt; &amp; &quot;c&quot; &#39;d&#39;");
  CHECK(escape_markup(std::string("x\x01y\tz\n", 6)) == "xy\tz\n");
  CHECK(escape_markup("Süd") == "Süd");  // UTF-8 passes through
}

TEST_CASE("SVG numbers are short and never negative zero") {
  CHECK(svg_number(2.5) == "2.5");
  CHECK(svg_number(3.0) == "3");
  CHECK(svg_number(-0.001) == "0");
  CHECK(svg_number(12.345678) == "12.35");
}

TEST_CASE("ticks fall on steps of 1, 2 or 5 and cover the data") {
  const Axis f1 = nice_axis("macro F1", 0.53, 0.91, 5);
  CHECK(f1.low == Approx(0.5));
  CHECK(f1.high == Approx(1.0));
  REQUIRE(f1.ticks.size() == 6);
  CHECK(f1.ticks[1].label == "0.6");
  CHECK(f1.ticks[5].label == "1.0");
  const Axis epochs = nice_axis("epoch", 0, 28, 6);
  CHECK(epochs.high == Approx(30));
  CHECK(epochs.ticks[1].label == "5");
  const Axis flat = nice_axis("flat", 0.7, 0.7, 5);  // one value: widened, still ticked
  CHECK(flat.low < 0.7);
  CHECK(flat.high > 0.7);
  CHECK(flat.ticks.size() >= 2);
  const Axis arms = category_axis("", {"a", "b", "c"});
  CHECK(arms.low == -0.5);
  CHECK(arms.ticks[2].value == 2);
}

TEST_CASE("scales map data to pixels, the y axis pointing up") {
  Axis x = nice_axis("x", 0, 10, 5);
  Axis y = nice_axis("y", 0, 1, 5);
  const ChartFrame frame({50, 20, 200, 100}, x, y);
  CHECK(frame.x(0) == Approx(50));
  CHECK(frame.x(10) == Approx(250));
  CHECK(frame.y(0) == Approx(120));
  CHECK(frame.y(1) == Approx(20));
  Axis log_x;
  log_x.low = 5, log_x.high = 80, log_x.log = true;
  const ChartFrame log_frame({0, 0, 100, 100}, log_x, y);
  CHECK(log_frame.x(20) == Approx(50));  // 20 is the geometric middle of 5 and 80
}

TEST_CASE("the confusion colour scale runs from near-white to dark blue") {
  CHECK(blue_scale(0) == "#f7fbff");
  CHECK(blue_scale(1) == "#08306b");
  CHECK(blue_scale(0.5) == "#6baed6");
  CHECK(blue_scale(-3) == "#f7fbff");  // clamped
}

TEST_CASE("deep arms get distinct colours and shapes, baselines grey, dashed and hollow") {
  const StudyReport report = testing::sample_study_report("preview.png");
  const ArmStyle pretrained = arm_style(report, "pretrained"), scratch = arm_style(report, "scratch");
  const ArmStyle logistic = arm_style(report, "logistic 3x3"), forest = arm_style(report, "random forest");
  CHECK(pretrained.colour != scratch.colour);
  CHECK(pretrained.marker != scratch.marker);
  CHECK(pretrained.dash.empty());
  CHECK_FALSE(pretrained.hollow);
  CHECK(logistic.hollow);
  CHECK_FALSE(logistic.dash.empty());
  CHECK(logistic.colour != forest.colour);
  CHECK(logistic.colour.substr(1, 2) == logistic.colour.substr(3, 2));  // grey: red = green
}

TEST_CASE("the SVG writer escapes text and wraps tooltips as titles") {
  SvgWriter svg(100, 50, "a <chart>");
  svg.text({1, 2}, "reed & sedge");
  svg.rect(0, 0, 10, 10, "#ffffff", "dry <grass>");
  const std::string out = svg.finish();
  CHECK(out.find("aria-label=\"a &lt;chart&gt;\"") != std::string::npos);
  CHECK(out.find(">reed &amp; sedge</text>") != std::string::npos);
  CHECK(out.find("<title>dry &lt;grass&gt;</title></rect>") != std::string::npos);
}

TEST_CASE("score axes span at least 0.2 and stay within 0 to 1") {
  const Axis narrow = score_axis("macro F1", 0.70, 0.75);
  CHECK(narrow.high - narrow.low >= 0.2 - 1e-9);
  CHECK(narrow.low <= 0.70);
  CHECK(narrow.high >= 0.75);
  const Axis top = score_axis("macro F1", 0.97, 1.0);
  CHECK(top.high == Approx(1.0));
  CHECK(top.low <= 0.8 + 1e-9);
  const Axis wide = score_axis("macro F1", 0.3, 0.9);
  CHECK(wide.low == Approx(0.3));
  CHECK(wide.high == Approx(0.9));
  CHECK(score_axis("kappa", -0.2, 0.5).low == Approx(0.0));  // clamped: charts show scores in [0, 1]
}
