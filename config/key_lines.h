// config/key_lines.h
// KeyLines remembers on which line of a config file each key path was written, so that checks
// made after reading (references between sections) can still name the line, and formats every
// config error in the one format of config/config.h:
//   <file>:<line>: <key path>: <what>
// Internal to config/. Not thread-safe; used by one loader at a time.
#pragma once

#include <string>
#include <unordered_map>

#include "config/status.h"

namespace ampledger {

class KeyLines {
 public:
  explicit KeyLines(std::string source) : source_(std::move(source)) {}

  const std::string& source() const { return source_; }

  // Records that `path` (e.g. "circuit[2].channels[1]") was written on `line` (1-based).
  void Set(const std::string& path, int line) { lines_[path] = line; }

  // The line of `path`, else of its closest recorded parent ("circuit[2].channels" then
  // "circuit[2]" then "circuit"); 0 when none is recorded.
  int LineOf(const std::string& path) const;

  // InvalidArgument "<file>:<line>: <path>: <what>", with the line from LineOf(path).
  Status Error(const std::string& path, const std::string& what) const;

  // The message format itself; line 0 leaves the line out ("<file>: <path>: <what>").
  static std::string Format(const std::string& source, int line, const std::string& path,
                            const std::string& what);

 private:
  std::string source_;
  std::unordered_map<std::string, int> lines_;
};

}  // namespace ampledger
