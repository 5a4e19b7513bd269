// Reading suite documents: parsing with line:column errors and repeated-key checks, objects with
// their allowed keys ("did you mean"), and settings merged over levels. Internal to
// harness/suite/. Values are read with core's one JSON reader (core/json_node.hpp).
#pragma once
#include <cstdint>
#include <initializer_list>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json.hpp>

#include "stepgate/core/json_node.hpp"

namespace stepgate::suite_detail {

/// Objects keep their keys in the order written (reference coefficients are listed in order).
using Json = nlohmann::ordered_json;

/// Parses JSON text. Syntax errors: InputError("file:line:column", ...), line and column
/// 1-based, the column counting bytes. A key repeated within one object is an error at the
/// pointer of the repeat (nlohmann would silently keep one of them).
Json parse_json_text(const std::string& text, const std::string& file);

// The reader itself is core's (core/json_node.hpp): a Node is a BasicNode over ordered_json,
// with the same wording as the readers of results and baselines.
using Node = BasicNode<Json>;
using stepgate::did_you_mean;
using stepgate::edit_distance;
using stepgate::join;
using stepgate::pointer_token;

/// An object whose keys are all among `allowed` (unknown keys fail with a did-you-mean).
class ObjectNode {
 public:
  ObjectNode(const Node& node, std::initializer_list<std::string_view> allowed);
  ObjectNode(const Node& node, const std::vector<std::string>& allowed);

  const Node& node() const { return node_; }
  bool has(std::string_view key) const { return node_.json().contains(key); }
  std::optional<Node> find(std::string_view key) const;
  Node require(std::string_view key) const;  ///< "missing required key 'k'"
  std::vector<std::string> keys() const;     ///< in document order

 private:
  void check_keys(const std::vector<std::string>& allowed) const;
  Node node_;
};

/// The same settings object given at several levels (suite gate, defaults, problem): for each
/// key, the highest level that has it wins. Levels are lowest priority first.
struct Layers {
  std::vector<Node> levels;

  std::optional<Node> find(std::string_view key) const;
  /// The levels' members `key` (each must be an object), for merging that object key by key.
  Layers sub(std::string_view key) const;
  bool empty() const { return levels.empty(); }
};

/// Names of suite entries: [A-Za-z0-9._-]+, as they appear in case ids and file names.
bool is_valid_name(std::string_view name);
/// Fails at `node` unless `name` is valid; `what` names the entry ("problem name").
void check_name(const Node& node, const std::string& name, std::string_view what);

}  // namespace stepgate::suite_detail
