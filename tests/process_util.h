// tests/process_util.h
// For tests and tools that run `ampledger` as a real process: a free loopback port, starting
// a child with its output in a log file, waiting for it to exit or to answer /v1/health.
// No test framework: callers decide what a failure means.
#pragma once

#include <sys/types.h>

#include <chrono>
#include <string>
#include <vector>

namespace ampledger::testing {

// A port the kernel just handed out on 127.0.0.1 and released (SOCK_DGRAM or SOCK_STREAM);
// good enough on loopback. 0 on failure.
int FreeLoopbackPort(int socket_type);

// Starts `arguments` (the first is the executable's path) with stdout and stderr appended to
// `log_path`. Returns the child's pid, or -1.
pid_t SpawnProcess(const std::vector<std::string>& arguments, const std::string& log_path);

// The child's exit code once it exits within `timeout`; -1 if a signal ended it; -2 if it
// was still running (it is then killed with SIGKILL and reaped).
int WaitExit(pid_t pid, std::chrono::milliseconds timeout);

// True once GET /v1/health on 127.0.0.1:`http_port` answers 200 (it does whenever the daemon
// can answer; its checks are in the body), polling until `timeout`.
bool WaitHealthy(int http_port, std::chrono::milliseconds timeout);

}  // namespace ampledger::testing
