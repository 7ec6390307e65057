// daemon/espi/espi_writer.h
// Writes an EspiFeed as ESPI XML: an Atom feed (RFC 4287) with one entry per UsagePoint,
// MeterReading, ReadingType and IntervalBlock, tied together by the ESPI resource links
// (".../UsagePoint/{n}/MeterReading/{n}/IntervalBlock/{n}", ".../ReadingType/{n}"), elements
// in the order the ESPI schema's sequences give. Pure text building; any thread.
#pragma once

#include <cstdint>
#include <string>

#include "daemon/espi/espi_feed.h"

namespace ampledger {

struct EspiWriteOptions {
  std::int64_t updated_s = 0;  // the feed's and entries' <updated>, seconds since 1970 UTC
  // Entry ids are name-based UUIDs (RFC 9562 version 5) of this text plus the entry's link,
  // so the same export written twice has the same ids, and different sites' differ.
  std::string id_seed;
  std::string href_base = "/espi";  // prefix of every resource link
};

std::string WriteEspiFeed(const EspiFeed& feed, const EspiWriteOptions& options);

// The name-based UUID (RFC 9562 section 5.5: SHA-1, version 5) of `name` in the URL namespace
// (RFC 9562 section 6.6), lower-case hex with hyphens.
std::string NameBasedUuid(const std::string& name);

}  // namespace ampledger
