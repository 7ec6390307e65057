// storage/database.cpp
#include "storage/database.h"

#include <filesystem>
#include <vector>

namespace ampledger {
namespace {

// Migration N (1-based) takes the schema from version N-1 to N. Never edit a released entry;
// append a new one.
const std::vector<std::string_view>& Migrations() {
  static const std::vector<std::string_view> kMigrations = {
      // 1: series, raw readings, rollups, node state.
      R"sql(
CREATE TABLE channel_series (
  id INTEGER PRIMARY KEY,
  node TEXT NOT NULL,
  channel TEXT NOT NULL,
  UNIQUE (node, channel)
);
CREATE TABLE circuit_series (
  id INTEGER PRIMARY KEY,
  circuit TEXT NOT NULL UNIQUE
);
-- Keyed (time, series): readings arrive in time order, so every commit appends to the right
-- edge of one b-tree instead of touching one leaf page per channel (flash wear).
CREATE TABLE reading (
  t_end INTEGER NOT NULL,           -- interval end, ms since 1970 UTC
  channel INTEGER NOT NULL,         -- channel_series.id
  boot INTEGER NOT NULL,
  duration_ms INTEGER NOT NULL,
  amps REAL NOT NULL,
  volts REAL NOT NULL,
  volts_measured INTEGER NOT NULL,  -- 0 or 1
  real_w REAL NOT NULL,
  apparent_va REAL NOT NULL,
  quality INTEGER NOT NULL,         -- Quality
  frequency_hz REAL,
  real_register_j REAL,
  apparent_register_j REAL,
  PRIMARY KEY (t_end, channel)
) WITHOUT ROWID;
CREATE TABLE rollup (
  circuit INTEGER NOT NULL REFERENCES circuit_series (id),
  bucket INTEGER NOT NULL,          -- bucket start, ms since 1970 UTC, multiple of 900000
  real_wh REAL NOT NULL,
  apparent_vah REAL NOT NULL,
  min_w REAL NOT NULL,
  max_w REAL NOT NULL,
  coverage REAL NOT NULL,           -- 0..1
  quality INTEGER NOT NULL,
  PRIMARY KEY (circuit, bucket)
) WITHOUT ROWID;
CREATE TABLE rollup_pending (
  bucket INTEGER PRIMARY KEY
);
CREATE TABLE node_state (
  node TEXT PRIMARY KEY,
  blob BLOB NOT NULL
) WITHOUT ROWID;
)sql",
      // 2: API bearer tokens. Only the SHA-256 of a token's secret is kept; the secret is shown
      // once, when the token is made. A revoked token keeps its row (revoked_ms set).
      R"sql(
CREATE TABLE api_token (
  id INTEGER PRIMARY KEY,
  secret_sha256 BLOB NOT NULL,      -- 32 bytes
  scope TEXT NOT NULL,              -- "admin", "viewer" or "unit:<unit id>"
  label TEXT NOT NULL,
  created_ms INTEGER NOT NULL,      -- ms since 1970 UTC
  revoked_ms INTEGER                -- NULL while the token works
);
)sql",
      // 3: reads of the site's main (utility) meter, typed in (storage/main_meter_store.h).
      R"sql(
CREATE TABLE main_meter_read (
  id INTEGER PRIMARY KEY,
  kind TEXT NOT NULL CHECK (kind IN ('register', 'period')),
  at_ms INTEGER NOT NULL,           -- register: when read; period: its end (ms since 1970 UTC)
  period_start_ms INTEGER,          -- period reads only: the period's start
  kwh REAL NOT NULL,                -- the register's value, or the period's energy
  source TEXT NOT NULL,             -- who or what gave the read
  added_ms INTEGER NOT NULL,        -- when it was stored
  CHECK ((kind = 'period') = (period_start_ms IS NOT NULL))
);
CREATE INDEX main_meter_read_at ON main_meter_read (at_ms);
)sql",
      // 4: alerts (storage/alert_recorder.h): one row per (rule, subject) with the rule's state,
      // the append-only event log, and the webhook outbox. Rule ids and subjects are names
      // from the config, so the rows mean the same whatever else the config lists.
      R"sql(
CREATE TABLE alert (
  rule TEXT NOT NULL,               -- [[alert]] id
  subject TEXT NOT NULL,            -- "circuit:<id>", "unit:<id>" or "node:<id>"
  state TEXT NOT NULL,              -- AlertState::Serialize()
  active INTEGER NOT NULL,          -- 1 while the alert is raised (or the node silent)
  raised_ms INTEGER,                -- when it became active; NULL when not active
  condition_event INTEGER,          -- the alert_event.id describing it now (raised, changed)
  last_event INTEGER,               -- newest alert_event.id of this (rule, subject)
  acked_ms INTEGER,                 -- when a person acknowledged the active alert
  acked_by TEXT,
  silenced_until_ms INTEGER,        -- no webhooks for its events before this time
  PRIMARY KEY (rule, subject)
) WITHOUT ROWID;
-- Append-only; AUTOINCREMENT so an id is never used twice, even after the newest rows go.
CREATE TABLE alert_event (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  at_ms INTEGER NOT NULL,           -- when it happened, ms since 1970 UTC
  recorded_ms INTEGER NOT NULL,     -- when it was committed
  kind TEXT NOT NULL,               -- AlertEventKindName()
  rule TEXT NOT NULL,
  subject TEXT NOT NULL,
  reason TEXT NOT NULL,
  value_json TEXT NOT NULL,         -- {"watts": 3120, ...}
  by TEXT NOT NULL,                 -- who acknowledged or silenced; "" for the daemon
  silenced INTEGER NOT NULL         -- 1: recorded while silenced, so not sent to webhooks
);
CREATE TABLE webhook_outbox (
  event INTEGER NOT NULL REFERENCES alert_event (id),
  hook TEXT NOT NULL,               -- [[webhook]] id
  attempts INTEGER NOT NULL,        -- failed attempts so far
  next_ms INTEGER NOT NULL,         -- not before this time
  last_error TEXT NOT NULL,
  PRIMARY KEY (hook, event)
) WITHOUT ROWID;
)sql",
      // 5: the daily rollup (storage/daily_rollup.h): each circuit's sums of its `rollup` rows
      // per local day of the site's zone, and the zone those days are of. The writer fills it
      // on its first start after this migration, and again whenever the zone changes.
      R"sql(
