// api/problem.h
// RFC 9457 problem details: the one shape of every API error. ProblemFromStatus() is the one
// place a Status becomes an HTTP status; handlers never pick error codes themselves.
#pragma once

#include <string>

#include "config/status.h"

namespace ampledger {

struct Problem {
  int http_status = 500;
  std::string title;   // the reason phrase (type is about:blank, RFC 9457 section 4.2.1)
  std::string detail;  // this occurrence: which parameter is wrong and why
};

// InvalidArgument -> 400, NotFound -> 404, Unavailable -> 503, IOError/Corruption -> 500.
Problem ProblemFromStatus(const Status& status);

// A problem with an explicit HTTP status (401, 405, 411, 413, 415 ...).
Problem ProblemWithStatus(int http_status, std::string detail);

// The application/problem+json body: type, title, status, detail.
std::string ProblemJson(const Problem& problem);

inline constexpr const char* kProblemContentType = "application/problem+json";

}  // namespace ampledger
