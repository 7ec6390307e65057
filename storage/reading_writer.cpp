// storage/reading_writer.cpp
#include "storage/reading_writer.h"

#include <pthread.h>

#include <algorithm>
#include <map>
#include <string_view>

#include "storage/reading_table.h"

namespace ampledger {
namespace {

UnixMs SystemNowMs() {
  return std::chrono::duration_cast<std::chrono::milliseconds>(
             std::chrono::system_clock::now().time_since_epoch())
      .count();
}

}  // namespace

Result<std::unique_ptr<ReadingWriter>> ReadingWriter::Start(const Config& config, Database* db,
                                                            SeriesMap series,
                                                            WriterOptions options) {
  if (!options.clock) options.clock = SystemNowMs;
  std::unique_ptr<ReadingWriter> writer(
      new ReadingWriter(config, db, std::move(series), std::move(options)));
  if (Status s = writer->Prepare(); !s.ok()) return s;
  writer->thread_ = std::thread([w = writer.get()] { w->Run(); });
  return writer;
}

ReadingWriter::ReadingWriter(const Config& config, Database* db, SeriesMap series,
                             WriterOptions options)
    : db_(db),
      series_(std::move(series)),
      storage_(config.storage),
      max_gap_ms_(std::max<UnixMs>(1, static_cast<UnixMs>(config.site.max_gap_seconds * 1000))),
      time_zone_(config.site.time_zone),
      options_(std::move(options)) {}

ReadingWriter::~ReadingWriter() { Stop(); }

Status ReadingWriter::Prepare() {
  struct {
    Statement* statement;
    std::string_view sql;
  } statements[] = {
      {&insert_reading_, kInsertReadingSql},
      {&upsert_node_state_, "INSERT OR REPLACE INTO node_state (node, blob) VALUES (?1, ?2)"},
      // Deletes the oldest rows up to the batch's last time stamp (all rows sharing it), so
      // every pass makes progress and none is long.
      {&delete_old_,
       "DELETE FROM reading WHERE t_end <= coalesce((SELECT t_end FROM reading WHERE t_end < ?1 "
       "ORDER BY t_end LIMIT 1 OFFSET ?2), ?1 - 1)"},
  };
  for (auto& [statement, sql] : statements) {
    Result<Statement> prepared = db_->Prepare(sql);
    if (!prepared.ok()) return prepared.status();
    *statement = std::move(prepared.value());
  }
  Result<std::unique_ptr<RollupBuilder>> rollups =
      RollupBuilder::Create(db_, series_, max_gap_ms_, time_zone_);
  if (!rollups.ok()) return rollups.status();
  rollups_ = std::move(rollups.value());
  open_written_at_ms_ = rollups_->newest_ms();
  Clock::time_point now = Clock::now();
  next_retention_ = now;
  next_open_flush_ = now + std::chrono::milliseconds(options_.open_bucket_flush_ms);
  return Status();
}

void ReadingWriter::Submit(ReadingBatch batch, std::function<void(const Status&)> done) {
  for (const ChannelReading& reading : batch.readings) {
    if (reading.channel < 0 || reading.channel >= series_.ChannelCount()) {
      done(Status::InvalidArgument("reading for channel index " +
                                   std::to_string(reading.channel) + " of " +
                                   std::to_string(series_.ChannelCount())));
      return;
    }
  }
  auto rows = static_cast<std::int64_t>(batch.readings.size());
  Status refused;
  {
    std::lock_guard<std::mutex> lock(mu_);
    if (!error_.ok()) {
      refused = error_;
    } else if (stopping_) {
      refused = Status::Unavailable(storage_.path + ": writer stopped");
    } else if (queued_rows_ + rows > options_.max_queued_rows && !queue_.empty()) {
      refused = Status::Unavailable(storage_.path + ": writer queue full (" +
                                    std::to_string(queued_rows_) + " readings waiting)");
    } else {
      bool was_empty = queue_.empty();
      if (was_empty) first_queued_at_ = Clock::now();
      queue_.push_back({std::move(batch), std::move(done)});
      queued_rows_ += rows;
      if (was_empty || queued_rows_ >= storage_.batch_rows) wake_.notify_one();
      return;
    }
  }
  done(refused);
}

Status ReadingWriter::Health() const {
  std::lock_guard<std::mutex> lock(mu_);
  return error_;
}

void ReadingWriter::Stop() {
  std::call_once(stopped_, [this] {
    {
      std::lock_guard<std::mutex> lock(mu_);
      stopping_ = true;
    }
    wake_.notify_one();
    if (thread_.joinable()) thread_.join();
  });
}

void ReadingWriter::Run() {
  pthread_setname_np(pthread_self(), "ampl-writer");  // shown by top -H and perf
  const auto batch_wait = std::chrono::milliseconds(storage_.batch_millis);
  const auto open_flush_every = std::chrono::milliseconds(options_.open_bucket_flush_ms);
  std::unique_lock<std::mutex> lock(mu_);
  for (;;) {
    Clock::time_point now = Clock::now();
    if (!queue_.empty() &&
        (stopping_ || queued_rows_ >= storage_.batch_rows || now >= first_queued_at_ + batch_wait)) {
      std::vector<Queued> items(std::make_move_iterator(queue_.begin()),
                                std::make_move_iterator(queue_.end()));
      queue_.clear();
      queued_rows_ = 0;
      Status status = error_;
      bool write_open =
          stopping_ || now >= next_open_flush_ ||
          rollups_->newest_ms() >= open_written_at_ms_ + options_.open_bucket_flush_ms;
      lock.unlock();
      if (status.ok()) status = Commit(items, write_open);
      if (status.ok() && write_open) {
        next_open_flush_ = now + open_flush_every;
        open_written_at_ms_ = rollups_->newest_ms();
      }
      lock.lock();
      RecordError(status, now);
      lock.unlock();
      for (Queued& item : items) item.done(status);
      lock.lock();
      continue;
    }
    if (stopping_) break;
    bool healthy = error_.ok();
    if (healthy && now >= next_retention_) {
      lock.unlock();
      bool more = false;
      Status status = Transaction([&] { return DeleteOldReadings(&more); }, "delete old readings");
      next_retention_ = more ? now : now + std::chrono::milliseconds(options_.retention_every_ms);
      lock.lock();
      RecordError(status, now);
      continue;
    }
    bool open_waiting = healthy && rollups_->HasUnwrittenOpenBuckets();
    if (open_waiting && now >= next_open_flush_) {
      lock.unlock();
      Status status = Transaction([&] { return rollups_->Finish(true); }, "write rollups");
      next_open_flush_ = now + open_flush_every;
      lock.lock();
      RecordError(status, now);
      continue;
    }
    if (!healthy && error_.code() == StatusCode::kUnavailable && now >= retry_at_) {
      // A full disk (or a database another process holds locked) is not a broken one: the
      // failed transaction was rolled back, which leaves the database as a crash at that
      // moment would have, so the rollups are recovered from disk as Start() does and
      // writing resumes. If the cause persists, the next commit fails again.
      lock.unlock();
      Result<std::unique_ptr<RollupBuilder>> rollups =
          RollupBuilder::Create(db_, series_, max_gap_ms_, time_zone_);
      if (rollups.ok() && options_.hook) {
        if (Status reloaded = options_.hook->Reload(*db_); !reloaded.ok()) rollups = reloaded;
      }
      lock.lock();
      if (rollups.ok()) {
        rollups_ = std::move(rollups.value());
        open_written_at_ms_ = rollups_->newest_ms();
        error_ = Status();
      } else {
        retry_at_ = now + std::chrono::milliseconds(options_.retry_after_ms);
      }
      continue;
    }
    Clock::time_point wake_at = healthy ? next_retention_ : now + std::chrono::hours(1);
    if (!healthy && error_.code() == StatusCode::kUnavailable) wake_at = retry_at_;
    if (open_waiting) wake_at = std::min(wake_at, next_open_flush_);
    if (!queue_.empty()) wake_at = std::min(wake_at, first_queued_at_ + batch_wait);
    wake_.wait_until(lock, wake_at);
  }
  bool healthy = error_.ok();
  lock.unlock();
  if (healthy && rollups_->HasUnwrittenOpenBuckets()) {
    Status status = Transaction([&] { return rollups_->Finish(true); }, "write rollups");
    lock.lock();
    RecordError(status, Clock::now());
  }
}

void ReadingWriter::RecordError(const Status& status, Clock::time_point now) {
  if (status.ok() || !error_.ok()) return;
  error_ = status;
  retry_at_ = now + std::chrono::milliseconds(options_.retry_after_ms);
}

Status ReadingWriter::Transaction(const std::function<Status()>& body, std::string_view what) {
  Status status = db_->Exec("BEGIN IMMEDIATE", what);
  if (status.ok()) status = body();
  if (status.ok()) status = db_->Exec("COMMIT", what);
  if (!status.ok() && !sqlite3_get_autocommit(db_->handle())) {
    (void)db_->Exec("ROLLBACK", what);
  }
  return status;
}

Status ReadingWriter::Commit(std::vector<Queued>& items, bool write_open) {
  rollups_->set_raw_kept_from_ms(RetentionCutoff());
  stored_.clear();
  Status status = Transaction(
      [&] {
        // A node's state only moves forward from batch to batch, so of the states in this
        // transaction only each node's last one needs writing.
        std::map<std::string_view, std::string_view> latest_state;
        for (const Queued& item : items) {
          if (Status s = WriteReadings(item.batch.readings); !s.ok()) return s;
          for (const NodeState& state : item.batch.node_states) {
            latest_state[state.node] = state.blob;
          }
        }
        for (const auto& [node, blob] : latest_state) {
          upsert_node_state_.Bind(1, node);
          upsert_node_state_.BindBlob(2, blob);
          if (Status s = upsert_node_state_.Run("store node state"); !s.ok()) return s;
        }
        Status s = rollups_->Finish(write_open);
        assert(rollups_->CheckInvariants());
        if (s.ok() && options_.hook) {
          s = options_.hook->InTransaction(*db_, stored_, options_.clock());
        }
        return s;
      },
      "commit readings");
  if (options_.hook) options_.hook->AfterTransaction(status);
  return status;
}

Status ReadingWriter::WriteReadings(const std::vector<ChannelReading>& readings) {
  sqlite3* handle = db_->handle();
  for (const ChannelReading& reading : readings) {
    BindReading(insert_reading_, reading, series_.channel_ids[reading.channel]);
    if (Status s = insert_reading_.Run("insert reading"); !s.ok()) return s;
    if (sqlite3_changes(handle) == 0) continue;  // stored already
    rollups_->Add(reading);
    if (options_.hook) stored_.push_back(reading);
  }
  return Status();
}

UnixMs ReadingWriter::RetentionCutoff() const {
  return options_.clock() - static_cast<UnixMs>(storage_.raw_retention_days) * 86'400'000;
}

Status ReadingWriter::DeleteOldReadings(bool* more) {
  delete_old_.Bind(1, static_cast<std::int64_t>(RetentionCutoff()));
  delete_old_.Bind(2, static_cast<std::int64_t>(std::max(0, options_.retention_batch_rows - 1)));
  Status s = delete_old_.Run("delete old readings");
  *more = s.ok() && sqlite3_changes(db_->handle()) >= options_.retention_batch_rows;
  return s;
}

Result<std::vector<NodeState>> LoadNodeStates(const Database& db) {
  Result<Statement> select = db.Prepare("SELECT node, blob FROM node_state ORDER BY node");
  if (!select.ok()) return select.status();
  std::vector<NodeState> out;
  for (;;) {
    Result<bool> row = select->Step("load node states");
    if (!row.ok()) return row.status();
    if (!row.value()) break;
    out.push_back({select->Text(0), select->Blob(1)});
  }
  return out;
}

}  // namespace ampledger
