// api/http_server.h
// The HTTP front door: cpp-httplib (Debian 0.11.4) behind our own request/response types, so
// handlers never see httplib and every error leaves as an RFC 9457 problem document.
// Hardening done here, for every route:
//  - requests with Transfer-Encoding or Content-Encoding, and bodies without Content-Length,
//    are refused before the body is read (0.11.4 lets chunked bodies bypass its size limit);
//  - a small payload limit (kMaxRequestBodyBytes);
//  - exceptions become a 500 problem with no internals (0.11.4 would send e.what());
//  - answers are gzip-coded for clients that accept it, never Brotli (api/content_coding.h);
//  - unknown paths are 404 and known paths with another method 405 with Allow;
//  - a connection thread per open connection, up to kMaxHttpConnectionThreads
//    (api/connection_pool.h), so slow or idle clients do not hold every worker.
// Route() before Start(); handlers run on the server's worker threads, concurrently.
#pragma once

#include <cstdint>
#include <functional>
#include <map>
#include <memory>
#include <string>
#include <utility>
#include <vector>

#include "config/config.h"
#include "config/status.h"

namespace ampledger {

struct HttpRequest {
  std::string method;
  std::string path;
  std::vector<std::string> path_params;  // the pattern's capture groups, in order
  std::multimap<std::string, std::string> query;
  std::string body;
  std::string authorization;  // the Authorization header, "" if none
  std::string accept;         // the Accept header

  // The one value of query parameter `name`, or nullopt; several values are an error for
  // the caller to report (HasRepeated()).
  const std::string* Query(const std::string& name) const;
};

struct HttpResponse {
  int status = 200;
  std::string content_type = "application/json";
  std::string body;
  std::vector<std::pair<std::string, std::string>> headers;

  static HttpResponse Json(std::string body, int status = 200);
};

// A handler answers with a response, or a Status that becomes a problem document.
using HttpHandler = std::function<Result<HttpResponse>(const HttpRequest&)>;

inline constexpr std::size_t kMaxRequestBodyBytes = 64 * 1024;

class HttpServer {
 public:
  explicit HttpServer(const HttpConfig& config);
  ~HttpServer();  // stops and joins
  HttpServer(const HttpServer&) = delete;
  HttpServer& operator=(const HttpServer&) = delete;

  // `pattern` is a regular expression over the whole path ("/v1/circuits/([^/]+)").
  void Route(const std::string& method, const std::string& pattern, HttpHandler handler);

  // The routes added so far as (method, pattern), in the order added.
  std::vector<std::pair<std::string, std::string>> Routes() const;

  // Binds config.listen and starts serving on a thread of its own. Port 0 picks a free port.
  // With config.tls_certificate and tls_private_key, serves HTTPS (TLS 1.2 or later);
  // InvalidArgument names the key and file when a file cannot be read or the pair is not a
  // PEM certificate chain and its matching private key.
  Status Start();
  void Stop();
  std::uint16_t port() const;

 private:
  class Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace ampledger
