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
    case 503: return "Service Unavailable";
    default: return "Internal Server Error";
  }
}

}  // namespace

Problem ProblemFromStatus(const Status& status, std::string parameter) {
  Problem problem;
  switch (status.code()) {
    case StatusCode::kInvalidArgument: problem.http_status = 400; break;
    case StatusCode::kNotFound: problem.http_status = 404; break;
    case StatusCode::kUnavailable: problem.http_status = 503; break;
    default: problem.http_status = 500; break;
  }
  // With type about:blank the title is the reason phrase (RFC 9457 section 4.2.1).
  problem.title = ReasonPhrase(problem.http_status);
  problem.detail = status.message();
  problem.parameter = std::move(parameter);
  return problem;
}

std::string ProblemJson(const Problem& problem) {
  nlohmann::json body = {
      {"type", "about:blank"},
      {"title", problem.title.empty() ? ReasonPhrase(problem.http_status) : problem.title},
      {"status", problem.http_status},
      {"detail", problem.detail},
  };
  if (!problem.parameter.empty()) body["parameter"] = problem.parameter;
  return body.dump();
}

}  // namespace ampledger
