// storage/reading_writer.h
// ReadingWriter is the only code that writes readings, node state and rollups. It owns one
// thread, the writer thread, which alone uses the Database handed to it. Submit(), Health()
// and Stop() may be called from any thread.
//
// Batches queue until StorageConfig::batch_rows rows are waiting or batch_millis have passed
// since the first of them; then everything queued is written in one BEGIN IMMEDIATE ...
// COMMIT, and every `done` of the committed batches runs with OK on the writer thread, in
// submission order. Ingest acknowledges a datagram only then.
//
// Errors are sticky (leveldb's bg_error_): once a write or commit fails, its outcome on disk
// is not known to the rollups held in memory, so the writer refuses every later batch with
// that Status and Health() reports it. An Unavailable error (a full disk: SQLITE_FULL; a
// database locked by another process) is retried after WriterOptions::retry_after_ms: the
// rollups are recovered from disk as at start-up and writing resumes. Any other error stays
// until the process restarts. Nodes keep unacknowledged readings and resend them.
//
// Between batches the writer deletes raw readings older than raw_retention_days in small
// transactions (at most WriterOptions::retention_batch_rows each), so ingest never waits long.
#pragma once

#include <chrono>
#include <condition_variable>
#include <cstdint>
#include <deque>
#include <functional>
#include <memory>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include "config/config.h"
#include "daemon/metering/reading.h"
#include "storage/commit_hook.h"
#include "storage/database.h"
#include "storage/rollup_builder.h"
#include "storage/series.h"

namespace ampledger {

// Ingest's per-node state (its anti-replay window), stored with the readings it covers.
struct NodeState {
  std::string node;
  std::string blob;  // opaque to storage
};

// What one datagram (or several) adds; written in one transaction. A later batch's state for
// a node replaces an earlier one's.
struct ReadingBatch {
  std::vector<ChannelReading> readings;  // ChannelReading::channel: flat channel index
  std::vector<NodeState> node_states;    // upserted by node
};

struct WriterOptions {
  // Submit() refuses with Unavailable while this many readings are queued (bounded memory).
  std::int64_t max_queued_rows = 200000;
  // Wall clock for retention, ms since 1970; tests substitute their own.
  std::function<UnixMs()> clock;
  int retention_batch_rows = 2000;
  int retention_every_ms = 60 * 1000;
  // How often open rollup buckets are written: when the readings' own time has advanced this
  // far since the last write, or this much wall time has passed. They are always written when
  // their bucket closes and at Stop().
  int open_bucket_flush_ms = 60 * 1000;
  // After an Unavailable error (disk full), how long until writing is tried again.
  int retry_after_ms = 5 * 1000;
  // Writes its own rows in every transaction that commits batches (storage/commit_hook.h);
  // nullptr = none. Must outlive the writer.
  CommitHook* hook = nullptr;
};

class ReadingWriter {
 public:
  // Starts the writer thread on `db` (which must outlive this and is used by nothing else
  // from now on). `series` must come from RegisterSeries(*db, config). Recovers the rollups
  // of buckets a crash left pending before returning.
  static Result<std::unique_ptr<ReadingWriter>> Start(const Config& config, Database* db,
                                                      SeriesMap series,
                                                      WriterOptions options = {});
  ~ReadingWriter();  // Stop()s
  ReadingWriter(const ReadingWriter&) = delete;
  ReadingWriter& operator=(const ReadingWriter&) = delete;

  // Queues `batch` (an empty batch asks for a transaction, e.g. for the hook's own work).
  // `done` runs exactly once: with OK after the batch committed (on the
  // writer thread); or, on the calling thread before Submit returns, with InvalidArgument
  // (a channel index out of range), Unavailable (queue full, or stopped) or the sticky error.
  // `done` may run on the writer thread: it must not call Stop(), and it should be quick
  // (the writer waits for it before the next commit).
  void Submit(ReadingBatch batch, std::function<void(const Status&)> done);

  // OK, or the sticky error that stopped the writer.
  Status Health() const;

  // Writes everything queued (and the open rollup buckets), then joins the thread. Later
  // Submit()s get Unavailable. Idempotent.
  void Stop();

 private:
  struct Queued {
    ReadingBatch batch;
    std::function<void(const Status&)> done;
  };
  using Clock = std::chrono::steady_clock;

  ReadingWriter(const Config& config, Database* db, SeriesMap series, WriterOptions options);
  Status Prepare();
  void Run();  // the writer thread
  // Writes `items` in one transaction; the writer thread only.
  Status Commit(std::vector<Queued>& items, bool write_open);
  Status WriteReadings(const std::vector<ChannelReading>& readings);
  Status DeleteOldReadings(bool* more);
  UnixMs RetentionCutoff() const;  // raw readings ending before this are deleted
  Status Transaction(const std::function<Status()>& body, std::string_view what);
  // Keeps the first error and when to retry it; with mu_ held.
  void RecordError(const Status& status, Clock::time_point now);

  // Set before the thread starts; read-only afterwards.
  Database* const db_;
  const SeriesMap series_;
  const StorageConfig storage_;
  const UnixMs max_gap_ms_;
  const std::string time_zone_;  // the site's: local days of the daily rollup
  const WriterOptions options_;

  // The writer thread's own (and Start()'s, before the thread exists).
  std::unique_ptr<RollupBuilder> rollups_;
  Statement insert_reading_;
  Statement upsert_node_state_;
  Statement delete_old_;
  std::vector<ChannelReading> stored_;  // newly stored by the transaction being written
  Clock::time_point next_retention_;
  Clock::time_point next_open_flush_;
  UnixMs open_written_at_ms_ = 0;  // rollups_->newest_ms() when open buckets were last written

  mutable std::mutex mu_;
  std::condition_variable wake_;       // the writer thread waits on it, with mu_
  std::deque<Queued> queue_;           // GUARDED_BY(mu_)
  std::int64_t queued_rows_ = 0;       // GUARDED_BY(mu_)
  Clock::time_point first_queued_at_;  // GUARDED_BY(mu_): when queue_ last became non-empty
  bool stopping_ = false;              // GUARDED_BY(mu_)
  Status error_;                       // GUARDED_BY(mu_): sticky (Unavailable: until retry_at_)
  Clock::time_point retry_at_;         // GUARDED_BY(mu_)
  std::thread thread_;                 // started by Start(), joined by Stop()
  std::once_flag stopped_;
};

// Ingest's stored node states, at start-up: on the writer's connection before
// ReadingWriter::Start(), or on a reader connection.
Result<std::vector<NodeState>> LoadNodeStates(const Database& db);

}  // namespace ampledger
