// The public interface of the stepgate library in one header, for programs that link
// stepgate::stepgate (find_package(stepgate)): implement a Problem, check its derivatives and
// lanes, register it as a problem kind that suites can name, and run a suite as `stepgate run`
// does. Each header below can also be included on its own ("stepgate/STAGE/file.hpp").
#pragma once

// Errors and exit codes; shared types.
#include "stepgate/core/custom_kinds.hpp"
#include "stepgate/core/dataset.hpp"
#include "stepgate/core/error.hpp"
#include "stepgate/core/results.hpp"

// Objectives: the interface, and the checks to run on one's own.
#include "stepgate/problems/problem.hpp"
#include "stepgate/analysis/problem_checks.hpp"

// One batch of runs, the search of one case.
#include "stepgate/run/batch.hpp"
#include "stepgate/search/case_search.hpp"

// Suites: parsing, planning, running, shards, registered kinds, the whole run.
#include "stepgate/suite/suite.hpp"
#include "stepgate/sweep/merge.hpp"
#include "stepgate/sweep/plan.hpp"
#include "stepgate/sweep/prepare.hpp"
#include "stepgate/sweep/registry.hpp"
#include "stepgate/sweep/run_suite.hpp"
#include "stepgate/sweep/sweep.hpp"

// The gate and the reports.
#include "stepgate/gate/baseline.hpp"
#include "stepgate/gate/findings.hpp"
#include "stepgate/report/record.hpp"
#include "stepgate/report/reporter.hpp"
#include "stepgate/report/summary_table.hpp"
