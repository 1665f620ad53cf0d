// Typed reading of one YAML config with the context every error needs: file,
// key path and line. Each value read (default or not) is recorded into a resolved
// tree, so a run can save its config with every default filled in. Keys that were
// never read are unknown keys: finish() reports them with the nearest valid key, and
// an error about a missing key first blames an unread key that looks like a slip for
// it ("snesor: unknown key; did you mean \"sensor\"?" rather than "sensor: required").
#pragma once

#include <yaml-cpp/yaml.h>

#include <cstdint>
#include <filesystem>
#include <memory>
#include <optional>
#include <set>
#include <string>
#include <vector>

namespace tinct {

class ConfigNode {
 public:
  // Parses `file`; a syntax error names the file and line.
  static ConfigNode load(const std::filesystem::path& file);
  // A node over YAML text that did not come from a file (tests, CLI overrides).
  static ConfigNode from_text(const std::string& text, const std::string& name,
                              const std::filesystem::path& folder);

  bool has(const std::string& key) const;
  bool is_mapping(const std::string& key) const;
  // The scalar under `key` without reading it (for values with several forms).
  std::optional<std::string> peek(const std::string& key) const;
  // A mapping below `key`; an absent key gives an empty section (all defaults).
  ConfigNode section(const std::string& key) const;
  // Each element of the sequence below `key` as a section (maps) or scalar node.
  std::vector<ConfigNode> items(const std::string& key) const;
  // A mapping's keys, in file order (for maps whose keys are data, e.g. band -> file).
  std::vector<std::string> keys() const;

  std::string text(const std::string& key, const std::optional<std::string>& fallback = {}) const;
  std::string choice(const std::string& key, const std::vector<std::string>& options,
                     const std::optional<std::string>& fallback = {}) const;
  std::int64_t integer(const std::string& key, std::optional<std::int64_t> fallback = {},
                       std::int64_t min = INT64_MIN, std::int64_t max = INT64_MAX) const;
  double number(const std::string& key, std::optional<double> fallback = {},
                double min = -1e308, double max = 1e308) const;
  bool flag(const std::string& key, std::optional<bool> fallback = {}) const;
  std::vector<std::string> texts(const std::string& key,
                                 const std::optional<std::vector<std::string>>& fallback = {}) const;
  std::vector<double> numbers(const std::string& key,
                              const std::optional<std::vector<double>>& fallback = {}) const;
  // A path resolved against the config file's folder; `must_exist` reports a
  // missing file now, before any work starts.
  std::filesystem::path path(const std::string& key, bool must_exist,
                             const std::optional<std::string>& fallback = {}) const;
  // This scalar node itself (for items() of scalars).
  std::string scalar_text() const;

  // Marks keys as known without reading them (handled by another reader).
  void allow(const std::string& key) const;
  // Fails on any key of this mapping that no getter read.
  void finish() const;

  // Fails at `key` (or at this node itself for ""); when `key` is absent, an unread
  // key here or in the parents that looks like a slip for it is reported instead.
  [[noreturn]] void fail(const std::string& key, const std::string& problem) const;
  std::string where(const std::string& key) const;  // "file: a.b.key (line N)"

  const std::string& file_name() const { return context_->name; }
  const std::filesystem::path& folder() const { return context_->folder; }
  const std::string& key_path() const { return key_path_; }
  YAML::Node resolved() const { return resolved_; }
  YAML::Node raw() const { return node_; }

 private:
  struct Context {
    std::string name;
    std::filesystem::path folder;
  };
  ConfigNode(YAML::Node node, YAML::Node resolved, std::shared_ptr<const Context> context,
             std::string key_path);
  YAML::Node lookup(const std::string& key) const;
  // Fails on an unread key of this mapping that looks like a slip for `key`; then asks
  // the parent about this section's own name when the section was not given.
  void blame_misspelling(const std::string& key) const;
  std::string child_path(const std::string& key) const;
  std::string got(const YAML::Node& value) const;

  YAML::Node node_;
  YAML::Node resolved_;
  std::shared_ptr<const Context> context_;
  std::string key_path_;
  std::shared_ptr<std::set<std::string>> read_keys_;
  std::shared_ptr<const ConfigNode> parent_;  // for sections: where to look for a misspelt name
  std::string name_;                          // this section's key in the parent
  bool given_ = true;                         // false: an absent section (all defaults)
};

// The resolved tree as YAML text, and its SHA-256 (the config hash of a run).
std::string resolved_text(const ConfigNode& node);

}  // namespace tinct
