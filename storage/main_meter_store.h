// storage/main_meter_store.h
// The main_meter_read table: reads of the site's main (utility) meter, typed in by a person
// (`ampledger meter-read`), which statements use for the unmetered remainder
// (daemon/metering/main_meter.h). A site has a few reads a month, so reads are listed whole.
// Every call is prepared statements on the caller's connection, used by one thread at a time.
// Writes run on a connection of their own while the daemon runs: each is one short
// BEGIN IMMEDIATE transaction that waits out the writer with the busy timeout.
#pragma once

#include <cstdint>
#include <vector>

#include "config/status.h"
#include "daemon/metering/main_meter.h"
#include "storage/database.h"

namespace ampledger {

// Stores `read` (its id is ignored) and returns its new id. The check against the stored
// reads (CheckNewMeterRead) and the insert are one transaction, so two commands cannot both
// add contradicting reads. InvalidArgument, storing nothing, when the read is refused.
Result<std::int64_t> AddMainMeterRead(const Database& db, const MainMeterRead& read,
                                      UnixMs added_ms);

// Every stored read, by time (at_ms), then id.
Result<std::vector<MainMeterRead>> ListMainMeterReads(const Database& db);

// Deletes read `id` (one typed in by mistake). NotFound when there is none.
Status RemoveMainMeterRead(const Database& db, std::int64_t id);

}  // namespace ampledger
