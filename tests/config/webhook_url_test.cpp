// tests/config/webhook_url_test.cpp
// ParseWebhookUrl, and [[webhook]] tables with whole-message errors.
#include <doctest/doctest.h>

#include "config/config.h"
#include "tests/config/config_text.h"
#include "test_util.h"

namespace ampledger {
namespace {

using testing::ErrorOf;
using testing::kMinimalConfig;

TEST_SUITE("config") {
  TEST_CASE("webhook URLs: scheme, host, port and path") {
    Result<WebhookUrl> plain = ParseWebhookUrl("http://hub.lan:8123/ampledger/events?src=1");
    REQUIRE(plain.ok());
    CHECK_FALSE(plain->https);
    CHECK(plain->host == "hub.lan");
    CHECK(plain->port == 8123);
    CHECK(plain->path == "/ampledger/events?src=1");
    Result<WebhookUrl> secure = ParseWebhookUrl("https://192.0.2.7");
    REQUIRE(secure.ok());
    CHECK(secure->port == 443);  // RFC 9110 section 4.2.2: the https default port
    CHECK(secure->path == "/");
    Result<WebhookUrl> v6 = ParseWebhookUrl("http://[::1]:9000/in");
    REQUIRE(v6.ok());
    CHECK(v6->host == "[::1]");
    CHECK(v6->port == 9000);
    CHECK(ParseWebhookUrl("http://hub").value().port == 80);  // RFC 9110 section 4.2.1

    const std::string expected =
        "expected \"http://host[:port]/path\" or \"https://host[:port]/path\", got ";
    CHECK(ParseWebhookUrl("ftp://hub/").status().message() ==
          expected + "\"ftp://hub/\" (the scheme must be http or https)");
    CHECK(ParseWebhookUrl("http:///x").status().message() == expected + "\"http:///x\" (no host)");
    CHECK(ParseWebhookUrl("http://hub:0/").status().message() ==
          expected + "\"http://hub:0/\" (the port must be 1 to 65535)");
    CHECK(ParseWebhookUrl("http://hub:99999/").status().message() ==
          expected + "\"http://hub:99999/\" (the port must be 1 to 65535)");
    CHECK(ParseWebhookUrl("http://hub:/").status().message() ==
          expected + "\"http://hub:/\" (empty port)");
    CHECK(ParseWebhookUrl("http://me:pw@hub/").status().message() ==
          expected + "\"http://me:pw@hub/\" (user names and passwords do not belong in the URL)");
    CHECK(ParseWebhookUrl("http://hub/a b").status().message() ==
          expected + "\"http://hub/a b\" (the path may not hold spaces, control characters or a "
                     "fragment)");
    CHECK(ParseWebhookUrl("http://[::1/").status().message() ==
          expected + "\"http://[::1/\" (an IPv6 host needs its closing ])");
  }

  TEST_CASE("[[webhook]]: read, with the secret from the file or inline") {
    testing::TempDir dir;
    testing::WriteFile(dir.path() / "hook.secret", "correct-horse-battery\n");
    Result<Config> config = ParseConfig(kMinimalConfig +
                                            "[[webhook]]\n"
                                            "id = \"hub\"\n"
                                            "url = \"http://127.0.0.1:8123/in\"\n"
                                            "secret_file = \"hook.secret\"\n"
                                            "timeout_seconds = 3\n"
                                            "[[webhook]]\n"
                                            "id = \"phone\"\n"
                                            "url = \"https://relay.example/p\"\n"
                                            "secret = \"0123456789abcdef\"\n",
                                        dir.File("site.toml"));
    REQUIRE_MESSAGE(config.ok(), config.status().ToString());
    REQUIRE(config->webhooks.size() == 2);
    CHECK(config->webhooks[0].secret == "correct-horse-battery");
    CHECK(config->webhooks[0].timeout_seconds == 3);
    CHECK(config->webhooks[1].secret == "0123456789abcdef");
    CHECK(config->webhooks[1].timeout_seconds == 10);
    const std::string summary = DescribeConfig(*config);
    CHECK(summary.find("webhooks (2):\n  hub: http://127.0.0.1:8123/in\n"
                       "  phone: https://relay.example/p\n") != std::string::npos);
    CHECK(summary.find("correct-horse") == std::string::npos);
    CHECK(summary.find("0123456789abcdef") == std::string::npos);
  }

  TEST_CASE("[[webhook]]: each bad value is one whole message naming file, line and key") {
    const std::string hook = "[[webhook]]\nid = \"hub\"\n";  // lines 17, 18
    CHECK(ErrorOf(kMinimalConfig + hook + "secret = \"0123456789abcdef\"\n") ==
          "site.toml:17: webhook[0].url: missing; expected a string");
    CHECK(ErrorOf(kMinimalConfig + hook + "url = \"gopher://x\"\nsecret = \"0123456789abcdef\"\n") ==
          "site.toml:19: webhook[0].url: expected \"http://host[:port]/path\" or "
          "\"https://host[:port]/path\", got \"gopher://x\" (the scheme must be http or https)");
    CHECK(ErrorOf(kMinimalConfig + hook + "url = \"http://x/\"\n") ==
          "site.toml:17: webhook[0].secret: missing; expected secret or secret_file");
    CHECK(ErrorOf(kMinimalConfig + hook + "url = \"http://x/\"\nsecret = \"short\"\n") ==
          "site.toml:20: webhook[0].secret: expected a secret of 16 to 256 characters, got 5");
    CHECK(ErrorOf(kMinimalConfig + hook +
                  "url = \"http://x/\"\nsecret = \"0123456789abcdef\"\nsecret_file = \"s\"\n") ==
          "site.toml:20: webhook[0].secret: give secret or secret_file, not both");
    CHECK(ErrorOf(kMinimalConfig + hook +
                  "url = \"http://x/\"\nsecret = \"0123456789abcdef\"\ntimeout_seconds = 0\n") ==
          "site.toml:21: webhook[0].timeout_seconds: expected a number from 1 to 60, got 0");
    CHECK(ErrorOf(kMinimalConfig + hook +
                  "url = \"http://x/\"\nsecret = \"0123456789abcdef\"\nretries = 3\n") ==
          "site.toml:21: webhook[0].retries: unknown key; expected one of id, url, secret, "
          "secret_file, timeout_seconds");
    CHECK(ErrorOf(kMinimalConfig + hook + "url = \"http://x/\"\nsecret = \"0123456789abcdef\"\n" +
                  hook + "url = \"http://y/\"\nsecret = \"0123456789abcdef\"\n") ==
          "site.toml:22: webhook[1].id: duplicate webhook id \"hub\", first used by webhook[0]");
  }
}

}  // namespace
}  // namespace ampledger
