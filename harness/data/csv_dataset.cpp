// table_to_dataset and load_csv_dataset (declared in data/csv.hpp).
#include <cerrno>
#include <cmath>
#include <cstdlib>
#include <unordered_map>

#include "stepgate/core/error.hpp"
#include "stepgate/data/csv.hpp"
#include "stepgate/core/quote_text.hpp"

namespace stepgate {
namespace {

std::string list_columns(const std::vector<std::string>& header) {
  std::string list;
  for (const std::string& name : header) list += (list.empty() ? "" : ", ") + quote_text(name);
  return list;
}

// A whole cell as a finite decimal number. Returns "" on success, else what was wrong.
std::string parse_cell(const std::string& cell, double& value) {
  std::size_t begin = cell.find_first_not_of(" \t");
  if (begin == std::string::npos) return "found an empty cell";
  const std::size_t end = cell.find_last_not_of(" \t") + 1;
  const std::string body = cell.substr(begin, end - begin);
  // strtod also takes hexadecimal, "inf" and "nan": none is a plain data value.
  if (body.find_first_of("xXpP") != std::string::npos) return "found " + quote_text(cell);
  errno = 0;
  char* stop = nullptr;
  value = std::strtod(body.c_str(), &stop);
  if (stop != body.c_str() + body.size()) return "found " + quote_text(cell);
  if (!std::isfinite(value))
    return "found " + quote_text(cell) +
           (errno == ERANGE ? " (out of the range of a double)" : " (not finite)");
  return "";  // ERANGE with a finite value is underflow to a subnormal or zero: accepted
}

}  // namespace

Dataset table_to_dataset(const CsvTable& table, const std::string& target,
                         const std::vector<std::string>& features, std::string name) {
  const std::string header_where =
      table.header_start.empty() ? table.path : table.location(table.header_start.front());
  std::unordered_map<std::string, std::size_t> index;
  for (std::size_t j = 0; j < table.header.size(); ++j) index.emplace(table.header[j], j);
  auto column_of = [&](const std::string& column, const char* role) {
    const auto it = index.find(column);
    if (it == index.end())
      throw InputError(header_where, std::string("found no column named ") +
                                         quote_text(column, 200) + " (" + role +
                                         "); expected one of: " + list_columns(table.header));
    return it->second;
  };

  const std::size_t target_column = column_of(target, "the target");
  std::vector<std::size_t> columns;
  std::vector<std::string> names;
  if (features.empty()) {
    for (std::size_t j = 0; j < table.header.size(); ++j)
      if (j != target_column) columns.push_back(j), names.push_back(table.header[j]);
  } else {
    std::unordered_map<std::string, int> listed;
    for (const std::string& feature : features) {
      const std::size_t j = column_of(feature, "a feature");
      if (j == target_column)
        throw InputError(header_where, "found the target " + quote_text(target) +
                                           " among the features; expected it only as the target");
      if (listed[feature]++ > 0)
        throw InputError(header_where, "found the feature " + quote_text(feature) +
                                           " listed twice; expected each feature once");
      columns.push_back(j);
      names.push_back(feature);
    }
  }
  if (table.rows.empty())
    throw InputError(header_where, "found no data rows below the header; expected at least one");

  const auto n = static_cast<Index>(table.rows.size());
  const auto d = static_cast<Index>(columns.size());
  Dataset data;
  data.name = std::move(name);
  data.X.resize(n, d);
  data.y.resize(n);
  auto cell_value = [&](std::size_t row, std::size_t column) {
    double value = 0.0;
    const std::string problem = parse_cell(table.rows[row][column], value);
    if (!problem.empty())
      throw InputError(table.cell_location(row, column),
                       "column " + quote_text(table.header[column], 200) + ": " + problem +
                           "; expected a finite decimal number");
    return value;
  };
  for (Index i = 0; i < n; ++i) {
    const auto row = static_cast<std::size_t>(i);
    for (Index k = 0; k < d; ++k) data.X(i, k) = cell_value(row, columns[static_cast<std::size_t>(k)]);
    data.y(i) = cell_value(row, target_column);
  }
  data.features = std::move(names);
  data.target = target;
  data.map = FeatureMap::identity(d);
  data.sha256 = table.sha256;
  data.target_file = table.path;
  data.target_lines = table.row_line;
  return data;
}

Dataset load_csv_dataset(const std::string& path, const CsvOptions& options,
                         const std::string& target, const std::vector<std::string>& features,
                         std::string name) {
  return table_to_dataset(read_csv(path, options), target, features, std::move(name));
}

}  // namespace stepgate
