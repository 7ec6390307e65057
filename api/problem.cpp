#include "api/problem.h"

#include <nlohmann/json.hpp>

namespace ampledger {

namespace {

const char* ReasonPhrase(int http_status) {
  switch (http_status) {
    case 400: return "Bad Request";
    case 401: return "Unauthorized";
    case 403: return "Forbidden";
    case 404: return "Not Found";
    case 405: return "Method Not Allowed";
    case 411: return "Length Required";
    case 413: return "Content Too Large";
    case 415: return "Unsupported Media Type";
    case 431: return "Request Header Fields Too Large";
    case 503: return "Service Unavailable";
    default: return "Internal Server Error";
  }
}

}  // namespace

Problem ProblemWithStatus(int http_status, std::string detail) {
  return Problem{http_status, ReasonPhrase(http_status), std::move(detail)};
}

Problem ProblemFromStatus(const Status& status) {
  switch (status.code()) {
    case StatusCode::kInvalidArgument: return ProblemWithStatus(400, status.message());
    case StatusCode::kNotFound: return ProblemWithStatus(404, status.message());
    case StatusCode::kUnavailable: return ProblemWithStatus(503, status.message());
    default:
      // Internal failures say what failed, never how (no paths, no SQL).
      return ProblemWithStatus(500, std::string(StatusCodeName(status.code())) +
                                        " while answering; see the daemon's log");
  }
}

std::string ProblemJson(const Problem& problem) {
  nlohmann::json body = {
      {"type", "about:blank"},
      {"title", problem.title},
      {"status", problem.http_status},
      {"detail", problem.detail},
  };
  return body.dump();
}

}  // namespace ampledger
