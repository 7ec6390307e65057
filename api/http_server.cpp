#include "api/http_server.h"

#include <httplib.h>
#include <openssl/ssl.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <regex>
#include <thread>

#include "api/api_limits.h"
#include "api/connection_pool.h"
#include "api/content_coding.h"
#include "api/problem.h"

namespace ampledger {

namespace {

struct RouteEntry {
  std::string method;
  std::string pattern_text;
  std::regex pattern;
  HttpHandler handler;
};

void SendProblem(httplib::Response& response, const Problem& problem) {
  response.status = problem.http_status;
  response.set_content(ProblemJson(problem), kProblemContentType);
}

// Refusals that must happen before httplib reads a body (see the header).
std::optional<Problem> RefuseBeforeBody(const httplib::Request& request) {
  if (request.has_header("Transfer-Encoding")) {
    return ProblemWithStatus(411, "Transfer-Encoding is not accepted; send the body with "
                                  "Content-Length");
  }
  if (request.has_header("Content-Encoding")) {
    return ProblemWithStatus(415, "Content-Encoding is not accepted; send the body unencoded");
  }
  bool has_body_method = request.method == "POST" || request.method == "PUT" ||
                         request.method == "PATCH";
  if (has_body_method && !request.has_header("Content-Length")) {
    return ProblemWithStatus(411, "a request body needs a Content-Length header");
  }
  if (request.has_header("Content-Length")) {
    const std::string length = request.get_header_value("Content-Length");
    if (length.empty() || length.size() > 12 ||
        length.find_first_not_of("0123456789") != std::string::npos) {
      return ProblemWithStatus(400, "Content-Length \"" + length + "\" is not a number");
    }
    if (std::stoull(length) > kMaxRequestBodyBytes) {
      return ProblemWithStatus(413, "the body is larger than " +
                                        std::to_string(kMaxRequestBodyBytes) + " bytes");
    }
  }
  return std::nullopt;
}

// httplib chooses the answer's content coding from the request's Accept-Encoding after the
// handler has run; this leaves the header naming only what ChooseContentCoding allows (gzip
// or nothing). The request is httplib's own non-const object, handed to handlers as const.
void OfferOnlyChosenCoding(const httplib::Request& request) {
  auto& headers = const_cast<httplib::Headers&>(request.headers);
  auto [first, last] = headers.equal_range("Accept-Encoding");
  if (first == last) return;
  std::string offered;
  for (auto header = first; header != last; ++header) {
    offered += (offered.empty() ? "" : ",") + header->second;
  }
  headers.erase(first, last);
  const std::string_view chosen = ChooseContentCoding(offered);
  if (!chosen.empty()) headers.emplace("Accept-Encoding", std::string(chosen));
}

}  // namespace

const std::string* HttpRequest::Query(const std::string& name) const {
  auto found = query.find(name);
  return found == query.end() ? nullptr : &found->second;
}

HttpResponse HttpResponse::Json(std::string body, int status) {
  HttpResponse response;
  response.status = status;
  response.body = std::move(body);
  return response;
}

class HttpServer::Impl {
 public:
  explicit Impl(const HttpConfig& config) : config_(config) {}

  void Dispatch(const httplib::Request& raw, httplib::Response& response) {
    std::string allowed;
    for (const RouteEntry& route : routes_) {
      std::smatch match;
      if (!std::regex_match(raw.path, match, route.pattern)) continue;
      if (route.method != raw.method) {
        allowed += (allowed.empty() ? "" : ", ") + route.method;
        continue;
      }
      Answer(route, match, raw, response);
      return;
    }
    if (!allowed.empty()) {
      response.set_header("Allow", allowed);
      SendProblem(response, ProblemWithStatus(405, raw.method + " is not allowed on " +
                                                       raw.path + "; allowed: " + allowed));
      return;
    }
    SendProblem(response, ProblemWithStatus(404, "no resource at " + raw.path));
  }

  void Answer(const RouteEntry& route, const std::smatch& match, const httplib::Request& raw,
              httplib::Response& response) {
    HttpRequest request;
    request.method = raw.method;
    request.path = raw.path;
    for (size_t i = 1; i < match.size(); ++i) request.path_params.push_back(match[i].str());
    request.query.insert(raw.params.begin(), raw.params.end());
    request.body = raw.body;
    request.authorization = raw.get_header_value("Authorization");
    request.accept = raw.get_header_value("Accept");
    Result<HttpResponse> answer = route.handler(request);
    if (!answer.ok()) {
      SendProblem(response, ProblemFromStatus(answer.status()));
      return;
    }
    response.status = answer->status;
    for (const auto& [name, value] : answer->headers) response.set_header(name, value);
    // What set_content() does, without its copy of the body (a year's series is ~90 KB).
    response.headers.erase("Content-Type");
    response.set_header("Content-Type", answer->content_type);
    response.body = std::move(answer->body);
  }

