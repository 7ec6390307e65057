// storage/database.h
// One SQLite connection to the ampledger database, configured and migrated. The writer opens
// one with Open(); query threads each open their own with OpenReader() (WAL lets readers run
// while the writer writes). A Database is used by one thread at a time; different Databases
// on the same file may be used from different threads.
//
// Schema (storage/README.md explains the choices):
//   channel_series(id, node, channel)  config names -> stable integer ids
//   circuit_series(id, circuit)
//   reading(t_end, channel, ...)       raw readings, keyed (time, series) for append-only writes
//   rollup(circuit, bucket, ...)       energy per circuit per 15-minute UTC bucket
//   rollup_pending(bucket)             buckets whose rollup rows may lag the raw readings
//   rollup_day(circuit, day, ...)      sums of rollup per local day (storage/daily_rollup.h)
//   rollup_day_zone(zone)              the IANA zone of rollup_day's days
//   node_state(node, blob)             ingest's per-node state (anti-replay window)
//   api_token(id, secret_sha256, ...)  API bearer tokens, hashed (storage/token_store.h)
//   main_meter_read(id, kind, ...)     main (utility) meter reads (storage/main_meter_store.h)
//   alert(rule, subject, state, ...)   alert rule state per subject (storage/alert_recorder.h)
//   alert_event(id, ...)               append-only alert events, increasing ids
//   webhook_outbox(hook, event, ...)   events still to be posted to each webhook
//   main_meter_interval(start_ms, ...) main meter interval reads (storage/main_meter_intervals.h)
#pragma once

#include <sqlite3.h>

#include <cstdint>
#include <memory>
#include <string>
#include <string_view>

#include "config/config.h"
#include "config/status.h"
#include "storage/statement.h"

namespace ampledger {

// The schema version this build writes (PRAGMA user_version). Migration N takes a database
// from version N-1 to N.
constexpr int kSchemaVersion = 6;

class Database {
 public:
  ~Database();
  Database(const Database&) = delete;
  Database& operator=(const Database&) = delete;

  // Opens or creates the database at options.path for writing: WAL, synchronous as
  // configured, secure_delete=FAST, foreign keys, a busy timeout, a bounded WAL; then runs
  // the migrations up to kSchemaVersion. A database from a newer ampledger is refused:
  //   "<path>: schema version 7 is newer than this ampledger supports (1); upgrade ampledger"
  static Result<std::unique_ptr<Database>> Open(const StorageConfig& options);

  // Opens an existing database for queries only (PRAGMA query_only). Fails like Open() on a
  // newer schema, and with NotFound if the file does not exist or was never migrated.
  static Result<std::unique_ptr<Database>> OpenReader(const std::string& path);

  sqlite3* handle() const { return db_; }
  const std::string& path() const { return path_; }

  // A prepared statement on this connection; it must not outlive the Database. Finished
  // statements are kept and handed out again for the same SQL (storage/statement_cache.h).
  Result<Statement> Prepare(std::string_view sql) const;
  // Runs parameterless SQL; errors say "<path>: <what>: <sqlite message>".
  Status Exec(std::string_view sql, std::string_view what) const;

  // PRAGMA user_version as stored.
  Result<int> SchemaVersion() const;

 private:
  Database(sqlite3* db, std::string path) : db_(db), path_(std::move(path)) {}
  Status Configure(const StorageConfig& options);
  Status CheckVersion(int version) const;
  Status Migrate();

  sqlite3* db_;
  std::string path_;
  // Enough for every query the API asks of one reader connection.
  mutable StatementCache statements_{64};
};

// SQLite's own count of the memory it holds for every connection in the process: page caches,
// parsed schemas, prepared statements (sqlite3_memory_used). Part of malloc's heap in use.
std::int64_t SqliteMemoryInUseBytes();

}  // namespace ampledger
