#include "util/config_node.hpp"

#include <cerrno>
#include <cmath>
#include <cstdlib>
#include <sstream>

#include "util/error.hpp"
#include "util/nearest_name.hpp"
#include "util/number_text.hpp"
#include "util/sha256.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::string describe_integer_range(std::int64_t min, std::int64_t max) {
  if (min == 1 && max == INT64_MAX) return "a positive integer";
  if (min == 0 && max == INT64_MAX) return "a non-negative integer";
  if (max == INT64_MAX) return "an integer >= " + std::to_string(min);
  return "an integer from " + std::to_string(min) + " to " + std::to_string(max);
}

std::string format_number(double value) {
  std::ostringstream out;
  out << value;
  return out.str();
}

std::string describe_number_range(double min, double max) {
  if (min <= -1e308 && max >= 1e308) return "a number";
  if (max >= 1e308) return "a number >= " + format_number(min);
  if (min <= -1e308) return "a number <= " + format_number(max);
  return "a number from " + format_number(min) + " to " + format_number(max);
}

bool parse_integer(const std::string& text, std::int64_t& value) {
  if (text.empty()) return false;
  errno = 0;
  char* end = nullptr;
  const long long parsed = std::strtoll(text.c_str(), &end, 10);
  if (errno != 0 || *end != '\0') return false;
  value = parsed;
  return true;
}

bool parse_number(const std::string& text, double& value) {
  if (text.empty()) return false;
  errno = 0;
  char* end = nullptr;
  const double parsed = std::strtod(text.c_str(), &end);
  if (errno != 0 || *end != '\0' || !std::isfinite(parsed)) return false;
  value = parsed;
  return true;
}

}  // namespace

ConfigNode::ConfigNode(YAML::Node node, YAML::Node resolved, std::shared_ptr<const Context> context,
                       std::string key_path)
    : node_(std::move(node)),
      resolved_(std::move(resolved)),
      context_(std::move(context)),
      key_path_(std::move(key_path)),
      read_keys_(std::make_shared<std::set<std::string>>()) {}

ConfigNode ConfigNode::load(const fs::path& file) {
  if (!fs::exists(file)) {
    fail_usage(file.string() + ": config file not found; check the path");
  }
  if (fs::is_directory(file)) {
    fail_usage(file.string() + " is a folder, not a config file; give the YAML file (tinct check FILE validates one)");
  }
  YAML::Node root;
  try {
    root = YAML::LoadFile(file.string());
  } catch (const YAML::ParserException& e) {
    fail_usage(file.string() + ": line " + std::to_string(e.mark.line + 1) +
               ": not valid YAML: " + e.msg);
  } catch (const YAML::BadFile&) {
    fail_usage(file.string() + ": cannot read the config file; check its permissions");
  }
  if (root.IsNull()) root = YAML::Node(YAML::NodeType::Map);
  if (!root.IsMap()) {
    fail_usage(file.string() + ": expected a mapping of keys at the top level");
  }
  auto context = std::make_shared<Context>(
      Context{file.string(), fs::absolute(file).parent_path()});
  return ConfigNode(root, YAML::Node(YAML::NodeType::Map), context, "");
}

ConfigNode ConfigNode::from_text(const std::string& text, const std::string& name,
                                 const fs::path& folder) {
  YAML::Node root;
  try {
    root = YAML::Load(text);
  } catch (const YAML::ParserException& e) {
    fail_usage(name + ": line " + std::to_string(e.mark.line + 1) + ": not valid YAML: " + e.msg);
  }
  if (root.IsNull()) root = YAML::Node(YAML::NodeType::Map);
  auto context = std::make_shared<Context>(Context{name, folder});
  return ConfigNode(root, YAML::Node(YAML::NodeType::Map), context, "");
}

std::string ConfigNode::child_path(const std::string& key) const {
  return key_path_.empty() ? key : key_path_ + "." + key;
}

YAML::Node ConfigNode::lookup(const std::string& key) const {
  if (!node_.IsMap()) return YAML::Node();
  for (const auto& entry : node_) {
    if (entry.first.Scalar() == key) return entry.second;
  }
  return YAML::Node();
}

std::string ConfigNode::where(const std::string& key) const {
  const YAML::Node value = key.empty() ? node_ : lookup(key);
  const std::string path = key.empty() ? key_path_ : child_path(key);
  std::string text = context_->name + ": " + (path.empty() ? "(top level)" : path);
  const YAML::Node located = value.IsDefined() ? value : node_;
  if (located.IsDefined() && located.Mark().line >= 0) {
    text += " (line " + std::to_string(located.Mark().line + 1) + ")";
  }
  return text;
}

void ConfigNode::blame_misspelling(const std::string& key) const {
  if (node_.IsMap()) {
    for (const auto& entry : node_) {
      const std::string typed = entry.first.Scalar();
      if (read_keys_->count(typed) || !likely_misspelling(typed, key)) continue;
      fail_usage(context_->name + ": " + child_path(typed) + ": unknown key; did you mean \"" + key + "\"? (line " +
                 std::to_string(entry.first.Mark().line + 1) + ")");
    }
  }
  if (!given_ && parent_) parent_->blame_misspelling(name_);
}

