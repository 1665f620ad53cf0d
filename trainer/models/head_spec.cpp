#include "models/head_spec.hpp"

#include "util/config_node.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

constexpr int kMaxNeighbours = 1000;
constexpr int kMaxColourChannels = 64;

std::string joined(const std::vector<std::string>& names) {
  std::string list;
  for (const auto& name : names) list += (list.empty() ? "" : ", ") + name;
  return list;
}

int index_of(const std::vector<std::string>& names, const std::string& name) {
  for (std::size_t i = 0; i < names.size(); ++i) {
    if (names[i] == name) return static_cast<int>(i);
  }
  return -1;
}

}  // namespace

const std::vector<std::string>& head_pool_names() {
  static const std::vector<std::string> names = {"global", "centre", "hypercolumn", "colour"};
  return names;
}

const std::vector<std::string>& head_kind_names() {
  static const std::vector<std::string> names = {"trained", "linear_probe", "knn"};
  return names;
}

std::string to_string(HeadPool pool) { return head_pool_names()[static_cast<std::size_t>(pool)]; }
std::string to_string(HeadKind kind) { return head_kind_names()[static_cast<std::size_t>(kind)]; }

HeadPool head_pool_from_name(const std::string& name, const std::string& where) {
  const int i = index_of(head_pool_names(), name);
  if (i < 0) fail_usage(where + ": unknown head pool \"" + name + "\"; valid: " + joined(head_pool_names()));
  return static_cast<HeadPool>(i);
}

HeadKind head_kind_from_name(const std::string& name, const std::string& where) {
  const int i = index_of(head_kind_names(), name);
  if (i < 0) fail_usage(where + ": unknown head kind \"" + name + "\"; valid: " + joined(head_kind_names()));
  return static_cast<HeadKind>(i);
}

bool pool_uses_decoder(HeadPool pool) { return pool == HeadPool::hypercolumn || pool == HeadPool::colour; }

bool is_probe(HeadKind kind) { return kind != HeadKind::trained; }

HeadSpec read_head_spec(const ConfigNode& node, const HeadSpec& defaults) {
  HeadSpec spec;
  spec.pool = head_pool_from_name(node.choice("pool", head_pool_names(), to_string(defaults.pool)), node.where("pool"));
  spec.kind = head_kind_from_name(node.choice("kind", head_kind_names(), to_string(defaults.kind)), node.where("kind"));
  if (spec.kind == HeadKind::knn) {
    spec.k = static_cast<int>(node.integer("k", 5, 1, kMaxNeighbours));
  } else if (node.has("k")) {
    node.fail("k", "applies only with kind: knn (kind is " + to_string(spec.kind) + ")");
  }
  if (spec.kind == HeadKind::linear_probe) {
    if (node.peek("l2").value_or("auto") == "auto") {
      node.text("l2", "auto");  // recorded in the resolved config
    } else {
      spec.l2 = node.number("l2", std::nullopt, 1e-12, 1e12);
    }
  } else if (node.has("l2")) {
    node.fail("l2", "applies only with kind: linear_probe (kind is " + to_string(spec.kind) + ")");
  }
  if (spec.pool == HeadPool::colour) {
    spec.colour_channels = static_cast<int>(node.integer("colour_channels", 0, 0, kMaxColourChannels));
    spec.input_bands = node.flag("input_bands", defaults.input_bands);
  } else {
    for (const char* key : {"colour_channels", "input_bands"}) {
      if (node.has(key)) node.fail(key, std::string("applies only with pool: colour (pool is ") + to_string(spec.pool) + ")");
    }
  }
  if (is_probe(spec.kind)) {
    for (const char* key : {"dropout", "hidden"}) {
      if (node.has(key)) node.fail(key, std::string("applies only with kind: trained (kind is ") + to_string(spec.kind) + ")");
    }
  }
  return spec;
}

std::string head_summary(const HeadSpec& spec) {
  std::string text = "{pool: " + to_string(spec.pool) + ", kind: " + to_string(spec.kind);
  if (spec.kind == HeadKind::knn) text += ", k: " + std::to_string(spec.k);
  if (spec.pool == HeadPool::colour) {
    if (spec.colour_channels > 0) text += ", colour_channels: " + std::to_string(spec.colour_channels);
    text += std::string(", input_bands: ") + (spec.input_bands ? "true" : "false");
  }
  return text + "}";
}

}  // namespace tinct
