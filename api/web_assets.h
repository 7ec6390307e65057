// api/web_assets.h
// The dashboard's files (api/web/), compiled into the binary by api/embed_web.cmake: the
// daemon serves them from memory and reads no files at run time. Immutable data; any thread.
#pragma once

#include <cstddef>
#include <span>

namespace ampledger {

struct WebAsset {
  const char* name;          // path under api/web/: "index.html", "dashboard.js", ...
  const char* content_type;  // from the file's extension
  const unsigned char* data;
  std::size_t size;
};

// Every embedded file, in api/CMakeLists.txt's order.
std::span<const WebAsset> WebAssets();

}  // namespace ampledger
