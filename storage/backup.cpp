// storage/backup.cpp
#include "storage/backup.h"

#include <sqlite3.h>

#include <cstdio>
#include <filesystem>

#include "storage/statement.h"

namespace ampledger {
namespace {

constexpr int kPagesPerStep = 256;  // 1 MiB of 4 KiB pages between yields
constexpr int kBusySleepMs = 20;
constexpr int kBusyTimeoutMs = 5000;

// Closes the handles it holds, on every path out.
struct Handles {
  sqlite3* source = nullptr;
  sqlite3* destination = nullptr;
  ~Handles() {
    sqlite3_close(destination);
    sqlite3_close(source);
  }
};

Status Copy(Handles& h, const std::string& live_path, const std::string& partial) {
  int rc = sqlite3_open_v2(live_path.c_str(), &h.source, SQLITE_OPEN_READWRITE, nullptr);
  if (rc != SQLITE_OK) return SqliteStatus(h.source, rc, live_path, "open for backup");
  sqlite3_busy_timeout(h.source, kBusyTimeoutMs);
  rc = sqlite3_open_v2(partial.c_str(), &h.destination,
                       SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE, nullptr);
  if (rc != SQLITE_OK) return SqliteStatus(h.destination, rc, partial, "create backup");
  // One read transaction over the whole copy: every step sees the same snapshot, so the
  // writer's commits in between do not restart the backup.
  if (Status s = ExecSql(h.source, live_path, "BEGIN; SELECT count(*) FROM sqlite_schema;",
                         "start backup snapshot");
      !s.ok()) {
    return s;
  }
  sqlite3_backup* backup = sqlite3_backup_init(h.destination, "main", h.source, "main");
  if (backup == nullptr) return SqliteStatus(h.destination, SQLITE_ERROR, partial, "start backup");
  do {
    rc = sqlite3_backup_step(backup, kPagesPerStep);
    if (rc == SQLITE_BUSY || rc == SQLITE_LOCKED) sqlite3_sleep(kBusySleepMs);
  } while (rc == SQLITE_OK || rc == SQLITE_BUSY || rc == SQLITE_LOCKED);
  int finish_rc = sqlite3_backup_finish(backup);
  if (rc != SQLITE_DONE) return SqliteStatus(h.destination, rc, partial, "copy pages");
  if (finish_rc != SQLITE_OK) return SqliteStatus(h.destination, finish_rc, partial, "finish backup");
  (void)ExecSql(h.source, live_path, "COMMIT", "end backup snapshot");
  return Status();
}

}  // namespace

Status BackupDatabase(const std::string& live_path, const std::string& to_path) {
  std::error_code error;
  if (!std::filesystem::exists(live_path, error)) {
    return Status::NotFound(live_path + ": no such database");
  }
  std::string partial = to_path + ".partial";
  std::filesystem::remove(partial, error);
  Status status;
  {
    Handles handles;
    status = Copy(handles, live_path, partial);
  }
  if (status.ok()) {
    std::filesystem::rename(partial, to_path, error);
    if (error) status = Status::IOError(to_path + ": cannot rename backup into place: " +
                                        error.message());
  }
  if (!status.ok()) {
    std::filesystem::remove(partial, error);
    std::filesystem::remove(partial + "-journal", error);
  }
  return status;
}

}  // namespace ampledger
