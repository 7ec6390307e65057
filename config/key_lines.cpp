// config/key_lines.cpp
#include "config/key_lines.h"

namespace ampledger {

int KeyLines::LineOf(const std::string& path) const {
  std::string key = path;
  while (!key.empty()) {
    auto it = lines_.find(key);
    if (it != lines_.end()) return it->second;
    size_t cut = key.find_last_of(".[");
    if (cut == std::string::npos) break;
    key.resize(cut);
  }
  return 0;
}

Status KeyLines::Error(const std::string& path, const std::string& what) const {
  return Status::InvalidArgument(Format(source_, LineOf(path), path, what));
}

std::string KeyLines::Format(const std::string& source, int line, const std::string& path,
                             const std::string& what) {
  std::string message = source;
  if (line > 0) message += ":" + std::to_string(line);
  message += ": ";
  if (!path.empty()) message += path + ": ";
  return message + what;
}

}  // namespace ampledger
