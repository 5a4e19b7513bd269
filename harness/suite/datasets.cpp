// The `datasets` section and load_dataset: three sources (csv, idx, generate). The suite only
// checks that data files exist; reading them is load_dataset's job, so validation stays fast.
#include <filesystem>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"
#include "stepgate/data/csv.hpp"
#include "stepgate/data/generate.hpp"
#include "stepgate/data/idx.hpp"
#include "stepgate/suite/suite_sections.hpp"

namespace stepgate {
namespace suite_detail {
namespace {

const std::vector<std::string> kCsvKeys = {"csv",   "target", "features", "delimiter", "whitespace",
                                           "quote", "header", "columns",  "max_rows", "produce"};
const std::vector<std::string> kIdxKeys = {"idx", "pixel_scale", "max_rows"};
const std::vector<std::string> kGeneratedKeys = {"generate"};

char one_char(const Node& node, bool allow_empty) {
  const std::string& s = node.string();
  if (s.size() == 1) return s[0];
  if (allow_empty && s.empty()) return '\0';
  node.expected(allow_empty ? "one character, or \"\" for none" : "one character");
}

std::vector<std::string> unique_strings(const Node& node, std::string_view what) {
  std::vector<std::string> out = node.strings();
  for (std::size_t i = 0; i < out.size(); ++i)
    for (std::size_t j = 0; j < i; ++j)
      if (out[i] == out[j])
        node.element(i).fail(fmt::format("found {} '{}' twice; expected each once", what, out[i]));
  return out;
}

long max_rows(const ObjectNode& o) {
  const auto n = o.find("max_rows");
  return n ? n->integer_if([](long v) { return v >= 0; }, "a whole number >= 0 (0 = all rows)") : 0;
}

void read_csv_source(const ObjectNode& o, DatasetSpec& d) {
  d.source = DatasetSpec::Source::csv;
  const Node path = o.require("csv");
  d.path = resolve_path(path, path.string());
  if (auto n = o.find("produce")) {
    CommandSpec c;
    read_process(ObjectNode(*n, {"argv", "cwd", "env", "timeout"}), c, "produce command");
    d.produce = std::move(c);  // the file need not exist yet: the command writes it
  } else {
    require_file(path, d.path, "data file");
  }
  const Node target = o.require("target");
  d.target = target.string();
  if (d.target.empty()) target.expected("a column name");
  if (auto n = o.find("features")) {
    d.features = unique_strings(*n, "feature");
    for (std::size_t i = 0; i < d.features.size(); ++i)
      if (d.features[i] == d.target)
        n->element(i).fail(
            fmt::format("found the target '{}' among the features; expected "
                        "feature columns other than the target",
                        d.target));
  }
  if (auto n = o.find("whitespace")) d.csv.whitespace_delimited = n->boolean();
  if (auto n = o.find("delimiter")) {
    if (d.csv.whitespace_delimited)
      n->fail("found a delimiter with \"whitespace\": true; expected one of the two");
    d.csv.delimiter = one_char(*n, false);
  }
  if (auto n = o.find("quote")) d.csv.quote = one_char(*n, true);
  if (!d.csv.whitespace_delimited && d.csv.quote != '\0' && d.csv.quote == d.csv.delimiter) {
    const auto n = o.find("quote") ? o.find("quote") : o.find("delimiter");
    n->fail(fmt::format("found the quote character '{}' equal to the delimiter; expected two different characters",
                        d.csv.quote));
  }
  if (auto n = o.find("header")) d.csv.header = n->boolean();
  if (auto n = o.find("columns")) {
    if (d.csv.header)
      n->fail(
          "found column names for a file with a header line; expected \"columns\" only "
          "with \"header\": false");
    d.csv.column_names = unique_strings(*n, "column");
  }
  d.max_rows = max_rows(o);
}

void read_idx_source(const ObjectNode& o, DatasetSpec& d) {
  d.source = DatasetSpec::Source::idx;
  const ObjectNode files(o.require("idx"), {"images", "labels"});
  const Node images = files.require("images");
  const Node labels = files.require("labels");
  d.path = resolve_path(images, images.string());
  d.labels_path = resolve_path(labels, labels.string());
  require_file(images, d.path, "images file");
  require_file(labels, d.labels_path, "labels file");
  if (auto n = o.find("pixel_scale"))
    d.pixel_scale = n->number_if([](double v) { return v > 0; }, "a number > 0");
  d.max_rows = max_rows(o);
}

std::vector<double> numbers(const Node& node) {
  std::vector<double> out;
  for (const Node& e : node.elements()) out.push_back(e.number());
  return out;
}

void read_generated_source(const ObjectNode& o, DatasetSpec& d) {
  d.source = DatasetSpec::Source::generated;
  const ObjectNode g(o.require("generate"), {"kind", "rows", "features", "noise", "seed", "weights",
                                             "intercept", "feature_scales"});
  GeneratedSpec& s = d.generated;
  if (auto n = g.find("kind"))
    s.kind = n->choice({"linear", "logistic"}, "generated kind") == "linear"
                 ? GeneratedSpec::linear
                 : GeneratedSpec::logistic;
  if (auto n = g.find("rows"))
    s.rows = n->integer_if([](long v) { return v >= 1; }, "a whole number >= 1");
  if (auto n = g.find("features"))
    s.features = n->integer_if([](long v) { return v >= 1; }, "a whole number >= 1");
  // The data are held in memory in double precision (and copied once per scaling): refuse
  // what cannot be allocated here rather than end in std::bad_alloc after the planning.
  if (const double bytes = 8.0 * static_cast<double>(s.rows) * static_cast<double>(s.features + 1);
      bytes > kMaxDataBytes) {
    const auto n = g.find("rows") && s.rows > s.features ? g.find("rows") : g.find("features");
    n->fail(fmt::format("found {} rows × {} features, about {:.3g} GiB in double precision; expected data of at most "
                        "{:.0f} GiB", s.rows, s.features, bytes / (1 << 30), kMaxDataBytes / (1 << 30)));
  }
  if (auto n = g.find("noise")) {
    s.noise = n->number_if([](double v) { return v >= 0; }, "a number >= 0");
    if (s.kind == GeneratedSpec::logistic)
      n->fail("found noise for logistic data; expected no noise (labels are drawn from the model)");
  }
  if (auto n = g.find("seed")) s.seed = n->seed();
  if (auto n = g.find("intercept")) s.intercept = n->number();
  const auto per_feature = [&](const char* key, std::vector<double>& out, bool positive) {
    const auto n = g.find(key);
    if (!n) return;
    out = numbers(*n);
    if (out.size() != static_cast<std::size_t>(s.features))
      n->fail(
          fmt::format("found {} values; expected one per feature ({})", out.size(), s.features));
    for (std::size_t i = 0; i < out.size(); ++i)
      if (positive && !(out[i] > 0)) n->element(i).expected("a number > 0");
  };
  per_feature("weights", s.weights, false);
  per_feature("feature_scales", s.feature_scales, true);
}

DatasetSpec read_dataset(const Node& node, const std::string& name, const std::string& suite_path) {
  check_name(node, name, "dataset name");
  if (!node.json().is_object())
    node.expected("an object with one of \"csv\", \"idx\", \"generate\"");
  DatasetSpec d;
  d.name = name;
  d.pointer = node.pointer();
  d.suite_path = suite_path;
  const int sources = int(node.json().contains("csv")) + int(node.json().contains("idx")) +
                      int(node.json().contains("generate"));
  if (sources != 1)
    node.fail(fmt::format(
        "found {} data sources; expected exactly one of \"csv\", \"idx\", \"generate\"", sources));
  if (node.json().contains("csv"))
    read_csv_source(ObjectNode(node, kCsvKeys), d);
  else if (node.json().contains("idx"))
    read_idx_source(ObjectNode(node, kIdxKeys), d);
  else
    read_generated_source(ObjectNode(node, kGeneratedKeys), d);
  return d;
}

}  // namespace

std::map<std::string, DatasetSpec> read_datasets(const Node& node, const std::string& suite_path) {
  if (!node.json().is_object()) node.expected("an object (dataset name -> source)");
  std::map<std::string, DatasetSpec> out;
  for (const auto& item : node.json().items())
    out.emplace(item.key(), read_dataset(node.member(item.key()), item.key(), suite_path));
  return out;
}

}  // namespace suite_detail

namespace {

CsvOptions with_max_rows(CsvOptions o, long max_rows) {
  o.max_rows = max_rows;
  return o;
}

}  // namespace

Dataset load_dataset(const DatasetSpec& spec) {
  try {
    Dataset data;
    switch (spec.source) {
      case DatasetSpec::Source::csv:
        data = load_csv_dataset(spec.path, with_max_rows(spec.csv, spec.max_rows), spec.target, spec.features, spec.name);
        break;
      case DatasetSpec::Source::idx:
        // load_idx_dataset applies max_rows itself, before scaling the pixels.
        return load_idx_dataset(spec.path, spec.labels_path, spec.name, spec.pixel_scale,
                                spec.max_rows);
      case DatasetSpec::Source::generated:
        data = generate_dataset(spec.generated, spec.name);
        break;
    }
    if (spec.max_rows > 0 && data.rows() > spec.max_rows) {
      data.X.conservativeResize(spec.max_rows, Eigen::NoChange);
      data.y.conservativeResize(spec.max_rows);
    }
    data.name = spec.name;
    return data;
  } catch (const InputError& e) {
    throw InputError(e.where(), fmt::format("{} (dataset '{}', {}#{})", e.message(), spec.name,
                                            spec.suite_path, spec.pointer));
  }
}

}  // namespace stepgate
