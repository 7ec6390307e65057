#include "api/http_server.h"

#include <arpa/inet.h>
#include <doctest/doctest.h>
#include <httplib.h>
#include <netinet/in.h>
#include <sys/socket.h>
#include <unistd.h>

#include <cstdlib>
#include <nlohmann/json.hpp>
#include <stdexcept>
#include <string>
#include <vector>

#include "test_util.h"

namespace ampledger {
namespace {

// Writes `request` to the server on a fresh TCP connection and returns all it answers.
std::string RawExchange(std::uint16_t port, const std::string& request) {
  int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_port = htons(port);
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  timeval timeout{5, 0};
  ::setsockopt(fd, SOL_SOCKET, SO_RCVTIMEO, &timeout, sizeof timeout);
  REQUIRE(::connect(fd, reinterpret_cast<sockaddr*>(&address), sizeof address) == 0);
  ::send(fd, request.data(), request.size(), MSG_NOSIGNAL);
  std::string answer;
  char buffer[4096];
  ssize_t length;
  while ((length = ::recv(fd, buffer, sizeof buffer, 0)) > 0) answer.append(buffer, length);
  ::close(fd);
  return answer;
}

struct ServerFixture {
  ServerFixture() : server(Config()) {
    server.Route("GET", "/v1/things/([a-z]+)", [](const HttpRequest& request) {
      return Result<HttpResponse>(
          HttpResponse::Json(nlohmann::json{{"thing", request.path_params[0]}}.dump()));
    });
    server.Route("POST", "/v1/things/([a-z]+)", [](const HttpRequest& request) {
      return Result<HttpResponse>(HttpResponse::Json(request.body, 201));
    });
    server.Route("GET", "/v1/bad", [](const HttpRequest&) -> Result<HttpResponse> {
      return Status::InvalidArgument("query parameter \"from\": expected an RFC 3339 time");
    });
    server.Route("GET", "/v1/throws", [](const HttpRequest&) -> Result<HttpResponse> {
      throw std::runtime_error("secret internal detail /var/lib/x.db");
    });
    REQUIRE(server.Start().ok());
    client = std::make_unique<httplib::Client>("127.0.0.1", server.port());
  }
  static HttpConfig Config() {
    HttpConfig config;
    config.listen = "127.0.0.1:0";
    config.threads = 2;
    return config;
  }
  HttpServer server;
  std::unique_ptr<httplib::Client> client;
};

nlohmann::json ProblemOf(const httplib::Result& result) {
  REQUIRE(result);
  CHECK(result->get_header_value("Content-Type") == "application/problem+json");
  nlohmann::json problem = nlohmann::json::parse(result->body);
  CHECK(problem["status"] == result->status);  // RFC 9457 section 3.1.2: must match
  CHECK(problem["type"] == "about:blank");
  return problem;
}

// A self-signed certificate for 127.0.0.1 and its key, made now by the openssl command (P-256,
// valid two days): no certificate is kept in the repository.
struct SelfSigned {
  SelfSigned() {
    const std::string command =
        "openssl req -x509 -newkey ec -pkeyopt ec_paramgen_curve:prime256v1 -nodes -days 2 "
        "-subj /CN=127.0.0.1 -addext subjectAltName=IP:127.0.0.1 -keyout '" + key +
        "' -out '" + certificate + "' > '" + dir.File("openssl.log") + "' 2>&1";
    REQUIRE_MESSAGE(std::system(command.c_str()) == 0, testing::ReadFile(dir.File("openssl.log")));
  }
  testing::TempDir dir;
  std::string certificate = dir.File("cert.pem");
  std::string key = dir.File("key.pem");
};

HttpConfig TlsConfig(const std::string& certificate, const std::string& key) {
  HttpConfig config;
  config.listen = "127.0.0.1:0";
  config.threads = 2;
  config.tls_certificate = certificate;
  config.tls_private_key = key;
  return config;
}

TEST_SUITE("api") {
  TEST_CASE("HttpServer serves HTTPS with the configured certificate and key") {
    SelfSigned files;
    HttpServer server(TlsConfig(files.certificate, files.key));
    server.Route("GET", "/v1/things/([a-z]+)", [](const HttpRequest& request) {
      return Result<HttpResponse>(
          HttpResponse::Json(nlohmann::json{{"thing", request.path_params[0]}}.dump()));
    });
    Status started = server.Start();
    REQUIRE_MESSAGE(started.ok(), started.ToString());

    // A client that trusts only this certificate, and checks it names 127.0.0.1.
    httplib::SSLClient client("127.0.0.1", server.port());
    client.set_ca_cert_path(files.certificate.c_str());
    client.enable_server_certificate_verification(true);
    client.set_connection_timeout(5);
    httplib::Result result = client.Get("/v1/things/lamp");
    REQUIRE_MESSAGE(result, httplib::to_string(result.error()));
    CHECK(result->status == 200);
    CHECK(nlohmann::json::parse(result->body)["thing"] == "lamp");
    CHECK(ProblemOf(client.Get("/v1/nowhere"))["status"] == 404);

    // A client that does not trust it gets no answer; plain HTTP gets no HTTP answer.
    httplib::SSLClient stranger("127.0.0.1", server.port());
    stranger.set_ca_cert_path(files.dir.File("no-such-ca.pem").c_str());
    stranger.enable_server_certificate_verification(true);
    stranger.set_connection_timeout(5);
    httplib::Result refused = stranger.Get("/v1/things/lamp");
    CHECK_FALSE(refused);
    httplib::Client plain("127.0.0.1", server.port());
    plain.set_read_timeout(5);
    httplib::Result garbled = plain.Get("/v1/things/lamp");
    CHECK((!garbled || garbled->status != 200));
    // And the server still answers.
    CHECK(client.Get("/v1/things/again")->status == 200);
  }

  TEST_CASE("HttpServer names the TLS file it cannot use") {
    SelfSigned files;
    const std::string missing = files.dir.File("missing.pem");
    HttpServer no_certificate(TlsConfig(missing, files.key));
    CHECK(no_certificate.Start().ToString() ==
          "invalid argument: http.tls_certificate: cannot read " + missing +
              ": No such file or directory");
    HttpServer no_key(TlsConfig(files.certificate, missing));
    CHECK(no_key.Start().ToString() == "invalid argument: http.tls_private_key: cannot read " +
                                           missing + ": No such file or directory");
    // The certificate given as the key, and a key from another pair: neither loads.
    const std::string expected_tail =
        " are not a PEM certificate chain and the private key that matches it";
    HttpServer swapped(TlsConfig(files.key, files.certificate));
    CHECK(swapped.Start().ToString() == "invalid argument: http.tls_certificate, "
                                        "http.tls_private_key: " +
                                            files.key + " and " + files.certificate +
                                            expected_tail);
    SelfSigned other;
    HttpServer mismatched(TlsConfig(files.certificate, other.key));
    CHECK(mismatched.Start().ToString() == "invalid argument: http.tls_certificate, "
                                           "http.tls_private_key: " +
                                               files.certificate + " and " + other.key +
                                               expected_tail);
  }


  TEST_CASE_FIXTURE(ServerFixture, "HttpServer routes with path parameters") {
    auto result = client->Get("/v1/things/lamp");
    REQUIRE(result);
    CHECK(result->status == 200);
    CHECK(nlohmann::json::parse(result->body)["thing"] == "lamp");
    auto posted = client->Post("/v1/things/lamp", R"({"on":true})", "application/json");
    REQUIRE(posted);
    CHECK(posted->status == 201);
    CHECK(posted->body == R"({"on":true})");
  }

  TEST_CASE_FIXTURE(ServerFixture, "HttpServer answers unknown paths with a 404 problem") {
    nlohmann::json problem = ProblemOf(client->Get("/v1/nothing"));
    CHECK(problem["status"] == 404);
    CHECK(problem["title"] == "Not Found");
    CHECK(problem["detail"] == "no resource at /v1/nothing");
  }

  TEST_CASE_FIXTURE(ServerFixture, "HttpServer answers a wrong method with 405 and Allow") {
    auto result = client->Delete("/v1/things/lamp");
    nlohmann::json problem = ProblemOf(result);
    CHECK(problem["status"] == 405);
    CHECK(result->get_header_value("Allow") == "GET, POST");
  }

  TEST_CASE_FIXTURE(ServerFixture, "HttpServer maps a handler's Status to a problem") {
    nlohmann::json problem = ProblemOf(client->Get("/v1/bad"));
    CHECK(problem["status"] == 400);
    CHECK(problem["detail"] == "query parameter \"from\": expected an RFC 3339 time");
  }

  TEST_CASE_FIXTURE(ServerFixture, "HttpServer hides exception text") {
    auto result = client->Get("/v1/throws");
    nlohmann::json problem = ProblemOf(result);
    CHECK(problem["status"] == 500);
    CHECK(result->body.find("secret") == std::string::npos);
    CHECK(client->Get("/v1/things/still")->status == 200);  // and keeps serving
  }

  TEST_CASE_FIXTURE(ServerFixture, "HttpServer refuses chunked and encoded bodies before reading") {
    std::string chunked = RawExchange(
        server.port(),
        "POST /v1/things/lamp HTTP/1.1\r\nHost: x\r\nTransfer-Encoding: chunked\r\n"
        "Content-Type: application/json\r\n\r\n4\r\n{\"a\"\r\n0\r\n\r\n");
    CHECK(chunked.rfind("HTTP/1.1 411", 0) == 0);
    CHECK(chunked.find("application/problem+json") != std::string::npos);

    std::string encoded = RawExchange(
        server.port(),
        "POST /v1/things/lamp HTTP/1.1\r\nHost: x\r\nContent-Encoding: gzip\r\n"
        "Content-Length: 2\r\nConnection: close\r\n\r\nxx");
    CHECK(encoded.rfind("HTTP/1.1 415", 0) == 0);

    std::string no_length = RawExchange(
        server.port(), "POST /v1/things/lamp HTTP/1.1\r\nHost: x\r\nConnection: close\r\n\r\n");
    CHECK(no_length.rfind("HTTP/1.1 411", 0) == 0);
  }

  TEST_CASE_FIXTURE(ServerFixture, "HttpServer answers gzip to clients that take it, never Brotli") {
    // api/content_coding.h: httplib's Brotli at its highest quality cost ~100 ms per answer.
    auto exchange = [&](const std::string& accept_encoding) {
      return RawExchange(server.port(), "GET /v1/things/lamp HTTP/1.1\r\nHost: x\r\n"
                                        "Accept-Encoding: " + accept_encoding +
                                            "\r\nConnection: close\r\n\r\n");
    };
    const std::string browser = exchange("gzip, deflate, br");
    CHECK(browser.find("HTTP/1.1 200") == 0);
    CHECK(browser.find("Content-Encoding: gzip\r\n") != std::string::npos);
    const std::string brotli_only = exchange("br");
    CHECK(brotli_only.find("HTTP/1.1 200") == 0);
    CHECK(brotli_only.find("Content-Encoding") == std::string::npos);
    CHECK(brotli_only.find("{\"thing\":\"lamp\"}") != std::string::npos);
    CHECK(exchange("br, gzip;q=0").find("Content-Encoding") == std::string::npos);
  }

  TEST_CASE_FIXTURE(ServerFixture, "HttpServer refuses a body over the limit by its length") {
    std::string big = RawExchange(
        server.port(), "POST /v1/things/lamp HTTP/1.1\r\nHost: x\r\nContent-Length: " +
                           std::to_string(kMaxRequestBodyBytes + 1) + "\r\n\r\n");
    CHECK(big.rfind("HTTP/1.1 413", 0) == 0);
    CHECK(client->Get("/v1/things/after")->status == 200);
  }

  // Found by tests/reliability/http_hostile: with a fixed pool, as many slow connections as
  // worker threads (2 here) held every worker, and a well-behaved client waited until they
  // gave up (never, for one that sends a byte a second).
  TEST_CASE_FIXTURE(ServerFixture, "HttpServer answers while slow connections hold its threads") {
    std::vector<int> slow;
    for (int i = 0; i < 8; ++i) {
      int fd = ::socket(AF_INET, SOCK_STREAM, 0);
      sockaddr_in address{};
      address.sin_family = AF_INET;
      address.sin_port = htons(server.port());
      address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
      REQUIRE(::connect(fd, reinterpret_cast<sockaddr*>(&address), sizeof address) == 0);
      // Half a request line: the server's thread reads on, waiting for the rest.
      ::send(fd, "GET /v1/thi", 11, MSG_NOSIGNAL);
      slow.push_back(fd);
    }
    client->set_read_timeout(std::chrono::seconds(3));
    client->set_connection_timeout(std::chrono::seconds(3));
    auto answer = client->Get("/v1/things/meanwhile");
    REQUIRE(answer);
    CHECK(answer->status == 200);
    for (int fd : slow) ::close(fd);
  }
}

}  // namespace
}  // namespace ampledger
