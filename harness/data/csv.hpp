// CSV reading (RFC 4180 quoting) into a table of strings, and conversion of a table into a
// Dataset of doubles. Every error is an InputError whose `where` is "path:line:column"
// (1-based; the column counts bytes from the start of the line).
#pragma once
#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

#include "stepgate/core/dataset.hpp"

namespace stepgate {

struct CsvOptions {
  char delimiter = ',';               ///< field separator (ignored when whitespace_delimited)
  bool whitespace_delimited = false;  ///< runs of spaces/tabs separate fields, leading and
                                      ///< trailing blanks are ignored (statsmodels' spector.csv)
  char quote = '"';                   ///< quote character; '\0' disables quoting
  bool header = true;                 ///< the first non-blank line names the columns
  /// header == false: the column names to use (their count must match the rows);
  /// empty = "col1", "col2", ...
  std::vector<std::string> column_names;
  /// read_csv: read only the first max_rows rows of data (0 = all); the rest of the file is
  /// never read, though it is hashed.
  long max_rows = 0;
};

struct CsvTable {
  std::vector<std::string> header;              ///< column names
  std::vector<std::vector<std::string>> rows;   ///< cells, every row header.size() long
  std::vector<long> row_line;                   ///< 1-based source line where each row starts
  std::string path;                             ///< as given, for messages
  std::string sha256;                           ///< of the source bytes (the file as stored)
  // Positions, for messages: byte offsets of cells and of the starts of lines.
  std::vector<std::size_t> header_start;             ///< offset of each header cell
  std::vector<std::vector<std::size_t>> cell_start;  ///< offset of each cell of each row
  std::vector<std::size_t> line_start;               ///< offset of the first byte of each line

  /// "path:line:column" of a byte offset into the source.
  std::string location(std::size_t offset) const;
  /// "path:line:column" of a cell (row and column 0-based).
  std::string cell_location(std::size_t row, std::size_t column) const;
};

/// Parses CSV text. Quoted fields may hold the delimiter, doubled quotes ("" for ") and line
/// breaks; blanks around a quoted field are ignored. Line ends are LF, CRLF or CR. Blank
/// lines are skipped; a UTF-8 byte-order mark is skipped. Errors: empty input, a row whose
/// field count differs from the header's (or from the first row's without header), an
/// unterminated quote (reported at the opening quote), a quote inside an unquoted field,
/// text after a closing quote, duplicate column names. sha256 is that of `text`.
CsvTable parse_csv(std::string_view text, const std::string& path_for_messages,
                   const CsvOptions& options = {});

/// Reads (decompressing *.gz, see read_text_file) and parses a CSV file; sha256 is that of
/// the file's stored bytes.
CsvTable read_csv(const std::string& path, const CsvOptions& options = {});

/// Converts the named columns to doubles. `features` empty = every column but `target`, in
/// file order. Cells are parsed whole as C-locale decimal numbers (strtod grammar, blanks
/// around allowed, hexadecimal and non-finite values rejected). Errors: unknown column names
/// (the message lists the available ones), the target listed as a feature, repeated
/// features, no data rows, empty or non-numeric cells (with line, column and column name).
/// map = identity, sha256 = table.sha256.
Dataset table_to_dataset(const CsvTable& table, const std::string& target,
                         const std::vector<std::string>& features, std::string name);

/// read_csv followed by table_to_dataset.
Dataset load_csv_dataset(const std::string& path, const CsvOptions& options,
                         const std::string& target, const std::vector<std::string>& features,
                         std::string name);

}  // namespace stepgate
