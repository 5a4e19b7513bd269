#include "stepgate/data/csv.hpp"

#include <algorithm>
#include <stdexcept>
#include <unordered_map>

#include "stepgate/core/error.hpp"
#include "stepgate/data/file_io.hpp"
#include "stepgate/core/quote_text.hpp"
#include "stepgate/data/sha256.hpp"

namespace stepgate {

std::string CsvTable::location(std::size_t offset) const {
  // line_start is sorted; the line holding `offset` is the last start <= offset.
  const auto it = std::upper_bound(line_start.begin(), line_start.end(), offset);
  const std::size_t line = it == line_start.begin() ? 1 : static_cast<std::size_t>(it - line_start.begin());
  const std::size_t begin = line_start.empty() ? 0 : line_start[line - 1];
  return path + ":" + std::to_string(line) + ":" + std::to_string(offset - begin + 1);
}

std::string CsvTable::cell_location(std::size_t row, std::size_t column) const {
  return location(cell_start.at(row).at(column));
}

namespace {

std::string plural(std::size_t n, const char* word) {
  return std::to_string(n) + " " + word + (n == 1 ? "" : "s");
}

// One pass over the text; `table` collects cells and positions as they are found.
class CsvParser {
 public:
  CsvParser(std::string_view text, const CsvOptions& options, CsvTable& table)
      : text_(text), opt_(options), table_(table) {
    if (!opt_.whitespace_delimited && opt_.quote != '\0' && opt_.delimiter == opt_.quote)
      throw std::invalid_argument("CsvOptions: the delimiter and the quote are the same character");
  }

  void run() {
    table_.line_start.push_back(0);
    if (text_.substr(0, 3) == "\xEF\xBB\xBF") pos_ = 3;  // UTF-8 byte-order mark
    while (pos_ < text_.size()) {
      if (opt_.whitespace_delimited) skip_blanks();
      if (at_line_end()) {  // blank line
        consume_line_end();
        continue;
      }
      read_record();
      store_record();
      consume_line_end();
    }
    if (!have_header_ && table_.rows.empty())
      throw InputError(table_.path + ":1:1",
                       std::string("found an empty file; expected ") +
                           (opt_.header ? "a header line naming the columns" : "at least one row"));
  }

 private:
  bool at_line_end() const {
    return pos_ >= text_.size() || text_[pos_] == '\n' || text_[pos_] == '\r';
  }
  bool is_blank(char c) const { return c == ' ' || c == '\t'; }
  bool is_separator(char c) const {
    return opt_.whitespace_delimited ? is_blank(c) : c == opt_.delimiter;
  }
  void skip_blanks() {
    while (pos_ < text_.size() && is_blank(text_[pos_])) ++pos_;
  }
  // Consumes LF, CRLF or CR at pos_ (nothing at the end of the text).
  void consume_line_end() {
    if (pos_ >= text_.size()) return;
    if (text_[pos_] == '\r' && pos_ + 1 < text_.size() && text_[pos_ + 1] == '\n') ++pos_;
    ++pos_;
    table_.line_start.push_back(pos_);
  }

  void read_record() {
    fields_.clear();
    starts_.clear();
    record_start_ = pos_;
    record_line_ = static_cast<long>(table_.line_start.size());
    for (;;) {
      read_field();
      if (opt_.whitespace_delimited) {
        skip_blanks();
        if (at_line_end()) return;
      } else {
        if (at_line_end()) return;
        ++pos_;  // the delimiter (read_field stops only at a delimiter or a line end)
      }
    }
  }

  void read_field() {
    std::size_t look = pos_;
    while (look < text_.size() && is_blank(text_[look]) && !is_separator(text_[look])) ++look;
    if (opt_.quote != '\0' && look < text_.size() && text_[look] == opt_.quote) {
      pos_ = look;
      read_quoted_field();
      return;
    }
    starts_.push_back(pos_);
    const std::size_t begin = pos_;
    while (!at_line_end() && !is_separator(text_[pos_])) {
      if (opt_.quote != '\0' && text_[pos_] == opt_.quote)
        throw InputError(table_.location(pos_),
                         "found a quote inside an unquoted field; expected quotes only around "
                         "a whole field, with quotes inside it doubled (RFC 4180)");
      ++pos_;
    }
    fields_.emplace_back(text_.substr(begin, pos_ - begin));
  }

