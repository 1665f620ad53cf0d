#include "util/json.hpp"

#include <cmath>
#include <cstdio>

namespace tinct {

Json& Json::set(const std::string& key, Json value) {
  kind_ = Kind::object;
  for (auto& member : members_) {
    if (member.first == key) {
      member.second = std::move(value);
      return *this;
    }
  }
  members_.emplace_back(key, std::move(value));
  return *this;
}

Json& Json::push(Json value) {
  kind_ = Kind::array;
  elements_.push_back(std::move(value));
  return *this;
}

std::string json_quote(const std::string& text) {
  std::string out = "\"";
  for (const unsigned char c : text) {
    switch (c) {
      case '"': out += "\\\""; break;
      case '\\': out += "\\\\"; break;
      case '\n': out += "\\n"; break;
      case '\r': out += "\\r"; break;
      case '\t': out += "\\t"; break;
      default:
        if (c < 0x20) {
          char escaped[8];
          std::snprintf(escaped, sizeof(escaped), "\\u%04x", c);
          out += escaped;
        } else {
          out += static_cast<char>(c);
        }
    }
  }
  return out + "\"";
}

std::string Json::dump(int indent) const {
  std::string out;
  write(out, indent, 0);
  return out;
}

void Json::write(std::string& out, int indent, int depth) const {
  const std::string newline = indent >= 0 ? "\n" : "";
  const std::string pad = indent >= 0 ? std::string((depth + 1) * indent, ' ') : "";
  const std::string close_pad = indent >= 0 ? std::string(depth * indent, ' ') : "";
  switch (kind_) {
    case Kind::null: out += "null"; return;
    case Kind::boolean: out += boolean_ ? "true" : "false"; return;
    case Kind::integer: out += std::to_string(integer_); return;
    case Kind::number: {
      if (!std::isfinite(number_)) {
        out += "null";
        return;
      }
      char text[40];
      std::snprintf(text, sizeof(text), "%.17g", number_);
      out += text;
      return;
    }
    case Kind::text: out += json_quote(text_); return;
    case Kind::array: {
      if (elements_.empty()) {
        out += "[]";
        return;
      }
      out += "[" + newline;
      for (std::size_t i = 0; i < elements_.size(); ++i) {
        out += pad;
        elements_[i].write(out, indent, depth + 1);
        out += (i + 1 < elements_.size() ? "," : "") + newline;
      }
      out += close_pad + "]";
      return;
    }
    case Kind::object: {
      if (members_.empty()) {
        out += "{}";
        return;
      }
      out += "{" + newline;
      for (std::size_t i = 0; i < members_.size(); ++i) {
        out += pad + json_quote(members_[i].first) + (indent >= 0 ? ": " : ":");
        members_[i].second.write(out, indent, depth + 1);
        out += (i + 1 < members_.size() ? "," : "") + newline;
      }
      out += close_pad + "}";
      return;
    }
  }
}

}  // namespace tinct
