// tests/power_cut_vfs.h
// A SQLite VFS shim that simulates a power cut. It passes every call to the default VFS and
// keeps, per file, the "durable image": the file's whole content as of its last xSync. When
// power is cut (at the N-th xSync, which is then not performed, or by Cut()), every later
// write, sync, truncate and delete fails with an I/O error, as if the process had died.
// MaterializeDurable() then writes the durable images into a folder: what a disk that loses
// every unsynced write would hold after the reboot (the -shm wal-index is rebuilt by SQLite
// and never copied). Deleting a file is treated as durable at once.
// One instance at a time: Install() makes it the default VFS, Uninstall() restores the old
// one. Thread-safe (the storage writer thread calls it while the test thread reads counters).
#pragma once

#include <sqlite3.h>

#include <cstdint>
#include <map>
#include <mutex>
#include <string>

namespace ampledger::reliability {

class PowerCutVfs {
 public:
  PowerCutVfs() = default;
  ~PowerCutVfs();  // uninstalls
  PowerCutVfs(const PowerCutVfs&) = delete;
  PowerCutVfs& operator=(const PowerCutVfs&) = delete;

  bool Install();
  void Uninstall();
  // Power fails now; or at the `more`-th xSync from now (which is then not performed).
  void Cut();
  void CutAtSync(int more);

  bool cut() const;
  int syncs() const;  // xSync calls performed (not counting the one that cut power)

  // Writes each file's durable image as `folder`/<its file name>; false on an error.
  bool MaterializeDurable(const std::string& folder) const;

  struct File;  // our sqlite3_file (in the .cpp)

 private:
  static int Open(sqlite3_vfs* vfs, const char* name, sqlite3_file* file, int flags, int* out);
  static int Delete(sqlite3_vfs* vfs, const char* name, int sync_dir);
  static PowerCutVfs* Of(sqlite3_vfs* vfs);
  friend int SyncFile(sqlite3_file* f, int flags);
  int Sync(File* file, int flags);

  sqlite3_vfs vfs_{};
  sqlite3_vfs* real_ = nullptr;
  bool installed_ = false;

  mutable std::mutex mu_;
  bool cut_ = false;                         // GUARDED_BY(mu_)
  int syncs_ = 0;                            // GUARDED_BY(mu_)
  int cut_at_sync_ = 0;                      // GUARDED_BY(mu_): 0 = none
  std::map<std::string, std::string> durable_;  // GUARDED_BY(mu_): path -> synced content
};

}  // namespace ampledger::reliability