CREATE TABLE rollup_day (
  circuit INTEGER NOT NULL REFERENCES circuit_series (id),
  day INTEGER NOT NULL,             -- local midnight starting the day, ms since 1970 UTC
  day_end INTEGER NOT NULL,         -- the next local midnight (23, 24 or 25 hours later)
  real_wh REAL NOT NULL,
  apparent_vah REAL NOT NULL,
  min_w REAL NOT NULL,              -- least of the day's buckets' min_w
  max_w REAL NOT NULL,              -- greatest of their max_w
  coverage_sum REAL NOT NULL,       -- sum of their coverages: 96 is a fully measured 24 h day
  quality INTEGER NOT NULL,         -- the worst of theirs
  PRIMARY KEY (circuit, day)
) WITHOUT ROWID;
CREATE TABLE rollup_day_zone (
  zone TEXT NOT NULL                -- IANA zone of rollup_day's days; one row, or none
);
)sql",
      // 6: main (utility) meter interval reads, imported from the utility's interval data
      // (storage/main_meter_intervals.h).
      R"sql(
CREATE TABLE IF NOT EXISTS main_meter_interval (
  start_ms INTEGER PRIMARY KEY,     -- the interval's start, ms since 1970 UTC
  end_ms INTEGER NOT NULL,          -- its end (exclusive)
  wh REAL NOT NULL,                 -- energy delivered to the site over it
  source TEXT NOT NULL,             -- the file it came from
  added_ms INTEGER NOT NULL,        -- when it was stored
  CHECK (end_ms > start_ms)
);
)sql",
  };
  return kMigrations;
}

const char* SynchronousName(SyncMode mode) {
  switch (mode) {
    case SyncMode::kOff: return "OFF";
    case SyncMode::kNormal: return "NORMAL";
    case SyncMode::kFull: return "FULL";
    case SyncMode::kExtra: return "EXTRA";
  }
  return "FULL";
}

constexpr int kBusyTimeoutMs = 5000;

Result<sqlite3*> OpenHandle(const std::string& path, int flags) {
  sqlite3* db = nullptr;
  int rc = sqlite3_open_v2(path.c_str(), &db, flags | SQLITE_OPEN_NOMUTEX, nullptr);
  if (rc != SQLITE_OK) {
    Status status = SqliteStatus(db, rc, path, "open");
    sqlite3_close(db);
    return status;
  }
  sqlite3_extended_result_codes(db, 1);
  sqlite3_busy_timeout(db, kBusyTimeoutMs);
  return db;
}

}  // namespace

Database::~Database() {
  statements_.Clear();  // sqlite3_close refuses a connection with statements left
  sqlite3_close(db_);
}

Result<std::unique_ptr<Database>> Database::Open(const StorageConfig& options) {
  Result<sqlite3*> handle =
      OpenHandle(options.path, SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE);
  if (!handle.ok()) return handle.status();
  std::unique_ptr<Database> db(new Database(handle.value(), options.path));
  Result<int> version = db->SchemaVersion();
  if (!version.ok()) return version.status();
  if (Status s = db->CheckVersion(version.value()); !s.ok()) return s;
  if (Status s = db->Configure(options); !s.ok()) return s;
  if (Status s = db->Migrate(); !s.ok()) return s;
  return db;
}