void ConfigNode::fail(const std::string& key, const std::string& problem) const {
  if (key.empty()) {
    if (!given_ && parent_) parent_->blame_misspelling(name_);
  } else if (lookup(key).IsNull()) {  // absent (lookup gives a null node) or left empty
    blame_misspelling(key);
  }
  const YAML::Node value = key.empty() ? node_ : lookup(key);
  const std::string path = key.empty() ? key_path_ : child_path(key);
  std::string text = context_->name + ": " + (path.empty() ? "(top level)" : path) + ": " + problem;
  const YAML::Node located = value.IsDefined() ? value : node_;
  if (located.IsDefined() && located.Mark().line >= 0) {
    text += " (line " + std::to_string(located.Mark().line + 1) + ")";
  }
  fail_usage(text);
}

std::string ConfigNode::got(const YAML::Node& value) const {
  if (value.IsScalar()) return "got \"" + value.Scalar() + "\"";
  if (value.IsSequence()) return "got a list";
  if (value.IsMap()) return "got a mapping";
  return "got nothing";
}

bool ConfigNode::has(const std::string& key) const {
  const YAML::Node value = lookup(key);
  return value.IsDefined() && !value.IsNull();
}

bool ConfigNode::is_mapping(const std::string& key) const { return lookup(key).IsMap(); }

std::optional<std::string> ConfigNode::peek(const std::string& key) const {
  const YAML::Node value = lookup(key);
  if (!value.IsDefined() || !value.IsScalar()) return std::nullopt;
  return value.Scalar();
}

void ConfigNode::allow(const std::string& key) const { read_keys_->insert(key); }

ConfigNode ConfigNode::section(const std::string& key) const {
  read_keys_->insert(key);
  YAML::Node value = lookup(key);
  if (value.IsDefined() && !value.IsNull() && !value.IsMap()) {
    fail(key, "expected a mapping of keys, " + got(value));
  }
  const bool given = value.IsDefined() && !value.IsNull();
  if (!given) value = YAML::Node(YAML::NodeType::Map);
  YAML::Node resolved = resolved_;
  resolved[key] = YAML::Node(YAML::NodeType::Map);
  ConfigNode child(value, resolved[key], context_, child_path(key));
  child.parent_ = std::make_shared<const ConfigNode>(*this);
  child.name_ = key;
  child.given_ = given;
  return child;
}

std::vector<ConfigNode> ConfigNode::items(const std::string& key) const {
  read_keys_->insert(key);
  const YAML::Node value = lookup(key);
  std::vector<ConfigNode> result;
  if (!value.IsDefined() || value.IsNull()) return result;
  if (!value.IsSequence()) fail(key, "expected a list, " + got(value));
  YAML::Node resolved = resolved_;
  resolved[key] = YAML::Node(YAML::NodeType::Sequence);
  for (std::size_t i = 0; i < value.size(); ++i) {
    YAML::Node element_resolved =
        value[i].IsMap() ? YAML::Node(YAML::NodeType::Map) : YAML::Node(value[i].Scalar());
    resolved[key].push_back(element_resolved);
    result.push_back(ConfigNode(value[i], resolved[key][i], context_,
                                child_path(key) + "[" + std::to_string(i) + "]"));
  }
  return result;
}

std::vector<std::string> ConfigNode::keys() const {
  std::vector<std::string> result;
  if (!node_.IsMap()) return result;
  for (const auto& entry : node_) result.push_back(entry.first.Scalar());
  return result;
}

std::string ConfigNode::scalar_text() const {
  if (!node_.IsScalar()) fail("", "expected a single value, " + got(node_));
  return node_.Scalar();
}

std::string ConfigNode::text(const std::string& key, const std::optional<std::string>& fallback) const {
  read_keys_->insert(key);
  const YAML::Node value = lookup(key);
  std::string result;
  if (!value.IsDefined() || value.IsNull()) {
    if (!fallback) fail(key, "required: expected a text value");
    result = *fallback;
  } else {
    if (!value.IsScalar()) fail(key, "expected a text value, " + got(value));
    result = value.Scalar();
  }
  YAML::Node resolved = resolved_;
  resolved[key] = result;
  return result;
}

std::string ConfigNode::choice(const std::string& key, const std::vector<std::string>& options,
                               const std::optional<std::string>& fallback) const {
  const std::string value = text(key, fallback);
  for (const auto& option : options) {
    if (option == value) return value;
  }
  std::string list;
  for (const auto& option : options) list += (list.empty() ? "" : ", ") + option;
  std::string message = "expected one of " + list + ", got \"" + value + "\"";
  const std::string near = nearest_name(value, options);
  if (!near.empty()) message += "; did you mean \"" + near + "\"?";
  fail(key, message);
}

