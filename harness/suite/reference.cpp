// References: published values of a linear model's parameters, inline in a suite or in a
// reference file ("format": "stepgate.reference/1"), for the LRE comparison.
#include <filesystem>

#include <fmt/format.h>

#include "stepgate/data/file_io.hpp"
#include "stepgate/suite/suite_sections.hpp"

namespace stepgate {
namespace suite_detail {
namespace {

ReferenceValues read_reference_object(const Node& node, bool is_file) {
  const ObjectNode o = is_file ? ObjectNode(node, {"format", "source", "digits", "coefficients"})
                               : ObjectNode(node, {"source", "digits", "coefficients"});
  if (is_file) {
    const Node format = o.require("format");
    if (format.string() != kReferenceFormat)
      format.expected(fmt::format("\"{}\"", kReferenceFormat));
  }
  ReferenceValues r;
  const Node source = o.require("source");
  r.source = source.string();
  if (r.source.empty()) source.expected("a description of where the values are published");
  if (auto n = o.find("digits"))
    r.digits = n->number_if([](double v) { return v > 0 && v <= 17; }, "a number in (0, 17]");
  const Node coefficients = o.require("coefficients");
  if (!coefficients.json().is_object() || coefficients.json().empty())
    coefficients.expected("a non-empty object (parameter name -> value)");
  std::vector<double> values;
  for (const auto& item : coefficients.json().items()) {
    r.names.push_back(item.key());
    values.push_back(coefficients.member(item.key()).number());
  }
  r.values = Eigen::Map<const Vec>(values.data(), Index(values.size()));
  return r;
}

}  // namespace

ReferenceValues read_reference(const Node& node) {
  if (node.json().is_object()) return read_reference_object(node, false);
  if (!node.json().is_string())
    node.expected("a reference file path or an inline reference object");
  const std::string path = resolve_path(node, node.string());
  require_file(node, path, "reference file");
  return load_reference(path);
}

}  // namespace suite_detail

ReferenceValues load_reference(const std::string& path) {
  using namespace suite_detail;
  const Json document = parse_json_text(read_raw_file(path), path);
  return read_reference_object(Node(document, path, ""), true);
}

}  // namespace stepgate
