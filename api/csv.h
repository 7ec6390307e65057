// api/csv.h
// RFC 4180 text for the CSV answers: fields quoted when they must be, numbers written the
// same way in every table. Pure functions; any thread.
#pragma once

#include <string>

namespace ampledger {

// RFC 4180 section 2: a field with a comma, double quote or line break is enclosed in double
// quotes, and a double quote inside it is doubled.
std::string CsvField(const std::string& text);

// A number with up to 6 significant digits ("1234.57", "0.25", "1e+07").
std::string CsvNumber(double value);

// Records end with CRLF (RFC 4180 section 2, rule 1).
inline constexpr const char* kCsvLineEnd = "\r\n";

// The media type of every CSV answer (RFC 4180 section 3; RFC 7111 adds no parameters).
inline constexpr const char* kCsvContentType = "text/csv; charset=utf-8; header=present";

}  // namespace ampledger
