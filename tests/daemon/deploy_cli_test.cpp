// tests/daemon/deploy_cli_test.cpp
// The installation and planning subcommands as a person runs them: the built `ampledger`
// binary, `ct-plan`, `node add` on the packaged example config (deploy/ampledger.toml) followed
// by the config loader, and `calibrate`. Real processes and real files in a temporary folder.
#include <doctest/doctest.h>
#include <sys/stat.h>
#include <sys/wait.h>

#include <cstdio>
#include <filesystem>
#include <string>

#include "config/config.h"
#include "config/hex.h"
#include "test_util.h"

namespace ampledger {
namespace {

using testing::AmpledgerBinary;
using testing::ReadFile;
using testing::SourceDir;
using testing::TempDir;
using testing::WriteFile;

struct Run {
  int exit_code = -1;
  std::string output;  // stdout and stderr together
};

// Runs `ampledger <arguments>` through the shell (arguments are ours, quoted where needed).
Run Ampledger(const std::string& arguments) {
  Run run;
  std::string command = AmpledgerBinary() + " " + arguments + " 2>&1";
  FILE* pipe = ::popen(command.c_str(), "r");
  REQUIRE(pipe != nullptr);
  char buffer[4096];
  size_t count;
  while ((count = std::fread(buffer, 1, sizeof buffer, pipe)) > 0) run.output.append(buffer, count);
  int status = ::pclose(pipe);
  run.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return run;
}

bool Contains(const std::string& text, const std::string& part) {
  return text.find(part) != std::string::npos;
}

TEST_SUITE("daemon") {
  TEST_CASE("deploy: ct-plan prints the trade's worked case and the cautions") {
    // common practice: 2000 turns, 30 A peak (21.2132 A RMS), 3.3 V ADC biased at 1.65 V:
    // 15 mA peak, ideal burden 110 ohm, E12 100 ohm, 0.806 mV per count at 12 bits.
    Run run = Ampledger("ct-plan --turns 2000 --max-primary-amps 21.2132 --adc-bits 12 "
                        "--adc-reference-volts 3.3 --bias-volts 1.65 --series E12");
    CHECK(run.exit_code == 0);
    CHECK(Contains(run.output, "15 mA peak"));
    CHECK(Contains(run.output, "ideal                       110 ohm"));
    CHECK(Contains(run.output, "E12 value at or below       100 ohm"));
    CHECK(Contains(run.output, "0.8057 mV"));
    CHECK(Contains(run.output, "amps_per_volt = 20 "));
    CHECK(Contains(run.output, "Never open-circuit a CT secondary"));
    CHECK(Contains(run.output, "Hot and neutral together read zero"));
    CHECK(Contains(run.output, "local electrical codes"));
  }

  TEST_CASE("deploy: ct-plan refuses bad input with the field's name") {
    Run run = Ampledger("ct-plan --turns 2000 --max-primary-amps 20 --series E6");
    CHECK(run.exit_code == 2);
    CHECK(run.output ==
          "ampledger ct-plan: resistor series: expected E12, E24 or E96, got \"E6\"\n");
    run = Ampledger("ct-plan --max-primary-amps 20");
    CHECK(run.exit_code == 2);
    CHECK(Contains(run.output, "give the CT's turns, or its rated-primary-amps"));
  }

  TEST_CASE("deploy: node add writes a private key and a snippet the config loader accepts") {
    TempDir dir;
    std::string config = dir.File("ampledger.toml");
    std::filesystem::copy_file(SourceDir() / "deploy" / "ampledger.toml", config);
    Run run = Ampledger("node add --config " + config + " --id shed-panel --channels 3");
    REQUIRE(run.exit_code == 0);

    std::string key_path = dir.File("shed-panel.key");
    struct stat info {};
    REQUIRE(::stat(key_path.c_str(), &info) == 0);
    CHECK((info.st_mode & 0777) == 0600);
    std::string key_text = ReadFile(key_path);
    REQUIRE(key_text.size() == 65);  // 64 hex digits and a line break
    // The key is printed exactly once, and it is the file's.
    std::string key_hex = key_text.substr(0, 64);
    size_t first = run.output.find(key_hex);
    CHECK(first != std::string::npos);
    CHECK(run.output.find(key_hex, first + 1) == std::string::npos);

    // The guide's next step: paste the snippet, add a circuit, check.
    std::string snippet = run.output.substr(run.output.find("[[node]]"));
    WriteFile(config, ReadFile(config) + "\n" + snippet +
                          "\n[[circuit]]\nid = \"shed\"\nchannels = [\"shed-panel/ct3\"]\n");
    Result<Config> loaded = LoadConfig(config);
    REQUIRE_MESSAGE(loaded.ok(), loaded.status().ToString());
    REQUIRE(loaded->nodes.size() == 1);
    CHECK(loaded->nodes[0].id == "shed-panel");
    CHECK(loaded->nodes[0].channels.size() == 3);
    std::vector<std::uint8_t> expected;
    std::string why;
    REQUIRE(DecodeHexKey(key_hex, false, &expected, &why));
    CHECK(loaded->nodes[0].key == expected);
    CHECK(loaded->storage.path == "/var/lib/ampledger/ampledger.db");

    Run check = Ampledger("check --config " + config);
    CHECK(check.exit_code == 0);
    CHECK(!Contains(check.output, key_hex));
  }

  TEST_CASE("deploy: node add never overwrites a key and refuses bad ids") {
    TempDir dir;
    std::string config = dir.File("site.toml");
    WriteFile(config, "");
    REQUIRE(Ampledger("node add --config " + config + " --id a").exit_code == 0);
    std::string key = ReadFile(dir.File("a.key"));
    Run again = Ampledger("node add --config " + config + " --id a");
    CHECK(again.exit_code == 2);
    CHECK(Contains(again.output, "a.key already exists; a node's key is never overwritten"));
    CHECK(ReadFile(dir.File("a.key")) == key);
    // Two runs give two different keys.
    REQUIRE(Ampledger("node add --config " + config + " --id b").exit_code == 0);
    CHECK(ReadFile(dir.File("b.key")) != key);

    Run bad = Ampledger("node add --config " + config + " --id 'x/y'");
    CHECK(bad.exit_code == 2);
    CHECK(bad.output ==
          "ampledger node add: --id: expected 1 to 64 characters of A-Z a-z 0-9 . _ -, got "
          "\"x/y\"\n");
    CHECK(!std::filesystem::exists(dir.File("x/y.key")));
    Run missing = Ampledger("node add --config " + dir.File("none.toml") + " --id c");
    CHECK(missing.exit_code == 2);
    CHECK(Contains(missing.output, "none.toml: no such config file"));
    CHECK(Ampledger("node add --config " + config + " --id d --channels 0").exit_code == 2);
    CHECK(Ampledger("node add --config " + config + " --id e --owner no-such-user-here")
              .exit_code == 2);
  }

  TEST_CASE("deploy: calibrate from a reference meter or a known resistive load") {
    Run meter = Ampledger("calibrate --measured-amps 10.3 --reference-amps 10.0");
    CHECK(meter.exit_code == 0);
    CHECK(Contains(meter.output, "+3.00 %"));
    CHECK(Contains(meter.output, "gain = 0.9709\n"));
    // Ohm's law (physics; from memory): 2000 W at 230 V is 26.45 ohm, 8.5444 A at 226 V.
    Run load = Ampledger("calibrate --measured-amps 8.95 --load-watts 2000 "
                         "--load-rated-volts 230 --line-volts 226");
    CHECK(load.exit_code == 0);
    CHECK(Contains(load.output, "reference 8.544 A"));
    CHECK(Contains(load.output, "gain = 0.9547\n"));
    Run both = Ampledger("calibrate --measured-amps 8.95 --reference-amps 9 --load-watts 2000");
    CHECK(both.exit_code == 2);
    Run wild = Ampledger("calibrate --measured-amps 20.5 --reference-amps 10");
    CHECK(wild.exit_code == 2);
    CHECK(Contains(wild.output, "outside the 0.5 to 2 a channel accepts"));
  }
}

}  // namespace
}  // namespace ampledger
