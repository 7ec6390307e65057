// tests/power_cut_vfs.cpp
#include "power_cut_vfs.h"

#include <cstring>
#include <filesystem>
#include <fstream>
#include <new>

namespace ampledger::reliability {

// Our sqlite3_file: SQLite allocates szOsFile bytes; the real VFS's file follows ours.
struct PowerCutVfs::File {
  sqlite3_file base;  // must be first: SQLite casts sqlite3_file* to File*
  PowerCutVfs* owner;
  std::string* path;  // heap: the struct's memory is SQLite's, constructed by hand
  sqlite3_file* real;

  static File* Of(sqlite3_file* file) { return reinterpret_cast<File*>(file); }
  const sqlite3_io_methods& Real() const { return *real->pMethods; }
};

namespace {

int Close(sqlite3_file* f) {
  auto* file = reinterpret_cast<PowerCutVfs::File*>(f);
  int rc = file->real->pMethods ? file->Real().xClose(file->real) : SQLITE_OK;
  delete file->path;
  return rc;
}

}  // namespace

// The io methods. Each forwards to the real file; writes fail once power is cut.
static const sqlite3_io_methods* IoMethods();

int SyncFile(sqlite3_file* f, int flags) {
  auto* file = reinterpret_cast<PowerCutVfs::File*>(f);
  return file->owner->Sync(file, flags);
}

PowerCutVfs::~PowerCutVfs() { Uninstall(); }

bool PowerCutVfs::Install() {
  real_ = sqlite3_vfs_find(nullptr);
  if (real_ == nullptr) return false;
  vfs_.iVersion = 1;
  vfs_.szOsFile = static_cast<int>(sizeof(File)) + real_->szOsFile;
  vfs_.mxPathname = real_->mxPathname;
  vfs_.zName = "ampledger-power-cut";
  vfs_.pAppData = this;
  vfs_.xOpen = &PowerCutVfs::Open;
  vfs_.xDelete = &PowerCutVfs::Delete;
  vfs_.xAccess = [](sqlite3_vfs* v, const char* name, int flags, int* out) {
    return Of(v)->real_->xAccess(Of(v)->real_, name, flags, out);
  };
  vfs_.xFullPathname = [](sqlite3_vfs* v, const char* name, int n, char* out) {
    return Of(v)->real_->xFullPathname(Of(v)->real_, name, n, out);
  };
  vfs_.xDlOpen = [](sqlite3_vfs* v, const char* name) {
    return Of(v)->real_->xDlOpen(Of(v)->real_, name);
  };
  vfs_.xDlError = [](sqlite3_vfs* v, int n, char* out) {
    Of(v)->real_->xDlError(Of(v)->real_, n, out);
  };
  vfs_.xDlSym = [](sqlite3_vfs* v, void* handle, const char* symbol) {
    return Of(v)->real_->xDlSym(Of(v)->real_, handle, symbol);
  };
  vfs_.xDlClose = [](sqlite3_vfs* v, void* handle) { Of(v)->real_->xDlClose(Of(v)->real_, handle); };
  vfs_.xRandomness = [](sqlite3_vfs* v, int n, char* out) {
    return Of(v)->real_->xRandomness(Of(v)->real_, n, out);
  };
  vfs_.xSleep = [](sqlite3_vfs* v, int micros) { return Of(v)->real_->xSleep(Of(v)->real_, micros); };
  vfs_.xCurrentTime = [](sqlite3_vfs* v, double* out) {
    return Of(v)->real_->xCurrentTime(Of(v)->real_, out);
  };
  vfs_.xGetLastError = [](sqlite3_vfs* v, int n, char* out) {
    return Of(v)->real_->xGetLastError(Of(v)->real_, n, out);
  };
  installed_ = sqlite3_vfs_register(&vfs_, /*makeDflt=*/1) == SQLITE_OK;
  return installed_;
}

void PowerCutVfs::Uninstall() {
  if (!installed_) return;
  sqlite3_vfs_unregister(&vfs_);
  sqlite3_vfs_register(real_, /*makeDflt=*/1);
  installed_ = false;
}

void PowerCutVfs::Cut() {
  std::lock_guard<std::mutex> lock(mu_);
  cut_ = true;
}

bool PowerCutVfs::cut() const {
  std::lock_guard<std::mutex> lock(mu_);
  return cut_;
}

void PowerCutVfs::CutAtSync(int more) {
  std::lock_guard<std::mutex> lock(mu_);
  cut_at_sync_ = syncs_ + more;
}

int PowerCutVfs::syncs() const {
  std::lock_guard<std::mutex> lock(mu_);
  return syncs_;
}

PowerCutVfs* PowerCutVfs::Of(sqlite3_vfs* vfs) { return static_cast<PowerCutVfs*>(vfs->pAppData); }

int PowerCutVfs::Open(sqlite3_vfs* vfs, const char* name, sqlite3_file* f, int flags, int* out) {
  PowerCutVfs* self = Of(vfs);
  File* file = File::Of(f);
  file->base.pMethods = nullptr;
  file->owner = self;
  file->real = reinterpret_cast<sqlite3_file*>(reinterpret_cast<char*>(f) + sizeof(File));
  int rc = self->real_->xOpen(self->real_, name, file->real, flags, out);
  if (rc != SQLITE_OK) return rc;
  file->path = new std::string(name != nullptr ? name : "");
  file->base.pMethods = IoMethods();
  return SQLITE_OK;
}

int PowerCutVfs::Delete(sqlite3_vfs* vfs, const char* name, int sync_dir) {
  PowerCutVfs* self = Of(vfs);
  if (self->cut()) return SQLITE_IOERR_DELETE;
  int rc = self->real_->xDelete(self->real_, name, sync_dir);
  if (rc == SQLITE_OK) {
    std::lock_guard<std::mutex> lock(self->mu_);
    self->durable_.erase(name);
  }
  return rc;
}

int PowerCutVfs::Sync(File* file, int flags) {
  {
    std::lock_guard<std::mutex> lock(mu_);
    if (cut_) return SQLITE_IOERR_FSYNC;
    if (cut_at_sync_ > 0 && syncs_ + 1 == cut_at_sync_) {
      cut_ = true;  // the power fails before this sync reaches the disk
      return SQLITE_IOERR_FSYNC;
    }
  }
  int rc = file->Real().xSync(file->real, flags);
  if (rc != SQLITE_OK) return rc;
  sqlite3_int64 size = 0;
  rc = file->Real().xFileSize(file->real, &size);
  if (rc != SQLITE_OK) return rc;
  std::string content(static_cast<std::size_t>(size), '\0');
  if (size > 0) {
    rc = file->Real().xRead(file->real, content.data(), static_cast<int>(size), 0);
    if (rc != SQLITE_OK) return rc;
  }
  std::lock_guard<std::mutex> lock(mu_);
  ++syncs_;
  durable_[*file->path] = std::move(content);
  return SQLITE_OK;
}

bool PowerCutVfs::MaterializeDurable(const std::string& folder) const {
  std::lock_guard<std::mutex> lock(mu_);
  for (const auto& [path, content] : durable_) {
    const std::string name = std::filesystem::path(path).filename().string();
    if (name.size() > 4 && name.compare(name.size() - 4, 4, "-shm") == 0) continue;
    std::ofstream out(std::filesystem::path(folder) / name, std::ios::binary);
    out.write(content.data(), static_cast<std::streamsize>(content.size()));
    if (!out) return false;
  }
  return true;
}

static const sqlite3_io_methods* IoMethods() {
  using File = PowerCutVfs::File;
  static const sqlite3_io_methods methods = [] {
    sqlite3_io_methods m{};
    m.iVersion = 3;
    m.xClose = Close;
    m.xRead = [](sqlite3_file* f, void* out, int n, sqlite3_int64 at) {
      return File::Of(f)->Real().xRead(File::Of(f)->real, out, n, at);
    };
    m.xWrite = [](sqlite3_file* f, const void* data, int n, sqlite3_int64 at) {
      File* file = File::Of(f);
      if (file->owner->cut()) return SQLITE_IOERR_WRITE;
      return file->Real().xWrite(file->real, data, n, at);
    };
    m.xTruncate = [](sqlite3_file* f, sqlite3_int64 size) {
      File* file = File::Of(f);
      if (file->owner->cut()) return SQLITE_IOERR_TRUNCATE;
      return file->Real().xTruncate(file->real, size);
    };
    m.xSync = SyncFile;
    m.xFileSize = [](sqlite3_file* f, sqlite3_int64* out) {
      return File::Of(f)->Real().xFileSize(File::Of(f)->real, out);
    };
    m.xLock = [](sqlite3_file* f, int level) {
      return File::Of(f)->Real().xLock(File::Of(f)->real, level);
    };
    m.xUnlock = [](sqlite3_file* f, int level) {
      return File::Of(f)->Real().xUnlock(File::Of(f)->real, level);
    };
    m.xCheckReservedLock = [](sqlite3_file* f, int* out) {
      return File::Of(f)->Real().xCheckReservedLock(File::Of(f)->real, out);
    };
    m.xFileControl = [](sqlite3_file* f, int op, void* arg) {
      return File::Of(f)->Real().xFileControl(File::Of(f)->real, op, arg);
    };
    m.xSectorSize = [](sqlite3_file* f) {
      return File::Of(f)->Real().xSectorSize(File::Of(f)->real);
    };
    m.xDeviceCharacteristics = [](sqlite3_file* f) {
      return File::Of(f)->Real().xDeviceCharacteristics(File::Of(f)->real);
    };
    // The wal-index in shared memory: not durable state, passed through.
    m.xShmMap = [](sqlite3_file* f, int page, int size, int extend, void volatile** out) {
      return File::Of(f)->Real().xShmMap(File::Of(f)->real, page, size, extend, out);
    };
    m.xShmLock = [](sqlite3_file* f, int offset, int n, int flags) {
      return File::Of(f)->Real().xShmLock(File::Of(f)->real, offset, n, flags);
    };
    m.xShmBarrier = [](sqlite3_file* f) { File::Of(f)->Real().xShmBarrier(File::Of(f)->real); };
    m.xShmUnmap = [](sqlite3_file* f, int delete_flag) {
      return File::Of(f)->Real().xShmUnmap(File::Of(f)->real, delete_flag);
    };
    // No memory-mapped reads: every page goes through xRead.
    m.xFetch = [](sqlite3_file*, sqlite3_int64, int, void** out) {
      *out = nullptr;
      return SQLITE_OK;
    };
    m.xUnfetch = [](sqlite3_file*, sqlite3_int64, void*) { return SQLITE_OK; };
    return m;
  }();
  return &methods;
}

}  // namespace ampledger::reliability
