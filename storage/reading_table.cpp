// storage/reading_table.cpp
#include "storage/reading_table.h"

namespace ampledger {

void BindReading(Statement& insert, const ChannelReading& reading, std::int64_t channel_id) {
  insert.Bind(1, static_cast<std::int64_t>(reading.end_ms));
  insert.Bind(2, channel_id);
  insert.Bind(3, static_cast<std::int64_t>(reading.boot));
  insert.Bind(4, static_cast<std::int64_t>(reading.duration_ms));
  insert.Bind(5, reading.amps);
  insert.Bind(6, reading.volts);
  insert.Bind(7, static_cast<std::int64_t>(reading.volts_measured ? 1 : 0));
  insert.Bind(8, reading.real_watts);
  insert.Bind(9, reading.apparent_va);
  insert.Bind(10, static_cast<std::int64_t>(reading.quality));
  insert.Bind(11, reading.frequency_hz);
  insert.Bind(12, reading.real_register_j);
  insert.Bind(13, reading.apparent_register_j);
}

ChannelReading ReadingFromRow(const Statement& row, int channel_index) {
  ChannelReading r;
  r.end_ms = row.Int(0);
  r.channel = channel_index;
  r.boot = static_cast<std::uint32_t>(row.Int(2));
  r.duration_ms = static_cast<std::int32_t>(row.Int(3));
  r.amps = row.Double(4);
  r.volts = row.Double(5);
  r.volts_measured = row.Int(6) != 0;
  r.real_watts = row.Double(7);
  r.apparent_va = row.Double(8);
  std::int64_t quality = row.Int(9);
  r.quality = quality >= 0 && quality <= static_cast<int>(Quality::kEstimated)
                  ? static_cast<Quality>(quality)
                  : Quality::kEstimated;
  r.frequency_hz = row.OptionalDouble(10);
  r.real_register_j = row.OptionalDouble(11);
  r.apparent_register_j = row.OptionalDouble(12);
  return r;
}

}  // namespace ampledger
