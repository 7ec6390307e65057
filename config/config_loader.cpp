// config/config_loader.cpp
// LoadConfig and ParseConfig (config/config.h): read, check each table, check references,
// then build the channel index. Nothing is half-loaded: on error the caller gets only the
// Status.
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "config/config.h"
#include "config/config_reader.h"
#include "config/config_validate.h"
#include "config/key_lines.h"

namespace ampledger {

Result<Config> ParseConfig(const std::string& text, const std::string& source_name) {
  std::error_code error;
  std::filesystem::path absolute = std::filesystem::absolute(source_name, error);
  if (error) {
    return Status::IOError("cannot resolve the folder of \"" + source_name +
                           "\": " + error.message());
  }
  KeyLines lines(source_name);
  Config config;
  config.source_path = source_name;
  Status s = ReadConfigText(text, absolute.parent_path().string(), &config, &lines);
  if (s.ok()) s = ValidateConfigReferences(config, lines);
  if (!s.ok()) return s;
  config.IndexChannels();
  return config;
}

Result<Config> LoadConfig(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return Status::IOError("cannot read \"" + path + "\": " + std::strerror(errno));
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) return Status::IOError("cannot read \"" + path + "\": " + std::strerror(errno));
  return ParseConfig(text.str(), path);
}

}  // namespace ampledger