std::int64_t ConfigNode::integer(const std::string& key, std::optional<std::int64_t> fallback,
                                 std::int64_t min, std::int64_t max) const {
  read_keys_->insert(key);
  const YAML::Node value = lookup(key);
  std::int64_t result = 0;
  if (!value.IsDefined() || value.IsNull()) {
    if (!fallback) fail(key, "required: expected " + describe_integer_range(min, max));
    result = *fallback;
  } else if (!value.IsScalar() || !parse_integer(value.Scalar(), result) || result < min ||
             result > max) {
    fail(key, "expected " + describe_integer_range(min, max) + ", " + got(value));
  }
  YAML::Node resolved = resolved_;
  resolved[key] = result;
  return result;
}

double ConfigNode::number(const std::string& key, std::optional<double> fallback, double min,
                          double max) const {
  read_keys_->insert(key);
  const YAML::Node value = lookup(key);
  double result = 0;
  if (!value.IsDefined() || value.IsNull()) {
    if (!fallback) fail(key, "required: expected " + describe_number_range(min, max));
    result = *fallback;
  } else if (!value.IsScalar() || !parse_number(value.Scalar(), result) || result < min ||
             result > max) {
    fail(key, "expected " + describe_number_range(min, max) + ", " + got(value));
  }
  YAML::Node resolved = resolved_;
  resolved[key] = exact_text(result);  // 0.9, not 0.90000000000000002
  return result;
}

bool ConfigNode::flag(const std::string& key, std::optional<bool> fallback) const {
  read_keys_->insert(key);
  const YAML::Node value = lookup(key);
  bool result = false;
  if (!value.IsDefined() || value.IsNull()) {
    if (!fallback) fail(key, "required: expected true or false");
    result = *fallback;
  } else {
    const std::string text = value.IsScalar() ? value.Scalar() : "";
    if (text == "true" || text == "yes") {
      result = true;
    } else if (text == "false" || text == "no") {
      result = false;
    } else {
      fail(key, "expected true or false, " + got(value));
    }
  }
  YAML::Node resolved = resolved_;
  resolved[key] = result;
  return result;
}

std::vector<std::string> ConfigNode::texts(const std::string& key,
                                           const std::optional<std::vector<std::string>>& fallback) const {
  read_keys_->insert(key);
  const YAML::Node value = lookup(key);
  std::vector<std::string> result;
  if (!value.IsDefined() || value.IsNull()) {
    if (!fallback) fail(key, "required: expected a list of text values");
    result = *fallback;
  } else if (value.IsScalar()) {
    result.push_back(value.Scalar());
  } else if (value.IsSequence()) {
    for (const auto& element : value) {
      if (!element.IsScalar()) fail(key, "expected a list of text values, found a nested entry");
      result.push_back(element.Scalar());
    }
  } else {
    fail(key, "expected a list of text values, " + got(value));
  }
  YAML::Node resolved = resolved_;
  resolved[key] = result;
  return result;
}

std::vector<double> ConfigNode::numbers(const std::string& key,
                                        const std::optional<std::vector<double>>& fallback) const {
  read_keys_->insert(key);
  const YAML::Node value = lookup(key);
  std::vector<double> result;
  if (!value.IsDefined() || value.IsNull()) {
    if (!fallback) fail(key, "required: expected a list of numbers");
    result = *fallback;
  } else if (value.IsSequence()) {
    for (const auto& element : value) {
      double parsed = 0;
      if (!element.IsScalar() || !parse_number(element.Scalar(), parsed)) {
        fail(key, "expected a list of numbers, " + got(element));
      }
      result.push_back(parsed);
    }
  } else {
    fail(key, "expected a list of numbers, " + got(value));
  }
  YAML::Node resolved = resolved_;
  resolved[key] = YAML::Node(YAML::NodeType::Sequence);
  for (double number : result) resolved[key].push_back(exact_text(number));
  return result;
}

fs::path ConfigNode::path(const std::string& key, bool must_exist,
                          const std::optional<std::string>& fallback) const {
  const std::string raw = text(key, fallback);
  fs::path result = raw;
  if (result.is_relative()) result = context_->folder / result;
  result = result.lexically_normal();
  if (must_exist && !fs::exists(result)) {
    fail(key, "file not found: " + result.string() +
                  " (relative paths are read from the config file's folder)");
  }
  YAML::Node resolved = resolved_;
  resolved[key] = result.string();
  return result;
}

void ConfigNode::finish() const {
  if (!node_.IsMap()) return;
  const std::vector<std::string> known(read_keys_->begin(), read_keys_->end());
  std::set<std::string> seen;
  for (const auto& entry : node_) {
    const std::string key = entry.first.Scalar();
    if (!seen.insert(key).second) {
      fail_usage(context_->name + ": " + child_path(key) + ": given twice (line " +
                 std::to_string(entry.first.Mark().line + 1) + "); keep one");
    }
    if (read_keys_->count(key)) continue;
    std::string message = "unknown key";
    const std::string near = nearest_name(key, known);
    if (!near.empty()) message += "; did you mean \"" + near + "\"?";
    const std::string path = child_path(key);
    fail_usage(context_->name + ": " + path + ": " + message + " (line " +
               std::to_string(entry.first.Mark().line + 1) + ")");
  }
}

std::string resolved_text(const ConfigNode& node) {
  YAML::Emitter out;
  out << node.resolved();
  return std::string(out.c_str()) + "\n";
}

}  // namespace tinct
