// storage/alert_recorder.h
// AlertRecorder evaluates the alert rules (daemon/metering/alert_evaluator.h) and keeps their
// state, events and webhook outbox in SQLite. It is the ReadingWriter's CommitHook, so it
// runs on the writer thread inside each transaction that stores readings:
//   - the readings the transaction newly stored go through the rules (a resent reading is
//     not stored again, so it is never evaluated twice);
//   - the states that changed, the events, and one outbox row per webhook per event commit in
//     the same transaction as those readings. A crash loses both or neither, and a restart
//     resumes every hold time, run and budget from the stored states: no transition is lost
//     or recorded twice.
// Why the writer's transaction and not a thread of its own: evaluating a batch is a few
// microseconds of arithmetic per reading, far below the commit's fsync, so ingest does not
// slow down; a separate thread would need its own transactions (more fsyncs on an SD card)
// and could not make readings and alert states durable together.
//
// Timers (node silence, the end of a budget period) are kept in memory: a timer thread
// sleeps until the evaluator's next deadline and then submits an empty batch, whose
// transaction runs the due ticks. Acknowledge() and Silence() work the same way. Nothing
// polls the database.
//
// Threads: Create() before the writer starts; InTransaction()/AfterTransaction() on the
// writer thread; Start(), Stop() from the owner; Acknowledge(), Silence() and feed() from any
// thread (they block until their transaction committed).
#pragma once

#include <condition_variable>
#include <functional>
#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <thread>
#include <vector>

#include "config/config.h"
#include "daemon/metering/alert_evaluator.h"
#include "storage/commit_hook.h"
#include "storage/database.h"
#include "storage/event_feed.h"
#include "storage/reading_writer.h"

namespace ampledger {

struct AlertRecorderOptions {
  // Ids of the webhooks that get every event not recorded while silenced.
  std::vector<std::string> webhooks;
  // Wall clock for the timer thread, ms since 1970; the writer's own clock (WriterOptions)
  // stamps the transactions. Tests substitute both.
  std::function<UnixMs()> clock;
  // The site's tariffs, for cost budgets and cycle costs (AlertEvaluator::Create); nullptr:
  // none. Must outlive the recorder.
  const TariffSchedule* tariffs = nullptr;
};

class AlertRecorder : public CommitHook {
 public:
  // Builds the evaluator for `config` (which must outlive this) and restores the states stored
  // on `db` (the writer's connection, before the writer starts). States of rules or subjects
  // no longer in the config are left in the table, unused. Errors: the evaluator's, a stored
  // state that does not read (Corruption naming rule and subject), SQLite's.
  static Result<std::unique_ptr<AlertRecorder>> Create(const Config& config, const Database& db,
                                                       AlertRecorderOptions options);
  ~AlertRecorder() override;  // Stop()s
  AlertRecorder(const AlertRecorder&) = delete;
  AlertRecorder& operator=(const AlertRecorder&) = delete;

  // Starts the timer thread. `writer` must have been started with this as its hook and must
  // outlive Stop().
  void Start(ReadingWriter* writer);
  // Stops the timer thread and closes the feed (waiters return). Idempotent.
  void Stop();

  // Records that `by` acknowledged the active alert of (rule, subject). Returns once the
  // event is committed. NotFound when that alert is not active (or does not exist);
  // Unavailable or the writer's error when it cannot be written.
  Status Acknowledge(const std::string& rule, const std::string& subject,
                     const std::string& by);
  // No webhooks for this (rule, subject) for `duration_ms` from now (0 ends a silence); its
  // events are still recorded, marked silenced. NotFound for an unknown (rule, subject).
  Status Silence(const std::string& rule, const std::string& subject, UnixMs duration_ms,
                 const std::string& by);

  // The webhook sender's result for one outbox entry: delivered (the entry goes), or failed
  // (attempts + 1, not again before `next_ms`, `error` kept for operators). Returns once
  // committed. An entry already gone is not an error.
  Status RecordDelivery(const std::string& hook, std::int64_t event, bool delivered,
                        UnixMs next_ms, const std::string& error);

  // Newest committed event id, for long-polls and the webhook sender.
  EventFeed& feed() { return feed_; }

  Status InTransaction(const Database& db, const std::vector<ChannelReading>& stored,
                       UnixMs now) override;
  void AfterTransaction(const Status& status) override;
  Status Reload(const Database& db) override;

 private:
  // What the alert table holds besides the state, per evaluator slot.
  struct Row {
    bool active = false;
    UnixMs raised_ms = 0;             // 0 = not active
    std::int64_t condition_event = 0; // the raised/changed/silent event describing it
    std::int64_t last_event = 0;
    UnixMs acked_ms = 0;
    std::string acked_by;
    UnixMs silenced_until_ms = 0;
    bool dirty = false;
  };
  struct Command {
    enum class Kind { kAcknowledge, kSilence, kDelivery } kind;
    std::string rule;     // kDelivery: the webhook id
    std::string subject;  // kDelivery: the error of a failed attempt
    std::string by;
    UnixMs duration_ms = 0;  // kSilence; kDelivery: next attempt time
    std::int64_t event = 0;  // kDelivery
    bool delivered = false;  // kDelivery
    std::shared_ptr<Status> result;  // set inside the transaction
  };

  AlertRecorder(const Config& config, AlertEvaluator evaluator, AlertRecorderOptions options);
  Status Load(const Database& db);
  Status Prepare(const Database& db);
  int FindSlot(const std::string& rule, const std::string& subject) const;
  Status Append(const Database& db, int slot, const AlertTransition& transition,
                const std::string& by, UnixMs now);
  Status RunCommand(const Database& db, Command& command, UnixMs now);
  Status WriteRow(int slot);
  Status SubmitCommand(Command command);
  void TimerLoop();

  const Config& config_;
  const AlertRecorderOptions options_;
  EventFeed feed_;

  // The writer thread's (and Create()'s, before it runs).
  AlertEvaluator evaluator_;
  std::vector<Row> rows_;  // by evaluator slot
  const Database* prepared_on_ = nullptr;
  Statement insert_event_;
  Statement insert_outbox_;
  Statement upsert_alert_;
  Statement delete_outbox_;
  Statement retry_outbox_;
  std::int64_t newest_in_transaction_ = 0;

  std::mutex mu_;
  std::condition_variable wake_;             // the timer thread waits on it
  std::vector<Command> commands_;            // GUARDED_BY(mu_)
  std::optional<UnixMs> next_deadline_;      // GUARDED_BY(mu_)
  bool tick_in_flight_ = false;              // GUARDED_BY(mu_)
  bool stopping_ = false;                    // GUARDED_BY(mu_)
  ReadingWriter* writer_ = nullptr;          // set by Start()
  std::thread timer_;
};

}  // namespace ampledger
