// tests/test_util.h
// Helpers shared by tests: temporary folders that clean up, paths to the source tree and to
// shared/reference, and reading whole files.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>

#include "config/config.h"

namespace ampledger::testing {

// A fresh folder under the system temp dir, removed with its contents on destruction.
class TempDir {
 public:
  TempDir();
  ~TempDir();
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;
  const std::filesystem::path& path() const { return path_; }
  std::string File(const std::string& name) const { return (path_ / name).string(); }

 private:
  std::filesystem::path path_;
};

// The project's source tree (for config/examples etc.).
std::filesystem::path SourceDir();

// tests/reference/data: our copy of the published reference data (each folder's SOURCES.md).
std::filesystem::path ReferenceDir();

// The built `ampledger` executable.
std::string AmpledgerBinary();

std::string ReadFile(const std::filesystem::path& path);

// The first column of the first row of `sql` on the SQLite database at `path`, opened
// read-only (the daemon may still have it open). Fails the test on any error.
std::int64_t QueryInt(const std::string& path, const std::string& sql);
double QueryDouble(const std::string& path, const std::string& sql);

// A new viewer token for the API of a service running on `config`'s database.
std::string ViewerToken(const Config& config);
void WriteFile(const std::filesystem::path& path, const std::string& text);

}  // namespace ampledger::testing
