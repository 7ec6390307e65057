// api/problem.h
// RFC 9457 problem details: the one shape of every API error. ProblemFromStatus() is the one
// place a Status becomes an HTTP status; handlers never pick error codes themselves.
#pragma once

#include <string>

#include "config/status.h"

namespace ampledger {

struct Problem {
  int http_status = 500;
  std::string title;      // the same for every occurrence of this kind of problem
  std::string detail;     // this occurrence: which parameter is wrong and why
  std::string parameter;  // the offending query/path/body parameter, if any (extension member)
};

// InvalidArgument -> 400, NotFound -> 404, Unavailable -> 503, IOError/Corruption -> 500.
Problem ProblemFromStatus(const Status& status, std::string parameter = "");

// The application/problem+json body (type about:blank, title, status, detail, parameter).
std::string ProblemJson(const Problem& problem);

inline constexpr const char* kProblemContentType = "application/problem+json";

}  // namespace ampledger
