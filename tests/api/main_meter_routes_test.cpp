// tests/api/main_meter_routes_test.cpp
// Main-meter reads through the real server: stored as `ampledger meter-read` stores them
// (storage/main_meter_store.h), listed by range, removed by id; strict bodies; admin writes,
// viewer reads, unit tokens see nothing.
#include "api/main_meter_routes.h"

#include "api_fixture.h"
#include "storage/main_meter_store.h"

namespace ampledger {
namespace {

struct MeterFixture : ApiFixture {
  httplib::Result Post(const std::string& body, const std::string& token) {
    return client->Post("/v1/main-meter/reads", {{"Authorization", "Bearer " + token}}, body,
                        "application/json");
  }
  httplib::Result Delete(const std::string& id, const std::string& token) {
    return client->Delete(("/v1/main-meter/reads/" + id).c_str(),
                          {{"Authorization", "Bearer " + token}});
  }
  std::vector<MainMeterRead> Stored() {
    auto reader = std::move(Database::OpenReader(config.storage.path).value());
    return ListMainMeterReads(*reader).value();
  }
};

TEST_SUITE("api") {
  TEST_CASE_FIXTURE(MeterFixture, "main-meter reads: add, list by range, remove") {
    httplib::Result first = Post(
        R"({"register_kwh": 48213.6, "at": "2026-03-01 08:00", "source": "meter display"})", admin);
    REQUIRE(first);
    CHECK(first->status == 201);
    json stored = json::parse(first->body);
    CHECK(stored["kind"] == "register");
    CHECK(stored["at"] == "2026-03-01T08:00:00-06:00");  // the site's local time
    CHECK(stored["from"].is_null());
    CHECK(stored["kwh"] == 48213.6);
    CHECK(stored["source"] == "meter display");
    CHECK(first->get_header_value("Location") ==
          "/v1/main-meter/reads/" + std::to_string(stored["id"].get<std::int64_t>()));
    httplib::Result period = Post(
        R"({"kwh": 912.5, "from": "2026-02-01", "to": "2026-03-01T00:00:00-06:00"})", admin);
    REQUIRE(period);
    CHECK(period->status == 201);
    CHECK(json::parse(period->body)["source"] == "typed in");

    // What the command's store holds is what was sent.
    std::vector<MainMeterRead> reads = Stored();
    REQUIRE(reads.size() == 2);
    CHECK(reads[1].kwh == 48213.6);
    CHECK(reads[1].at_ms == At("2026-03-01T14:00:00Z"));

    json march = GetJson("/v1/main-meter/reads?from=2026-03-01&to=2026-04-01", viewer);
    REQUIRE(march["reads"].size() == 1);  // the period ends where March begins
    CHECK(march["reads"][0] == stored);
    CHECK(march["units"]["kwh"] == "kWh");
    CHECK(GetJson("/v1/main-meter/reads?from=2026-01-01&to=2026-04-01", admin)["reads"].size() ==
          2);

    // A register going backwards is refused and nothing is stored.
    httplib::Result backwards =
        Post(R"({"register_kwh": 40000, "at": "2026-03-20T08:00:00-05:00"})", admin);
    REQUIRE(backwards);
    CHECK(backwards->status == 400);
    CHECK(ProblemOf(backwards)["detail"].get<std::string>().rfind("body: refused, nothing stored: ",
                                                                  0) == 0);
    CHECK(Stored().size() == 2);

    const std::string id = std::to_string(stored["id"].get<std::int64_t>());
    httplib::Result viewer_delete = Delete(id, viewer);
    REQUIRE(viewer_delete);
    CHECK(viewer_delete->status == 403);
    httplib::Result unit_delete = Delete(id, unit_a);
    REQUIRE(unit_delete);
    CHECK(unit_delete->status == 404);
    httplib::Result removed = Delete(id, admin);
    REQUIRE(removed);
    CHECK(removed->status == 204);
    CHECK(Stored().size() == 1);
    httplib::Result again = Delete(id, admin);
    REQUIRE(again);
    CHECK(again->status == 404);
  }

  TEST_CASE_FIXTURE(MeterFixture, "main-meter reads: bad bodies and ids are problems naming the "
                                  "member; nothing is stored") {
    struct Bad {
      std::string body;
      int status;
      std::string detail_has;
    };
    const std::vector<Bad> table = {
        {"", 400, "body: expected a JSON object"},
        {"{", 400, "body: expected a JSON object"},
        {"[1, 2]", 400, "body: expected a JSON object"},
        {R"({"register_kwh": 1})", 400, "register_kwh needs \"at\""},
        {R"({"register_kwh": 1, "kwh": 2, "at": "2026-03-01"})", 400, "body: expected"},
        {R"({"at": "2026-03-01"})", 400, "body: expected"},
        {R"({"register_kwh": "12", "at": "2026-03-01"})", 400, "body.register_kwh: expected a number"},
        {R"({"register_kwh": -5, "at": "2026-03-01"})", 400, "refused, nothing stored"},
        {R"({"register_kwh": 2e9, "at": "2026-03-01"})", 400, "refused, nothing stored"},
        {R"({"register_kwh": 1, "at": 1772352000})", 400, "body.at: expected a time as a string"},
        {R"({"register_kwh": 1, "at": "soon"})", 400, "body.at: \"soon\" is not a time"},
        {R"({"register_kwh": 1, "at": "2026-03-08 02:30"})", 400,
         "does not exist in America/Chicago"},
        {R"({"register_kwh": 1, "at": "2026-11-01 01:30"})", 400, "happens twice"},
        {R"({"register_kwh": 1, "at": "2026-03-01", "to": "2026-03-02"})", 400, "and no"},
        {R"({"kwh": 1, "from": "2026-03-02", "to": "2026-03-01"})", 400, "refused, nothing stored"},
        {R"({"kwh": 1, "from": "2026-03-01"})", 400, "kwh needs \"from\" and \"to\""},
        {R"({"register_kwh": 1, "at": "2026-03-01", "note": "x"})", 400, "body.note: not known"},
        {R"({"register_kwh": 1, "at": "2026-03-01", "source": ""})", 400, "body.source"},
        {R"({"register_kwh": 1, "at": "2026-03-01", "source": "a\nb"})", 400, "body.source"},
        {R"({"register_kwh": 1, "at": "2026-03-01", "source": 7})", 400, "body.source"},
        {R"({"register_kwh": 1, "at": "2026-03-01'); DROP TABLE main_meter_read;--"})", 400,
         "body.at"},
    };
    for (const Bad& bad : table) {
      CAPTURE(bad.body);
      httplib::Result result = Post(bad.body, admin);
      REQUIRE(result);
      CHECK(result->status == bad.status);
      const std::string detail = ProblemOf(result)["detail"];
      CHECK_MESSAGE(detail.find(bad.detail_has) != std::string::npos, detail);
    }
    CHECK(Stored().empty());
    // A source of quotes and SQL is stored as text, as it was sent.
    const std::string sql = "x'); DROP TABLE main_meter_read;--";
    httplib::Result odd =
        Post(json{{"register_kwh", 1}, {"at", "2026-03-01"}, {"source", sql}}.dump(), admin);
    REQUIRE(odd);
    CHECK(odd->status == 201);
    REQUIRE(Stored().size() == 1);
    CHECK(Stored()[0].source == sql);

    // Viewer tokens read only; unit tokens see no such route; an oversize body is refused
    // before it is read.
    httplib::Result viewer_post = Post(R"({"register_kwh": 2, "at": "2026-03-02"})", viewer);
    REQUIRE(viewer_post);
    CHECK(viewer_post->status == 403);
    CHECK(ProblemOf(viewer_post)["detail"].get<std::string>().find("viewer token") !=
          std::string::npos);
    httplib::Result unit_post = Post(R"({"register_kwh": 2, "at": "2026-03-02"})", unit_b);
    REQUIRE(unit_post);
    CHECK(unit_post->status == 404);
    httplib::Result oversize = Post(std::string(kMaxRequestBodyBytes + 1, ' '), admin);
    REQUIRE(oversize);
    CHECK(oversize->status == 413);
    for (const char* id : {"0", "-1", "abc", "1%20OR%201=1", "99999999999999999999", "424242"}) {
      CAPTURE(id);
      httplib::Result result = Delete(id, admin);
      REQUIRE(result);
      CHECK(result->status == 404);
      CHECK(ProblemOf(result)["detail"].get<std::string>().rfind("no main-meter read", 0) == 0);
    }
    CHECK(Stored().size() == 1);
    CHECK(GetJson("/v1/health", "")["status"] == "pass");
  }
}

}  // namespace
}  // namespace ampledger
