#include <catch2/catch.hpp>

#include "temp_folder.hpp"
#include "util/config_node.hpp"
#include "util/error.hpp"

using tinct::ConfigNode;
using tinct::testing::TempFolder;
using Catch::Matchers::Contains;

namespace {

std::string usage_error_of(const std::function<void()>& action) {
  try {
    action();
  } catch (const tinct::Error& e) {
    CHECK(e.exit_code() == 2);
    return e.what();
  }
  FAIL("expected a usage error");
  return "";
}

}  // namespace

TEST_CASE("a bad value names the file, the key path, what was expected and the line") {
  TempFolder folder;
  const auto file = folder.write("pretrain.yaml", "config: pretrain\ntrain:\n  batch: big\n");
  const ConfigNode root = ConfigNode::load(file);
  const std::string message = usage_error_of([&] { root.section("train").integer("batch", 32, 1); });
  CHECK_THAT(message, Contains("pretrain.yaml: train.batch: expected a positive integer, got \"big\""));
  CHECK_THAT(message, Contains("(line 3)"));
}

TEST_CASE("typed getters apply defaults and ranges") {
  const ConfigNode root = ConfigNode::from_text("a: 3\nb: 0.5\nc: yes\nd: [x, y]\n", "t.yaml", ".");
  CHECK(root.integer("a", 1, 1, 10) == 3);
  CHECK(root.number("b", 1.0, 0.0, 1.0) == 0.5);
  CHECK(root.flag("c", false));
  CHECK(root.texts("d") == std::vector<std::string>{"x", "y"});
  CHECK(root.integer("missing", 7) == 7);
  CHECK_THAT(usage_error_of([&] { root.integer("a", 1, 5, 10); }), Contains("from 5 to 10"));
  CHECK_THAT(usage_error_of([&] { root.integer("b", 1); }), Contains("got \"0.5\""));
  CHECK_THAT(usage_error_of([&] { root.text("nothing"); }), Contains("nothing: required"));
}

TEST_CASE("unknown keys are errors that suggest the nearest valid key") {
  const ConfigNode root = ConfigNode::from_text("train:\n  bacth: 8\n  epochs: 2\n", "p.yaml", ".");
  const ConfigNode train = root.section("train");
  train.integer("batch", 32);
  train.integer("epochs", 1);
  const std::string message = usage_error_of([&] { train.finish(); });
  CHECK_THAT(message, Contains("p.yaml: train.bacth: unknown key; did you mean \"batch\"?"));
  CHECK_THAT(message, Contains("line 2"));
}

TEST_CASE("a key given twice is an error, not a silent pick") {
  const ConfigNode root = ConfigNode::from_text("train: {lr: 0.1, batch: 4, lr: 0.2}\n", "p.yaml", ".");
  const ConfigNode train = root.section("train");
  train.number("lr", 0.01);
  train.integer("batch", 1);
  CHECK_THAT(usage_error_of([&] { train.finish(); }), Contains("train.lr: given twice"));
}

TEST_CASE("choices list the options and suggest the nearest") {
  const ConfigNode root = ConfigNode::from_text("loss: smoth_l1\n", "p.yaml", ".");
  const std::string message = usage_error_of([&] { root.choice("loss", {"l1", "smooth_l1", "l2"}); });
  CHECK_THAT(message, Contains("expected one of l1, smooth_l1, l2"));
  CHECK_THAT(message, Contains("did you mean \"smooth_l1\""));
}

TEST_CASE("relative paths resolve against the config file's folder and missing files are reported") {
  TempFolder folder;
  folder.write("data/scene.tif", "x");
  const auto file = folder.write("configs/pair.yaml", "scene: ../data/scene.tif\nother: nope.tif\n");
  const ConfigNode root = ConfigNode::load(file);
  CHECK(root.path("scene", true) == (folder / "data/scene.tif").lexically_normal());
  CHECK_THAT(usage_error_of([&] { root.path("other", true); }), Contains("file not found"));
}

TEST_CASE("the resolved tree holds every value read, defaults included") {
  const ConfigNode root = ConfigNode::from_text("train:\n  batch: 8\n", "p.yaml", ".");
  const ConfigNode train = root.section("train");
  train.integer("batch", 32);
  train.number("lr", 0.001);
  const std::string text = tinct::resolved_text(root);
  CHECK_THAT(text, Contains("batch: 8"));
  CHECK_THAT(text, Contains("lr: 0.001"));
}

TEST_CASE("YAML syntax errors name the file and line") {
  TempFolder folder;
  const auto file = folder.write("bad.yaml", "a: 1\nb: [unclosed\n");
  const std::string message = usage_error_of([&] { ConfigNode::load(file); });
  CHECK_THAT(message, Contains("bad.yaml: line"));
  CHECK_THAT(message, Contains("not valid YAML"));
}

TEST_CASE("a missing key blames an unread key that looks like a slip for it") {
  const ConfigNode root = ConfigNode::from_text("config: pair\nsnesor: generic\ncolur: {bands: [r, g, b]}\n"
                                                "extra: 1\n", "p.yaml", ".");
  CHECK_THAT(usage_error_of([&] { root.text("sensor"); }),
             Contains("p.yaml: snesor: unknown key; did you mean \"sensor\"? (line 2)"));
  // A required key inside an absent section: the section's misspelt name is blamed.
  CHECK_THAT(usage_error_of([&] { root.section("colour").texts("bands"); }),
             Contains("p.yaml: colur: unknown key; did you mean \"colour\"? (line 3)"));
  // Nothing alike: the key is simply required.
  CHECK_THAT(usage_error_of([&] { root.text("output"); }), Contains("p.yaml: output: required"));
  // A key already read is never blamed, however alike.
  const ConfigNode read = ConfigNode::from_text("input: a\n", "q.yaml", ".");
  read.text("input");
  CHECK_THAT(usage_error_of([&] { read.text("inputs"); }), Contains("q.yaml: inputs: required"));
}

TEST_CASE("numbers are resolved as written, not as their binary expansion") {
  const ConfigNode root = ConfigNode::from_text("a: 0.9\nb: 0.30\nc: [0.1, 0.2]\n", "p.yaml", ".");
  root.number("a");
  root.number("b");
  root.numbers("c");
  root.number("d", 0.7);
  const std::string text = tinct::resolved_text(root);
  CHECK_THAT(text, Contains("a: 0.9\n"));
  CHECK_THAT(text, Contains("b: 0.3\n"));
  CHECK_THAT(text, Contains("- 0.1\n"));
  CHECK_THAT(text, Contains("d: 0.7\n"));
  CHECK_THAT(text, !Contains("0000"));
}
