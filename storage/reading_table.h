// storage/reading_table.h
// The one place that knows the columns of the `reading` table: the insert statement and
// how a row becomes a ChannelReading again. Internal to storage/; used by the writer thread
// and by query connections.
#pragma once

#include <string_view>

#include "daemon/metering/reading.h"
#include "storage/statement.h"

namespace ampledger {

// Inserting a reading already stored (same t_end and channel) changes nothing; changes()
// is 0 then.
constexpr std::string_view kInsertReadingSql =
    "INSERT OR IGNORE INTO reading (t_end, channel, boot, duration_ms, amps, volts, "
    "volts_measured, real_w, apparent_va, quality, frequency_hz, real_register_j, "
    "apparent_register_j) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13)";

// The column list for SELECTs, in the order ReadingFromRow expects.
constexpr std::string_view kReadingColumns =
    "t_end, channel, boot, duration_ms, amps, volts, volts_measured, real_w, apparent_va, "
    "quality, frequency_hz, real_register_j, apparent_register_j";

// Binds `reading` to kInsertReadingSql, storing it under series id `channel_id`.
void BindReading(Statement& insert, const ChannelReading& reading, std::int64_t channel_id);

// The reading in the current row of a SELECT of kReadingColumns; `channel_index` becomes
// its ChannelReading::channel.
ChannelReading ReadingFromRow(const Statement& row, int channel_index);

}  // namespace ampledger
