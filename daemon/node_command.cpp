// daemon/node_command.cpp
#include "daemon/node_command.h"

#include <fcntl.h>
#include <openssl/crypto.h>
#include <openssl/rand.h>
#include <pwd.h>
#include <sys/stat.h>
#include <unistd.h>

#include <array>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <ostream>

#include "config/hex.h"
#include "daemon/metering/calibration.h"

namespace ampledger {
namespace {

// The config's rule for ids (config/README.md "Ids and references"); checked here too so a bad
// id is refused before a key file is named after it.
bool IsNodeId(const std::string& id) {
  if (id.empty() || id.size() > 64) return false;
  for (char c : id) {
    bool ok = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
              c == '.' || c == '_' || c == '-';
    if (!ok) return false;
  }
  return true;
}

Status IoError(const std::string& what, const std::string& path) {
  return Status::IOError(what + " " + path + ": " + std::strerror(errno));
}

Result<std::string> NewKeyHex() {
  std::array<unsigned char, kNodeKeyBytes> key;
  if (RAND_bytes(key.data(), key.size()) != 1) {
    return Status::Unavailable("OpenSSL RAND_bytes could not produce a key");
  }
  static constexpr char kDigits[] = "0123456789abcdef";
  std::string hex;
  for (unsigned char byte : key) {
    hex += kDigits[byte >> 4];
    hex += kDigits[byte & 0xf];
  }
  OPENSSL_cleanse(key.data(), key.size());
  return hex;
}

// Creates `path` with mode 0600 (refusing an existing file), writes `text` and syncs it.
Status WriteNewPrivateFile(const std::string& path, const std::string& text, uid_t owner,
                           gid_t group, bool change_owner) {
  int fd = ::open(path.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0600);
  if (fd < 0) {
    if (errno == EEXIST) {
      return Status::InvalidArgument(path + " already exists; a node's key is never overwritten "
                                     "(remove the file first to replace the key)");
    }
    return IoError("cannot create", path);
  }
  // Mode 0600 whatever the umask was; then the owner, before any key byte is written.
  bool ok = ::fchmod(fd, 0600) == 0 && (!change_owner || ::fchown(fd, owner, group) == 0);
  ok = ok && ::write(fd, text.data(), text.size()) == static_cast<ssize_t>(text.size());
  ok = ok && ::fsync(fd) == 0;
  Status status = ok ? Status::Ok() : IoError("cannot write", path);
  ::close(fd);
  if (!ok) ::unlink(path.c_str());
  return status;
}

}  // namespace

Result<NodeKeyFile> CreateNodeKeyFile(const NodeAddOptions& options) {
  if (!IsNodeId(options.node_id)) {
    return Status::InvalidArgument(
        "--id: expected 1 to 64 characters of A-Z a-z 0-9 . _ -, got \"" + options.node_id + "\"");
  }
  if (options.channels < 1 || options.channels > 64) {
    return Status::InvalidArgument("--channels: expected 1 to 64, got " +
                                   std::to_string(options.channels));
  }
  std::error_code error;
  if (!std::filesystem::is_regular_file(options.config_path, error)) {
    return Status::InvalidArgument(options.config_path + ": no such config file");
  }
  uid_t owner = 0;
  gid_t group = 0;
  if (!options.owner.empty()) {
    const passwd* entry = ::getpwnam(options.owner.c_str());
    if (entry == nullptr) {
      return Status::InvalidArgument("--owner: no user \"" + options.owner + "\"");
    }
    owner = entry->pw_uid;
    group = entry->pw_gid;
  }
  std::filesystem::path folder = std::filesystem::path(options.config_path).parent_path();
  NodeKeyFile result;
  result.path = (folder / (options.node_id + ".key")).string();
  Result<std::string> key = NewKeyHex();
  if (!key.ok()) return key.status();
  result.key_hex = std::move(key).value();
  if (Status s = WriteNewPrivateFile(result.path, result.key_hex + "\n", owner, group,
                                     !options.owner.empty());
      !s.ok()) {
    return s;
  }
  return result;
}

std::string NodeSnippet(const NodeAddOptions& options, const std::string& key_file_name) {
  std::string text;
  text += "[[node]]\n";
  text += "id = \"" + options.node_id + "\"\n";
  text += "key_file = \"" + key_file_name + "\"\n";
  for (int channel = 1; channel <= options.channels; ++channel) {
    text += "\n[[node.channel]]\n";
    text += "id = \"ct" + std::to_string(channel) + "\"\n";
    text += "rated_amps = 0                      # the CT's rated primary current\n";
    text += "noise_floor_amps = 0\n";
    text += "gain = 1                            # refine with `ampledger calibrate`\n";
  }
  return text;
}

int RunNodeAdd(const NodeAddOptions& options, std::ostream& out, std::ostream& err) {
  Result<NodeKeyFile> key_file = CreateNodeKeyFile(options);
  if (!key_file.ok()) {
    err << "ampledger node add: " << key_file.status().message() << "\n";
    return key_file.status().code() == StatusCode::kInvalidArgument ? 2 : 1;
  }
  std::string name = std::filesystem::path(key_file->path).filename().string();
  out << "Wrote the key of node \"" << options.node_id << "\" to " << key_file->path
      << " (mode 0600" << (options.owner.empty() ? "" : ", owner " + options.owner) << ").\n"
      << "Key, shown only this once; put it in the node's firmware settings:\n\n  "
      << key_file->key_hex << "\n\n"
      << "Paste this into " << options.config_path
      << ", fill in each channel's rated_amps, then add circuits\n"
      << "that name the channels (\"" << options.node_id << "/ct1\") and run `ampledger check`:\n\n"
      << NodeSnippet(options, name);
  return 0;
}

int RunCalibrate(const CalibrateOptions& options, std::ostream& out, std::ostream& err) {
  bool by_meter = options.reference_amps != 0;
  bool by_load = options.load_watts != 0 || options.load_rated_volts != 0 ||
                 options.line_volts != 0;
  if (by_meter == by_load) {
    err << "ampledger calibrate: give --reference-amps (a reference meter's reading), or "
           "--load-watts, --load-rated-volts and --line-volts (a known resistive load), not both\n";
    return 2;
  }
  double reference = options.reference_amps;
  if (by_load) {
    Result<double> amps =
        ResistiveLoadAmps(options.load_watts, options.load_rated_volts, options.line_volts);
    if (!amps.ok()) {
      err << "ampledger calibrate: " << amps.status().message() << "\n";
      return 2;
    }
    reference = *amps;
  }
  Result<Calibration> result =
      CalibrateGain(options.current_gain, options.measured_amps, reference);
  if (!result.ok()) {
    err << "ampledger calibrate: " << result.status().message() << "\n";
    return 2;
  }
  char line[256];
  std::snprintf(line, sizeof line,
                "reference %.4g A, channel read %.4g A: %+.2f %%\n"
                "Set the channel's gain in the config (then restart the daemon):\n"
                "gain = %.4f\n",
                reference, options.measured_amps, result->error_percent, result->new_gain);
  out << line;
  return 0;
}

}  // namespace ampledger