Result<std::unique_ptr<Database>> Database::OpenReader(const std::string& path) {
  std::error_code error;
  if (!std::filesystem::exists(path, error)) {
    return Status::NotFound(path + ": no such database");
  }
  Result<sqlite3*> handle = OpenHandle(path, SQLITE_OPEN_READWRITE);
  if (!handle.ok()) return handle.status();
  std::unique_ptr<Database> db(new Database(handle.value(), path));
  Result<int> version = db->SchemaVersion();
  if (!version.ok()) return version.status();
  if (version.value() == 0) return Status::NotFound(path + ": database has no ampledger schema");
  if (Status s = db->CheckVersion(version.value()); !s.ok()) return s;
  if (Status s = db->Exec("PRAGMA query_only = ON", "set query_only"); !s.ok()) return s;
  return db;
}

Result<Statement> Database::Prepare(std::string_view sql) const {
  return Statement::Prepare(db_, path_, sql, &statements_);
}

Status Database::Exec(std::string_view sql, std::string_view what) const {
  return ExecSql(db_, path_, sql, what);
}

Result<int> Database::SchemaVersion() const {
  Result<Statement> statement = Prepare("PRAGMA user_version");
  if (!statement.ok()) return statement.status();
  Result<bool> row = statement->Step("read schema version");
  if (!row.ok()) return row.status();
  return row.value() ? static_cast<int>(statement->Int(0)) : 0;
}

Status Database::CheckVersion(int version) const {
  if (version > kSchemaVersion) {
    return Status::InvalidArgument(path_ + ": schema version " + std::to_string(version) +
                                   " is newer than this ampledger supports (" +
                                   std::to_string(kSchemaVersion) + "); upgrade ampledger");
  }
  return Status();
}

// Small pages suit the append pattern: each commit rewrites the partly filled last leaf page
// (and its WAL frame), so the page size is paid on every commit. Measured with the writer
// bench at home-like load: 4096-byte pages wrote ~710 bytes per reading, 1024-byte pages
// ~430 (storage/README.md). Takes effect only on a new database.
constexpr int kPageSize = 1024;

Status Database::Configure(const StorageConfig& options) {
  if (Status s = Exec("PRAGMA page_size = " + std::to_string(kPageSize), "set page_size");
      !s.ok()) {
    return s;
  }
  // journal_mode answers with the mode in force; WAL can be refused (e.g. some network file
  // systems), and without it readers would block the writer.
  Result<Statement> mode = Prepare("PRAGMA journal_mode = WAL");
  if (!mode.ok()) return mode.status();
  Result<bool> row = mode->Step("set journal_mode");
  if (!row.ok()) return row.status();
  if (!row.value() || mode->Text(0) != "wal") {
    return Status::IOError(path_ + ": cannot use WAL journal mode (journal_mode is " +
                           (row.value() ? mode->Text(0) : std::string("unknown")) + ")");
  }
  mode->Reset();
  // The WAL is checkpointed every `checkpoint_pages` pages and truncated back to
  // wal_limit_bytes afterwards, so it stays bounded; half the limit between checkpoints keeps
  // one page from being copied to the main file more often than needed.
  std::int64_t checkpoint_pages =
      std::max<std::int64_t>(100, options.wal_limit_bytes / kPageSize / 2);
  std::string pragmas = std::string("PRAGMA synchronous = ") +
                        SynchronousName(options.synchronous) +
                        ";\nPRAGMA secure_delete = FAST;\nPRAGMA foreign_keys = ON;\n"
                        "PRAGMA journal_size_limit = " + std::to_string(options.wal_limit_bytes) +
                        ";\nPRAGMA wal_autocheckpoint = " + std::to_string(checkpoint_pages) + ";";
  return Exec(pragmas, "set pragmas");
}

Status Database::Migrate() {
  Result<int> version = SchemaVersion();
  if (!version.ok()) return version.status();
  const auto& migrations = Migrations();
  static_assert(kSchemaVersion >= 1);
  for (int next = version.value() + 1; next <= kSchemaVersion; ++next) {
    std::string what = "migration to schema version " + std::to_string(next);
    if (Status s = Exec("BEGIN IMMEDIATE", what); !s.ok()) return s;
    // Another process may have migrated while we waited for the lock.
    Result<int> now = SchemaVersion();
    Status s = now.ok() ? Status() : now.status();
    if (s.ok() && now.value() < next) {
      s = Exec(migrations[next - 1], what);
      if (s.ok()) s = Exec("PRAGMA user_version = " + std::to_string(next), what);
    }
    if (s.ok()) s = Exec("COMMIT", what);
    if (!s.ok()) {
      (void)Exec("ROLLBACK", "roll back " + what);
      return s;
    }
  }
  return Status();
}

std::int64_t SqliteMemoryInUseBytes() { return sqlite3_memory_used(); }

}  // namespace ampledger
