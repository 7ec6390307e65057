// daemon/ct_plan_command.h
// `ampledger ct-plan`: prints a burden-resistor plan for a current transformer and a node's ADC
// (daemon/metering/ct_plan.h does the arithmetic), with the safety cautions. main.cpp parses the
// command line into CtPlanOptions. Main thread only (writes to the given streams).
#pragma once

#include <iosfwd>
#include <string>

#include "daemon/metering/ct_plan.h"

namespace ampledger {

struct CtPlanOptions {
  CtPlanInput input;          // series is taken from series_name
  std::string series_name = "E12";
};

// The plan as text for a person at a terminal: inputs, results, cautions.
std::string DescribeCtPlan(const CtPlanInput& input, const CtPlan& plan);

// Plans and prints to `out`; on bad input prints the reason to `err`. Returns the exit code:
// 0, or 2 for bad input.
int RunCtPlan(const CtPlanOptions& options, std::ostream& out, std::ostream& err);

}  // namespace ampledger