  void read_quoted_field() {
    const std::size_t open = pos_;
    starts_.push_back(open);
    std::string value;
    ++pos_;
    for (;;) {
      if (pos_ >= text_.size())
        throw InputError(table_.location(open), "found a quoted field that is never closed; expected a "
                                     "closing quote before the end of the file");
      const char c = text_[pos_];
      if (c == opt_.quote) {
        if (pos_ + 1 < text_.size() && text_[pos_ + 1] == opt_.quote) {
          value += c;
          pos_ += 2;
          continue;
        }
        ++pos_;
        break;
      }
      value += c;
      if (c == '\n' || (c == '\r' && !(pos_ + 1 < text_.size() && text_[pos_ + 1] == '\n')))
        table_.line_start.push_back(pos_ + 1);  // a line break inside the field
      ++pos_;
    }
    std::size_t after = pos_;
    while (after < text_.size() && is_blank(text_[after]) && !is_separator(text_[after])) ++after;
    if (after < text_.size() && !is_separator(text_[after]) && text_[after] != '\n' &&
        text_[after] != '\r')
      throw InputError(table_.location(after),
                       "found " + quote_text(text_.substr(after, 1)) + " after the closing quote "
                       "of the field that starts at " + table_.location(open) +
                       "; expected a delimiter or the end of the line");
    pos_ = after;
    fields_.push_back(std::move(value));
  }

  void store_record() {
    if (opt_.header && !have_header_) {
      have_header_ = true;
      std::unordered_map<std::string, std::size_t> seen;
      for (std::size_t j = 0; j < fields_.size(); ++j) {
        const auto [it, inserted] = seen.emplace(fields_[j], j);
        if (!inserted)
          throw InputError(table_.location(starts_[j]),
                           "found the column name " + quote_text(fields_[j]) + " again (it is "
                           "also column " + std::to_string(it->second + 1) +
                           "); expected unique column names");
      }
      table_.header = std::move(fields_);
      table_.header_start = std::move(starts_);
      fields_ = {};
      starts_ = {};
      return;
    }
    const std::size_t expected = have_header_ ? table_.header.size()
                                 : table_.rows.empty() ? fields_.size()
                                                       : table_.rows.front().size();
    if (!have_header_ && table_.rows.empty()) name_columns(fields_.size());
    if (fields_.size() != expected)
      throw InputError(table_.location(record_start_),
                       "found row " + std::to_string(table_.rows.size() + 1) + " with " +
                           plural(fields_.size(), "field") + "; expected " +
                           plural(expected, "field") +
                           (have_header_ ? ", as in the header" : ", as in the first row"));
    table_.rows.push_back(std::move(fields_));
    table_.cell_start.push_back(std::move(starts_));
    fields_.clear();  // moved-from vectors: clear() makes them valid and empty
    starts_.clear();
    table_.row_line.push_back(record_line_);
  }

  // header == false, first row: names from the options, else col1..colK.
  void name_columns(std::size_t count) {
    if (!opt_.column_names.empty()) {
      if (opt_.column_names.size() != count)
        throw InputError(table_.location(record_start_),
                         "found " + plural(count, "field") + " in the first row; expected " +
                             plural(opt_.column_names.size(), "field") +
                             ", one per given column name");
      table_.header = opt_.column_names;
    } else {
      for (std::size_t j = 0; j < count; ++j) table_.header.push_back("col" + std::to_string(j + 1));
    }
    table_.header_start.assign(count, 0);
  }

  std::string_view text_;
  const CsvOptions& opt_;
  CsvTable& table_;
  std::size_t pos_ = 0;
  std::size_t record_start_ = 0;
  long record_line_ = 1;
  bool have_header_ = false;
  std::vector<std::string> fields_;
  std::vector<std::size_t> starts_;
};

}  // namespace

CsvTable parse_csv(std::string_view text, const std::string& path_for_messages,
                   const CsvOptions& options) {
  CsvTable table;
  table.path = path_for_messages;
  CsvParser(text, options, table).run();
  table.sha256 = sha256_hex(text);
  return table;
}

CsvTable read_csv(const std::string& path, const CsvOptions& options) {
  const std::string content = options.max_rows > 0
                                  ? read_text_lines(path, options.max_rows + (options.header ? 1 : 0), options.quote)
                                  : read_text_file(path);
  CsvTable table;
  table.path = path;
  CsvParser(content, options, table).run();
  table.sha256 = sha256_file(path);
  return table;
}

}  // namespace stepgate
