// storage/alert_recorder.cpp
#include "storage/alert_recorder.h"

#include <charconv>
#include <cmath>
#include <future>

#include "config/wall_clock.h"

namespace ampledger {

namespace {

// {"watts":3120.5,"since":1772409600000}: names are ours (letters and _), numbers finite.
std::string ValueJson(const std::vector<AlertValue>& values) {
  std::string json = "{";
  for (const AlertValue& value : values) {
    if (json.size() > 1) json += ',';
    json += '"' + value.name + "\":";
    if (!std::isfinite(value.value)) {
      json += "null";
      continue;
    }
    char buffer[32];
    auto [end, error] = std::to_chars(buffer, buffer + sizeof buffer, value.value);
    (void)error;  // 32 characters hold the shortest form of any double
    json.append(buffer, end);
  }
  return json + "}";
}

UnixMs OrNone(const Statement& statement, int column) {
  return statement.IsNull(column) ? 0 : statement.Int(column);
}

void BindOrNull(Statement& statement, int index, std::int64_t value) {
  if (value == 0) {
    statement.BindNull(index);
  } else {
    statement.Bind(index, value);
  }
}

}  // namespace

Result<std::unique_ptr<AlertRecorder>> AlertRecorder::Create(const Config& config,
                                                             const Database& db,
                                                             AlertRecorderOptions options) {
  Result<AlertEvaluator> evaluator = AlertEvaluator::Create(config, options.tariffs);
  if (!evaluator.ok()) return evaluator.status();
  if (!options.clock) options.clock = [] { return UnixMs{WallClockMs()}; };
  std::unique_ptr<AlertRecorder> recorder(
      new AlertRecorder(config, std::move(evaluator).value(), std::move(options)));
  if (Status s = recorder->Load(db); !s.ok()) return s;
  return recorder;
}

AlertRecorder::AlertRecorder(const Config& config, AlertEvaluator evaluator,
                             AlertRecorderOptions options)
    : config_(config), options_(std::move(options)), evaluator_(std::move(evaluator)) {
  rows_.resize(evaluator_.slots().size());
}

AlertRecorder::~AlertRecorder() { Stop(); }

Status AlertRecorder::Load(const Database& db) {
  Result<Statement> select = db.Prepare(
      "SELECT rule, subject, state, active, raised_ms, condition_event, last_event, acked_ms, "
      "acked_by, silenced_until_ms FROM alert");
  if (!select.ok()) return select.status();
  for (;;) {
    Result<bool> row = select->Step("load alert states");
    if (!row.ok()) return row.status();
    if (!row.value()) break;
    const std::string rule = select->Text(0);
    const std::string subject = select->Text(1);
    Result<AlertState> state = AlertState::Parse(select->Text(2));
    if (!state.ok()) {
      return state.status().WithContext(db.path() + ": alert \"" + rule + "\" for " + subject);
    }
    if (!evaluator_.Restore(rule, subject, *state)) continue;  // no longer configured
    Row& stored = rows_[FindSlot(rule, subject)];
    stored.active = select->Int(3) != 0;
    stored.raised_ms = OrNone(*select, 4);
    stored.condition_event = OrNone(*select, 5);
    stored.last_event = OrNone(*select, 6);
    stored.acked_ms = OrNone(*select, 7);
    stored.acked_by = select->IsNull(8) ? "" : select->Text(8);
    stored.silenced_until_ms = OrNone(*select, 9);
  }
  (void)evaluator_.TakeChanged();
  evaluator_.Resume(options_.clock());  // written with the first transaction
  Result<Statement> newest = db.Prepare("SELECT coalesce(max(id), 0) FROM alert_event");
  if (!newest.ok()) return newest.status();
  Result<bool> row = newest->Step("read newest alert event");
  if (!row.ok()) return row.status();
  feed_.Publish(newest->Int(0));
  std::optional<UnixMs> deadline = evaluator_.NextDeadline();
  {
    std::lock_guard<std::mutex> lock(mu_);
    next_deadline_ = deadline;
  }
  wake_.notify_all();
  return Status::Ok();
}

Status AlertRecorder::Reload(const Database& db) {
  // The failed transaction's transitions were evaluated but never stored: start again from
  // the stored states, as at start-up; the readings it held come again with the nodes'
  // resends and are evaluated then.
  Result<AlertEvaluator> evaluator = AlertEvaluator::Create(config_, options_.tariffs);
  if (!evaluator.ok()) return evaluator.status();
  evaluator_ = std::move(evaluator).value();
  rows_.assign(evaluator_.slots().size(), Row{});
  return Load(db);
}

Status AlertRecorder::Prepare(const Database& db) {
  struct {
    Statement* statement;
    std::string_view sql;
  } statements[] = {
      {&insert_event_,
       "INSERT INTO alert_event (at_ms, recorded_ms, kind, rule, subject, reason, value_json, "
       "by, silenced) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9)"},
      {&insert_outbox_,
       "INSERT INTO webhook_outbox (event, hook, attempts, next_ms, last_error) "
       "VALUES (?1, ?2, 0, ?3, '')"},
      {&upsert_alert_,
       "INSERT OR REPLACE INTO alert (rule, subject, state, active, raised_ms, condition_event, "
       "last_event, acked_ms, acked_by, silenced_until_ms) "
       "VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10)"},
      {&delete_outbox_, "DELETE FROM webhook_outbox WHERE hook = ?1 AND event = ?2"},
      {&retry_outbox_,
       "UPDATE webhook_outbox SET attempts = attempts + 1, next_ms = ?3, last_error = ?4 "
       "WHERE hook = ?1 AND event = ?2"},
  };
  for (auto& [statement, sql] : statements) {
    Result<Statement> prepared = db.Prepare(sql);
    if (!prepared.ok()) return prepared.status();
    *statement = std::move(prepared.value());
  }
  prepared_on_ = &db;
  return Status::Ok();
}

int AlertRecorder::FindSlot(const std::string& rule, const std::string& subject) const {
  const std::vector<AlertSlot>& slots = evaluator_.slots();
  for (size_t slot = 0; slot < slots.size(); ++slot) {
    if (slots[slot].subject == subject && config_.alerts[slots[slot].rule].id == rule) {
      return static_cast<int>(slot);
    }
  }
  return -1;
}

Status AlertRecorder::Append(const Database& db, int slot, const AlertTransition& transition,
                             const std::string& by, UnixMs now) {
  Row& row = rows_[slot];
  const AlertSlot& entry = evaluator_.slots()[slot];
  const bool silenced = now < row.silenced_until_ms;
  insert_event_.Bind(1, static_cast<std::int64_t>(transition.at_ms));
  insert_event_.Bind(2, static_cast<std::int64_t>(now));
  insert_event_.Bind(3, std::string_view(AlertEventKindName(transition.kind)));
  insert_event_.Bind(4, std::string_view(config_.alerts[entry.rule].id));
  insert_event_.Bind(5, std::string_view(entry.subject));
  insert_event_.Bind(6, std::string_view(transition.reason));
  insert_event_.Bind(7, std::string_view(ValueJson(transition.values)));
  insert_event_.Bind(8, std::string_view(by));
  insert_event_.Bind(9, static_cast<std::int64_t>(silenced ? 1 : 0));
  if (Status s = insert_event_.Run("record alert event"); !s.ok()) return s;
  const std::int64_t id = sqlite3_last_insert_rowid(db.handle());
  if (!silenced) {
    for (const std::string& hook : options_.webhooks) {
      insert_outbox_.Bind(1, id);
      insert_outbox_.Bind(2, std::string_view(hook));
      insert_outbox_.Bind(3, static_cast<std::int64_t>(now));
      if (Status s = insert_outbox_.Run("queue webhook"); !s.ok()) return s;
    }
  }
  row.last_event = id;
  if (StartsAlert(transition.kind) || transition.kind == AlertEventKind::kChanged) {
    if (!row.active) row.raised_ms = transition.at_ms;
    row.active = true;
    row.condition_event = id;
    row.acked_ms = 0;  // a new or worse condition needs a new acknowledgement
    row.acked_by.clear();
  } else if (EndsAlert(transition.kind)) {
    row.active = false;
    row.raised_ms = 0;
    row.condition_event = 0;
    row.acked_ms = 0;
    row.acked_by.clear();
  }
  row.dirty = true;
  newest_in_transaction_ = id;
  return Status::Ok();
}

Status AlertRecorder::RunCommand(const Database& db, Command& command, UnixMs now) {
  if (command.kind == Command::Kind::kDelivery) {
    Statement& statement = command.delivered ? delete_outbox_ : retry_outbox_;
    statement.Bind(1, std::string_view(command.rule));
    statement.Bind(2, command.event);
    if (!command.delivered) {
      statement.Bind(3, static_cast<std::int64_t>(command.duration_ms));
      statement.Bind(4, std::string_view(command.subject));
    }
    *command.result = Status::Ok();
    return statement.Run("record webhook delivery");
  }
  const int slot = FindSlot(command.rule, command.subject);
  Row* row = slot < 0 ? nullptr : &rows_[slot];
  if (command.kind == Command::Kind::kAcknowledge) {
    if (row == nullptr || !row->active) {
      *command.result = Status::NotFound("no active alert \"" + command.rule + "\" for " +
                                         command.subject);
      return Status::Ok();
    }
    *command.result = Status::Ok();
    if (row->acked_ms != 0) return Status::Ok();  // acknowledged already
    AlertTransition acknowledged{AlertEventKind::kAcknowledged, now, "acknowledged",
                                 {{"raised_at", static_cast<double>(row->raised_ms)}}};
    if (Status s = Append(db, slot, acknowledged, command.by, now); !s.ok()) return s;
    row->acked_ms = now;
    row->acked_by = command.by;
    return Status::Ok();
  }
  if (row == nullptr) {
    *command.result = Status::NotFound("no alert \"" + command.rule + "\" for " +
                                       command.subject);
    return Status::Ok();
  }
  *command.result = Status::Ok();
  row->silenced_until_ms = command.duration_ms > 0 ? now + command.duration_ms : 0;
  AlertTransition silenced{AlertEventKind::kSilenced, now,
                           command.duration_ms > 0 ? "silenced" : "silence ended",
                           {{"until", static_cast<double>(row->silenced_until_ms)}}};
  return Append(db, slot, silenced, command.by, now);
}

Status AlertRecorder::WriteRow(int slot) {
  const Row& row = rows_[slot];
  const AlertSlot& entry = evaluator_.slots()[slot];
  upsert_alert_.Bind(1, std::string_view(config_.alerts[entry.rule].id));
  upsert_alert_.Bind(2, std::string_view(entry.subject));
  upsert_alert_.Bind(3, std::string_view(entry.state.Serialize()));
  upsert_alert_.Bind(4, static_cast<std::int64_t>(row.active ? 1 : 0));
  BindOrNull(upsert_alert_, 5, row.raised_ms);
  BindOrNull(upsert_alert_, 6, row.condition_event);
  BindOrNull(upsert_alert_, 7, row.last_event);
  BindOrNull(upsert_alert_, 8, row.acked_ms);
  if (row.acked_ms == 0) {
    upsert_alert_.BindNull(9);
  } else {
    upsert_alert_.Bind(9, std::string_view(row.acked_by));
  }
  BindOrNull(upsert_alert_, 10, row.silenced_until_ms);
  return upsert_alert_.Run("store alert state");
}

Status AlertRecorder::InTransaction(const Database& db, const std::vector<ChannelReading>& stored,
                                    UnixMs now) {
  if (prepared_on_ != &db) {
    if (Status s = Prepare(db); !s.ok()) return s;
  }
  std::vector<Command> commands;
  {
    std::lock_guard<std::mutex> lock(mu_);
    commands.swap(commands_);
  }
  newest_in_transaction_ = 0;
  std::vector<AlertOutcome> outcomes;
  evaluator_.OnReadings(stored, now, &outcomes);
  evaluator_.OnTick(now, &outcomes);
  for (const AlertOutcome& outcome : outcomes) {
    if (Status s = Append(db, outcome.slot, outcome.transition, "", now); !s.ok()) return s;
  }
  for (Command& command : commands) {
    if (Status s = RunCommand(db, command, now); !s.ok()) return s;
  }
  for (int slot : evaluator_.TakeChanged()) rows_[slot].dirty = true;
  for (size_t slot = 0; slot < rows_.size(); ++slot) {
    if (!rows_[slot].dirty) continue;
    if (Status s = WriteRow(static_cast<int>(slot)); !s.ok()) return s;
    rows_[slot].dirty = false;
  }
  return Status::Ok();
}

void AlertRecorder::AfterTransaction(const Status& status) {
  if (!status.ok()) return;  // stopped with the writer until it resumes (Reload) or restarts
  if (newest_in_transaction_ > 0) feed_.Publish(newest_in_transaction_);
  std::optional<UnixMs> deadline = evaluator_.NextDeadline();
  {
    std::lock_guard<std::mutex> lock(mu_);
    next_deadline_ = deadline;
  }
  wake_.notify_all();
}

Status AlertRecorder::SubmitCommand(Command command) {
  auto result = std::make_shared<Status>(Status::Unavailable("alert command was not run"));
  command.result = result;
  {
    std::lock_guard<std::mutex> lock(mu_);
    if (writer_ == nullptr || stopping_) return Status::Unavailable("alerts are not running");
    commands_.push_back(std::move(command));
  }
  auto promise = std::make_shared<std::promise<Status>>();
  std::future<Status> done = promise->get_future();
  writer_->Submit(ReadingBatch{}, [promise, result](const Status& status) {
    promise->set_value(status.ok() ? *result : status);
  });
  Status status = done.get();
  if (!status.ok()) {
    // Refused before it ran (queue full, writer stopped): take the command back, so it does
    // not run later behind the caller's back.
    std::lock_guard<std::mutex> lock(mu_);
    std::erase_if(commands_, [&](const Command& queued) { return queued.result == result; });
  }
  return status;
}

Status AlertRecorder::Acknowledge(const std::string& rule, const std::string& subject,
                                  const std::string& by) {
  return SubmitCommand({Command::Kind::kAcknowledge, rule, subject, by, 0, 0, false, nullptr});
}

Status AlertRecorder::Silence(const std::string& rule, const std::string& subject,
                              UnixMs duration_ms, const std::string& by) {
  return SubmitCommand({Command::Kind::kSilence, rule, subject, by, duration_ms, 0, false,
                        nullptr});
}

Status AlertRecorder::RecordDelivery(const std::string& hook, std::int64_t event, bool delivered,
                                     UnixMs next_ms, const std::string& error) {
  return SubmitCommand(
      {Command::Kind::kDelivery, hook, error, "", next_ms, event, delivered, nullptr});
}

void AlertRecorder::Start(ReadingWriter* writer) {
  {
    std::lock_guard<std::mutex> lock(mu_);
    writer_ = writer;
  }
  timer_ = std::thread([this] { TimerLoop(); });
}

void AlertRecorder::Stop() {
  {
    std::lock_guard<std::mutex> lock(mu_);
    if (stopping_ && !timer_.joinable()) return;
    stopping_ = true;
  }
  wake_.notify_all();
  if (timer_.joinable()) timer_.join();
  feed_.Close();
}

void AlertRecorder::TimerLoop() {
  std::unique_lock<std::mutex> lock(mu_);
  while (!stopping_) {
    const UnixMs now = options_.clock();
    if (next_deadline_ && now >= *next_deadline_ && !tick_in_flight_) {
      tick_in_flight_ = true;
      lock.unlock();
      // An empty batch: its transaction runs the due ticks (InTransaction).
      writer_->Submit(ReadingBatch{}, [this](const Status& status) {
        std::lock_guard<std::mutex> done_lock(mu_);
        tick_in_flight_ = false;
        if (!status.ok()) next_deadline_.reset();  // the writer failed for good: no retry loop
        wake_.notify_all();
      });
      lock.lock();
      continue;
    }
    auto wait = std::chrono::hours(1);
    if (next_deadline_ && !tick_in_flight_) {
      wake_.wait_for(lock, std::chrono::milliseconds(std::max<UnixMs>(1, *next_deadline_ - now)));
    } else {
      wake_.wait_for(lock, wait);
    }
  }
}

}  // namespace ampledger
