// daemon/espi/espi_reader.h
// Reads ESPI XML (an Atom feed of ESPI resources, as a utility's "download my data" file gives
// it) into an EspiFeed, with libxml2: no network, no DTD, no entity expansion. Each
// MeterReading is matched to its ReadingType and IntervalBlocks through the entries' resource
// links; UsagePoints other than electricity and resources ampledger does not use (usage
// summaries, local time parameters) are skipped. Any thread (libxml2 keeps its error state
// per thread).
#pragma once

#include <string>
#include <string_view>

#include "config/status.h"
#include "daemon/espi/espi_feed.h"

namespace ampledger {

// Bigger than a year of 15-minute readings of several series (a year of one series is about
// 8 MB in the layout utilities use); refused above, before parsing.
constexpr size_t kMaxEspiFileBytes = 64u << 20;

// Parses `xml`; `file_name` only names the file in errors. InvalidArgument saying
// "<file>:<line>: <element>: <what is wrong>" for malformed XML, a DOCTYPE (ESPI files have
// none; it could only declare entities), a root other than an Atom
// feed, a number that is not an integer, a missing element an IntervalReading or
// IntervalBlock needs, or an IntervalBlock whose MeterReading or ReadingType cannot be found.
// A ReadingType element that is absent reads as -1 (powerOfTenMultiplier as 0, its default).
Result<EspiFeed> ReadEspiFeed(std::string_view xml, const std::string& file_name);

}  // namespace ampledger
