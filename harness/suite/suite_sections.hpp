// The sections of a suite file, each read by its own file of harness/suite/. Internal.
#pragma once
#include <filesystem>
#include <map>
#include <optional>
#include <string>

#include "stepgate/suite/json_reader.hpp"
#include "stepgate/suite/suite.hpp"

namespace stepgate::suite_detail {

/// A path as written in a document, resolved against the document's folder, its symlinks
/// followed (weakly_canonical); relative to the working folder when below it, else absolute.
/// Absolute paths are returned as written.
std::string resolve_path(const Node& document_node, const std::string& written);
/// Fails at `node` unless `path` names an existing regular file.
void require_file(const Node& node, const std::string& path, std::string_view what);

/// argv, cwd (relative to the suite file; default its folder), env and timeout of a program
/// the suite starts (`command` of a problem, `produce` of a data set); `role` names it in
/// messages ("trainer", "produce command").
void read_process(const ObjectNode& o, CommandSpec& spec, std::string_view role);

/// The `datasets` section (node: the object of datasets).
std::map<std::string, DatasetSpec> read_datasets(const Node& node, const std::string& suite_path);
/// The `scalings` section; "none" is always present.
std::map<std::string, ScalingSpec> read_scalings(const std::optional<Node>& node);
/// The `optimizers` section, as defined (predefined ones are added on use: predefined()).
std::map<std::string, OptimizerSpec> read_optimizers(const std::optional<Node>& node);
/// The spec of an optimizer named like a kind ("gd", "adam", ...) with that kind's defaults.
std::optional<OptimizerSpec> predefined_optimizer(const std::string& name);

/// Gate tolerances merged key by key over `levels` (suite gate, defaults gate, problem gate).
GateTolerances read_gate(const Layers& levels);

/// Keys that problem settings may have, in defaults and in problems.
const std::vector<std::string>& settings_keys();
/// Keys of an optimizer entry and of its schedule (from the tables in core/optimizer_spec.hpp
/// and core/schedule.hpp).
const std::vector<std::string>& optimizer_keys();
const std::vector<std::string>& schedule_keys();
/// Keys of a `rates` object and of an `outcome` object (the gate's: gate_keys() in core).
const std::vector<std::string>& rate_keys();
const std::vector<std::string>& outcome_keys();
/// Reads the problem settings of `problem` from `settings` (defaults, then the problem) and
/// `gate` (the suite's gate section, if any), resolving names against `suite` (a predefined
/// optimizer that is used is added to suite.optimizers).
void read_settings(const Layers& settings, const Layers& gate, Suite& suite, ProblemSpec& problem);

/// One entry of `problems`: its kind's options, reference and settings (merged over
/// `defaults` and the suite gate), checked against the suite's datasets, scalings, optimizers.
ProblemSpec read_problem(const Node& node, const std::optional<Node>& defaults,
                         const std::optional<Node>& suite_gate, Suite& suite);

/// A reference: a path to a reference file (resolved against the suite's folder) or an
/// inline object of the same form without "format".
ReferenceValues read_reference(const Node& node);

}  // namespace stepgate::suite_detail
