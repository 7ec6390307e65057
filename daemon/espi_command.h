// daemon/espi_command.h
// `ampledger espi-import` and `ampledger espi-export`: utility interval data in the NAESB ESPI
// ("Green Button") format. Import reads the utility's file for the site's main meter into
// main-meter interval reads (storage/main_meter_intervals.h), for reconciliation and the
// statements' unmetered remainder; export writes a unit's or circuit's interval energy as an
// ESPI feed (api/usage_export.h), the file a tenant or owner can take into other tools.
// Main thread only.
#pragma once

#include <iosfwd>
#include <string>

namespace ampledger {

struct EspiImportOptions {
  std::string config_path;
  std::string file;      // the ESPI XML file
  bool replace = false;  // take the file's value where a stored interval differs
};

struct EspiExportOptions {
  std::string config_path;
  std::string unit;      // one of unit and circuit
  std::string circuit;
  std::string from;      // RFC 3339 with an offset, or a local date YYYY-MM-DD
  std::string to;
  int interval_s = 900;  // 900 or 3600
  std::string output;    // file to write; "" or "-" for standard output
  std::string db_path;   // default: the config's storage.path
};

// Exit codes: 0, 2 for bad options, config or file (nothing is stored then), 1 when the
// database fails.
int RunEspiImport(const EspiImportOptions& options, std::ostream& out, std::ostream& err);
int RunEspiExport(const EspiExportOptions& options, std::ostream& out, std::ostream& err);

}  // namespace ampledger
