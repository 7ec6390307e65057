// storage/commit_hook.h
// CommitHook lets another part of storage write its own rows in the writer's transactions, so
// they commit atomically with the readings that caused them (the alert recorder: alert
// states and events are never ahead of or behind the readings on disk). Both calls run on
// the writer thread, one transaction at a time.
#pragma once

#include <vector>

#include "config/status.h"
#include "daemon/metering/reading.h"
#include "storage/database.h"

namespace ampledger {

class CommitHook {
 public:
  virtual ~CommitHook() = default;

  // Inside the transaction, after the queued batches' rows: `stored` are the readings this
  // transaction newly stored (resent duplicates left out), in submission order; `now` is the
  // writer's clock. A non-OK Status rolls the whole transaction back and becomes the writer's
  // sticky error. Keep it short: ingest's acknowledgements wait for the commit.
  virtual Status InTransaction(const Database& db, const std::vector<ChannelReading>& stored,
                               UnixMs now) = 0;

  // After the transaction ended: OK when it committed, else why it did not.
  virtual void AfterTransaction(const Status& status) = 0;

  // Before the writer resumes after a failed transaction (a full disk freed, see
  // reading_writer.h): the rollback left the database as it was before that transaction, so
  // state held in memory is reloaded from it. A non-OK Status keeps the writer stopped.
  virtual Status Reload(const Database& db) = 0;
};

}  // namespace ampledger
