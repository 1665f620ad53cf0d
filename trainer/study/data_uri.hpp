// Files embedded in report.html as data URIs (base64, RFC 4648), so the report is one
// self-contained file that opens offline and can be mailed as it is.
#pragma once

#include <filesystem>
#include <optional>
#include <string>

namespace tinct {

std::string base64_encode(const std::string& bytes);

struct EmbeddedPng {
  std::string uri;  // "data:image/png;base64,..."
  int width = 0, height = 0;  // pixels, from the PNG's IHDR chunk
};

// nullopt when the file is missing, unreadable, or not a PNG (signature and IHDR checked).
std::optional<EmbeddedPng> embed_png(const std::filesystem::path& file);

}  // namespace tinct
