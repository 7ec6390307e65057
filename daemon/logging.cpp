#include "daemon/logging.h"

#include <spdlog/pattern_formatter.h>
#include <spdlog/sinks/stdout_sinks.h>
#include <spdlog/spdlog.h>

#include <cstdlib>

namespace ampledger {

namespace {

// "%*" in the pattern: the syslog priority journald reads from a line's start (sd-daemon(3)).
class SyslogPriorityFlag : public spdlog::custom_flag_formatter {
 public:
  void format(const spdlog::details::log_msg& message, const std::tm&,
              spdlog::memory_buf_t& out) override {
    static const char* const kPrefix[] = {"<7>", "<7>", "<6>", "<4>", "<3>", "<2>", "<6>"};
    const char* prefix = kPrefix[static_cast<int>(message.level)];
    out.append(prefix, prefix + 3);
  }
  std::unique_ptr<custom_flag_formatter> clone() const override {
    return std::make_unique<SyslogPriorityFlag>();
  }
};

}  // namespace

Status ConfigureLogging(const std::string& level) {
  spdlog::level::level_enum parsed = spdlog::level::from_str(level);
  if (parsed == spdlog::level::off && level != "off") {
    return Status::InvalidArgument("log level \"" + level +
                                   "\" is not one of trace, debug, info, warn, error, off");
  }
  auto logger = std::make_shared<spdlog::logger>(
      "ampledger", std::make_shared<spdlog::sinks::stderr_sink_mt>());
  auto formatter = std::make_unique<spdlog::pattern_formatter>();
  if (std::getenv("JOURNAL_STREAM") != nullptr) {
    formatter->add_flag<SyslogPriorityFlag>('*').set_pattern("%*%v");
  } else {
    formatter->set_pattern("%Y-%m-%dT%H:%M:%S.%e %^%l%$ %v");
  }
  logger->set_formatter(std::move(formatter));
  logger->set_level(parsed);
  logger->flush_on(spdlog::level::warn);
  spdlog::set_default_logger(std::move(logger));
  return Status::Ok();
}

void RateLimitedLog::Warn(const std::string& message) {
  auto now = std::chrono::steady_clock::now().time_since_epoch();
  std::int64_t minute = std::chrono::duration_cast<std::chrono::minutes>(now).count();
  std::int64_t suppressed = 0;
  {
    std::lock_guard<std::mutex> lock(mu_);
    if (minute != minute_) {
      minute_ = minute;
      said_ = 0;
    }
    if (said_ >= per_minute_) {
      ++suppressed_;
      return;
    }
    ++said_;
    suppressed = suppressed_;
    suppressed_ = 0;
  }
  if (suppressed > 0) {
    spdlog::warn("{} ({} similar messages suppressed)", message, suppressed);
  } else {
    spdlog::warn("{}", message);
  }
}

}  // namespace ampledger
