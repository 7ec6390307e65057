// api/health.h
// The daemon's own checks behind /v1/health and /v1/ready: is the writer still accepting
// readings, can the database's file and folder be written, and is there room left on the disk
// under the database's folder. Reads the file system (access, statvfs); any thread.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "config/status.h"

namespace ampledger {

struct HealthCheck {
  const char* name;    // "writer", "database_writable", "disk_free"
  bool pass = false;
  std::string detail;  // why it failed, or what was measured; may name paths, so it is shown
                       // only to whole-site tokens
};

struct HealthReport {
  std::vector<HealthCheck> checks;
  std::uint64_t free_bytes = 0;  // available to the daemon in the database's folder

  bool Pass() const;
  std::string FailingNames() const;  // "writer, disk_free"; "" when all pass
};

// Runs the checks. `writer_health` is ReadingWriter::Health(); `database_path` the SQLite
// file; below `min_free_bytes` free the disk check fails.
HealthReport CheckHealth(const Status& writer_health, const std::string& database_path,
                         std::uint64_t min_free_bytes);

}  // namespace ampledger
