// storage/backup.h
// `ampledger backup`: a consistent copy of the live database while the daemon keeps writing.
// Any thread; opens its own connections.
#pragma once

#include <string>

#include "config/status.h"

namespace ampledger {

// Copies the database at `live_path` to `to_path` with SQLite's online backup API. The copy
// is one snapshot: a read transaction is held on the source for the whole copy (in WAL mode
// it does not block the writer), and pages move in small steps. The copy is written to
// "<to_path>.partial" and renamed over `to_path` only when complete, so a failed backup never
// leaves a truncated file under the requested name. Errors name the path at fault.
Status BackupDatabase(const std::string& live_path, const std::string& to_path);

}  // namespace ampledger
