// api/health.cpp
#include "api/health.h"

#include <sys/statvfs.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <filesystem>

namespace ampledger {
namespace {

std::string Folder(const std::string& database_path) {
  std::string folder = std::filesystem::path(database_path).parent_path().string();
  return folder.empty() ? "." : folder;
}

// SQLite writes the database file and creates its -wal and -shm files beside it, so both the
// file and its folder must be writable. access() also fails on a read-only mount (EROFS).
HealthCheck Writable(const std::string& database_path) {
  for (const std::string& path : {database_path, Folder(database_path)}) {
    if (::access(path.c_str(), W_OK) != 0) {
      return {"database_writable", false,
              path + " is not writable: " + std::strerror(errno)};
    }
  }
  return {"database_writable", true, ""};
}

}  // namespace

bool HealthReport::Pass() const {
  for (const HealthCheck& check : checks) {
    if (!check.pass) return false;
  }
  return true;
}

std::string HealthReport::FailingNames() const {
  std::string names;
  for (const HealthCheck& check : checks) {
    if (!check.pass) names += (names.empty() ? "" : ", ") + std::string(check.name);
  }
  return names;
}

HealthReport CheckHealth(const Status& writer_health, const std::string& database_path,
                         std::uint64_t min_free_bytes) {
  HealthReport report;
  report.checks.push_back({"writer", writer_health.ok(),
                           writer_health.ok() ? "" : writer_health.ToString()});
  report.checks.push_back(Writable(database_path));
  struct statvfs info {};
  const std::string folder = Folder(database_path);
  if (::statvfs(folder.c_str(), &info) != 0) {
    report.checks.push_back({"disk_free", false,
                             "cannot read the free space of " + folder + ": " +
                                 std::strerror(errno)});
    return report;
  }
  // f_bavail: blocks available to unprivileged users, what the daemon's user may still fill.
  report.free_bytes = static_cast<std::uint64_t>(info.f_bavail) * info.f_frsize;
  const bool enough = report.free_bytes >= min_free_bytes;
  report.checks.push_back({"disk_free", enough,
                           std::to_string(report.free_bytes) + " bytes free in " + folder +
                               ", at least " + std::to_string(min_free_bytes) + " needed"});
  return report;
}

}  // namespace ampledger