  void Install() {
    // http.threads are always there; more start while connections hold them all (slow or
    // idle keep-alive clients), so one client's connections cannot starve the rest.
    server_->new_task_queue = [threads = config_.threads] {
      return new ConnectionPool(threads, std::max(threads, kMaxHttpConnectionThreads));
    };
    server_->set_payload_max_length(kMaxRequestBodyBytes);
    // A response leaves in several writes (headers, then body). With Nagle's algorithm the
    // second waits for the client's delayed ACK (about 40 ms on Linux), which held a
    // keep-alive connection to ~25 requests/s (tests/bench/api_bench: 287 requests/s over 16
    // connections before, see DEVELOPERS.md for after).
    server_->set_tcp_nodelay(true);
    server_->set_keep_alive_timeout(5);
    server_->set_read_timeout(5);
    server_->set_write_timeout(5);
    server_->set_pre_routing_handler([](const httplib::Request& request,
                                        httplib::Response& response) {
      OfferOnlyChosenCoding(request);
      std::optional<Problem> refusal = RefuseBeforeBody(request);
      if (!refusal) return httplib::Server::HandlerResponse::Unhandled;
      response.set_header("Connection", "close");  // the unread body must not be parsed
      SendProblem(response, *refusal);
      return httplib::Server::HandlerResponse::Handled;
    });
    server_->set_exception_handler([](const httplib::Request&, httplib::Response& response,
                                      std::exception_ptr) {
      SendProblem(response, ProblemWithStatus(500, "the request failed inside the daemon; "
                                                   "see its log"));
    });
    // Errors httplib raises itself (413, 400 on a bad request line) get a problem body too.
    server_->set_error_handler([](const httplib::Request&, httplib::Response& response) {
      if (!response.body.empty()) return;
      const char* detail = response.status == 413 ? "the request is larger than allowed"
                                                  : "the request could not be read as HTTP";
      SendProblem(response, ProblemWithStatus(response.status, detail));
    });
    auto dispatch = [this](const httplib::Request& request, httplib::Response& response) {
      Dispatch(request, response);
    };
    server_->Get(".*", dispatch);
    server_->Post(".*", dispatch);
    server_->Put(".*", dispatch);
    server_->Delete(".*", dispatch);
    server_->Patch(".*", dispatch);
    server_->Options(".*", dispatch);
  }

  Status Start() {
    if (!config_.tls_certificate.empty()) {
      Result<std::unique_ptr<httplib::Server>> tls = TlsServer();
      if (!tls.ok()) return tls.status();
      server_ = std::move(tls).value();
    } else {
      server_ = std::make_unique<httplib::Server>();
    }
    Install();
    Result<ListenAddress> listen = ParseListenAddress(config_.listen);
    if (!listen.ok()) return listen.status().WithContext("http.listen");
    const std::string& host = listen->host;
    const int port = listen->port;
    if (port == 0) {
      int bound = server_->bind_to_any_port(host);
      if (bound <= 0) return Status::IOError("http: cannot bind " + config_.listen);
      port_ = static_cast<std::uint16_t>(bound);
    } else {
      if (!server_->bind_to_port(host, port)) {
        return Status::IOError("http: cannot bind " + config_.listen);
      }
      port_ = static_cast<std::uint16_t>(port);
    }
    thread_ = std::thread([this] { server_->listen_after_bind(); });
    return Status::Ok();
  }

  // An HTTPS server with the configured PEM files, TLS 1.2 or later (RFC 8996 retires 1.0
  // and 1.1). The errors name the config key and the file.
  Result<std::unique_ptr<httplib::Server>> TlsServer() {
    for (const auto& [key, path] :
         {std::pair<const char*, const std::string&>{"http.tls_certificate",
                                                     config_.tls_certificate},
          std::pair<const char*, const std::string&>{"http.tls_private_key",
                                                     config_.tls_private_key}}) {
      if (::access(path.c_str(), R_OK) != 0) {
        return Status::InvalidArgument(std::string(key) + ": cannot read " + path + ": " +
                                       std::strerror(errno));
      }
    }
    auto server = std::make_unique<httplib::SSLServer>(config_.tls_certificate.c_str(),
                                                       config_.tls_private_key.c_str());
    if (!server->is_valid()) {
      return Status::InvalidArgument(
          "http.tls_certificate, http.tls_private_key: " + config_.tls_certificate + " and " +
          config_.tls_private_key +
          " are not a PEM certificate chain and the private key that matches it");
    }
    SSL_CTX_set_min_proto_version(server->ssl_context(), TLS1_2_VERSION);
    return std::unique_ptr<httplib::Server>(std::move(server));
  }

  void Stop() {
    if (server_) server_->stop();
    if (thread_.joinable()) thread_.join();
  }

  HttpConfig config_;
  std::vector<RouteEntry> routes_;
  std::unique_ptr<httplib::Server> server_;
  std::thread thread_;
  std::uint16_t port_ = 0;
};

HttpServer::HttpServer(const HttpConfig& config) : impl_(std::make_unique<Impl>(config)) {}
HttpServer::~HttpServer() { impl_->Stop(); }

void HttpServer::Route(const std::string& method, const std::string& pattern,
                       HttpHandler handler) {
  impl_->routes_.push_back({method, pattern, std::regex(pattern), std::move(handler)});
}

std::vector<std::pair<std::string, std::string>> HttpServer::Routes() const {
  std::vector<std::pair<std::string, std::string>> routes;
  for (const RouteEntry& route : impl_->routes_) {
    routes.emplace_back(route.method, route.pattern_text);
  }
  return routes;
}

Status HttpServer::Start() { return impl_->Start(); }
void HttpServer::Stop() { impl_->Stop(); }
std::uint16_t HttpServer::port() const { return impl_->port_; }

}  // namespace ampledger
