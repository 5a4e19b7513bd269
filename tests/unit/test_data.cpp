// Tests of harness/data/ readers: SHA-256, CSV (files, quoting, malformed input) and IDX.
// Files are written under the build directory by the tests themselves.
#include <catch2/catch.hpp>
#include <random>
#include <sstream>

#include "stepgate/core/error.hpp"
#include "stepgate/data/column_stats.hpp"
#include "stepgate/data/csv.hpp"
#include "stepgate/data/file_io.hpp"
#include "stepgate/data/idx.hpp"
#include "stepgate/data/sha256.hpp"
#include "data_test_support.hpp"

using namespace stepgate;
using namespace data_test;

TEST_CASE("sha256 of the FIPS 180-2 example messages", "[data]") {
  // NIST FIPS 180-2, Appendix B.1 (one block), B.2 (multi-block); "" is the well-known digest.
  CHECK(sha256_hex("abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  CHECK(sha256_hex("") == "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
  const std::string message_448 = "abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq";
  REQUIRE(message_448.size() * 8 == 448);
  CHECK(sha256_hex(message_448) ==
        "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
}

TEST_CASE("sha256_file streams a file larger than one block", "[data]") {
  const std::string path = temp_path("million_a.txt");
  write_file(path, std::string(1000000, 'a'));
  // FIPS 180-2 Appendix B.3, one million 'a' (recalled from memory).
  CHECK(sha256_file(path) == "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
  CHECK(sha256_file(path) == sha256_hex(read_raw_file(path)));
  CHECK_THROWS_AS(sha256_file(temp_path("no_such_file")), InputError);
}

TEST_CASE("CSV: RFC 4180 quoting, CRLF and line breaks inside quotes", "[data]") {
  const std::string text =
      "name,\"x, y\",z\r\n\"he said \"\"hi\"\"\",1,2\r\n\r\n\"two\nlines\",3,\"\"\r\nlast,4,5";
  const CsvTable t = parse_csv(text, "q.csv", {});
  REQUIRE(t.header == std::vector<std::string>{"name", "x, y", "z"});
  REQUIRE(t.rows.size() == 3);
  CHECK(t.rows[0][0] == "he said \"hi\"");
  CHECK(t.rows[1][0] == "two\nlines");
  CHECK(t.rows[1][2] == "");
  CHECK(t.rows[2] == std::vector<std::string>{"last", "4", "5"});
  CHECK(t.row_line == std::vector<long>{2, 4, 6});  // line 3 is blank, row 2 spans lines 4-5
  CHECK(t.cell_location(1, 1) == "q.csv:5:8");     // the 3 after `lines",`
  CHECK(t.cell_location(2, 2) == "q.csv:6:8");
  CHECK(t.sha256 == sha256_hex(text));
}

TEST_CASE("CSV: whitespace-delimited statsmodels spector.csv", "[data]") {
  const std::string path = "/usr/lib/python3/dist-packages/statsmodels/datasets/spector/spector.csv";
  if (!fs::exists(path)) {
    WARN("statsmodels' spector.csv is not installed; skipped");
    return;
  }
  CsvOptions opt;
  opt.whitespace_delimited = true;
  opt.quote = '\'';
  const Dataset d = load_csv_dataset(path, opt, "GRADE", {"GPA", "TUCE", "PSI"}, "spector");
  // Spector & Mazzeo (1980) as shipped with statsmodels: 32 observations.
  REQUIRE(d.rows() == 32);
  REQUIRE(d.cols() == 3);
  CHECK(d.sha256 == sha256_file(path));
  // numpy (Debian's 1.24.2): mean and std(ddof=0) of the same columns (the population sd,
  // which standardize uses, as scikit-learn's StandardScaler does).
  const std::string out = run_python(
      "import numpy as np\nX = np.loadtxt('" + path + "', skiprows=1)\n"
      "for j in (1, 2, 3): print(repr(X[:, j].mean()), repr(X[:, j].std(ddof=0)))\n");
  if (out.empty()) {
    WARN("python3 with numpy unavailable; reference comparison skipped");
    return;
  }
  std::istringstream in(out);
  for (const ColumnStats& s : column_stats(d)) {
    double mean = 0, sd = 0;
    in >> mean >> sd;
    CHECK(s.mean == Approx(mean).epsilon(1e-13));
    CHECK(s.sd == Approx(sd).epsilon(1e-13));
  }
}

TEST_CASE("CSV: gzip, space separated, no header (as sklearn's diabetes_data_raw.csv.gz)", "[data]") {
  const std::string path = temp_path("diabetes_like.csv.gz");
  const std::string text = "59 2 32.1 101.0 157\n48 1 21.6  87.0 183\n72 2 30.5 93.0 156\n";
  write_gzip(path, text);
  CsvOptions opt;
  opt.whitespace_delimited = true;
  opt.header = false;
  const Dataset d = load_csv_dataset(path, opt, "col5", {}, "diabetes-like");
  REQUIRE(d.rows() == 3);
  REQUIRE(d.features == std::vector<std::string>{"col1", "col2", "col3", "col4"});
  CHECK(d.X(1, 3) == 87.0);
  CHECK(d.y(2) == 156.0);
  CHECK(d.sha256 == sha256_hex(read_raw_file(path)));  // the stored .gz bytes ...
  CHECK(d.sha256 != sha256_hex(text));                  // ... not the decompressed text
  write_file(temp_path("plain.csv.gz"), text);
  CHECK_THROWS_WITH(read_text_file(temp_path("plain.csv.gz")), Catch::Contains("not gzip"));

  const std::string real = "/usr/lib/python3/dist-packages/sklearn/datasets/data/diabetes_data_raw.csv.gz";
  if (fs::exists(real)) {  // sklearn 1.2.1 docs, load_diabetes: 442 samples, 10 features
    const CsvTable t = read_csv(real, opt);
    CHECK(t.rows.size() == 442);
    CHECK(t.header.size() == 10);
  }
}

TEST_CASE("CSV: table_to_dataset selects columns and parses numbers", "[data]") {
  const CsvTable t = parse_csv("id,y,u,v\n1, 2.5 ,-3e2,+4\n2,1e-320,0.5,.25\n", "n.csv", {});
  const Dataset d = table_to_dataset(t, "y", {"v", "u"}, "n");
  REQUIRE(d.features == std::vector<std::string>{"v", "u"});
  CHECK(d.X(0, 0) == 4.0);
  CHECK(d.X(0, 1) == -300.0);
  CHECK(d.X(1, 0) == 0.25);
  CHECK(d.y(0) == 2.5);
  CHECK(d.y(1) > 0.0);  // underflow to a subnormal is kept
  CHECK(d.map.scale == Vec::Ones(2));
  const Dataset all = table_to_dataset(t, "y", {}, "n");
  CHECK(all.features == std::vector<std::string>{"id", "u", "v"});
}

TEST_CASE("CSV: malformed inputs give located messages and never crash", "[data]") {
  struct Bad {
    std::string text;
    bool whitespace, header;
    std::string target;
    std::vector<std::string> features;
    std::string fragment, where;
  };
  const std::vector<Bad> cases = {
      {"", false, true, "b", {}, "found an empty file", "t.csv:1:1"},
      {"\n\r\n\n", false, true, "b", {}, "found an empty file", "t.csv:1:1"},
      {"a,b\n1,2\n3\n", false, true, "b", {}, "found row 2 with 1 field; expected 2 fields", "t.csv:3:1"},
      {"a,b\n1,2,3\n", false, true, "b", {}, "found row 1 with 3 fields", "t.csv:2:1"},
      {"a,b\n\"1,2\n", false, true, "b", {}, "never closed", "t.csv:2:1"},
      {"a,b\n1,\"x\ny\n", false, true, "b", {}, "never closed", "t.csv:2:3"},
      {"a,b\n1,2\"3\n", false, true, "b", {}, "quote inside an unquoted field", "t.csv:2:4"},
      {"a,b\n1,\"2\"x\n", false, true, "b", {}, "found 'x' after the closing quote", "t.csv:2:6"},
      {"a,b\n1,\"2\" \"3\"\n", false, true, "b", {}, "after the closing quote", "t.csv:2:7"},
      {"a,a\n1,2\n", false, true, "a", {}, "found the column name 'a' again", "t.csv:1:3"},
      {"a,b\n1,x\n", false, true, "b", {}, "column 'b': found 'x'; expected a finite", "t.csv:2:3"},
      {"a,b\n1,\n", false, true, "b", {}, "column 'b': found an empty cell", "t.csv:2:3"},
      {"a,b\n1,2\n", false, true, "c", {}, "no column named 'c' (the target); expected one of: 'a', 'b'", "t.csv:1:1"},
      {"a,b\n1,2\n", false, true, "b", {"z"}, "no column named 'z' (a feature)", "t.csv:1:1"},
      {"a,b\n1,2\n", false, true, "b", {"a", "a"}, "listed twice", "t.csv:1:1"},
      {"a,b\n1,2\n", false, true, "b", {"b"}, "among the features", "t.csv:1:1"},
      {"a,b\n1,nan\n", false, true, "b", {}, "(not finite)", "t.csv:2:3"},
      {"a,b\n1,1e999\n", false, true, "b", {}, "out of the range of a double", "t.csv:2:3"},
      {"a,b\n1,2 3\n", false, true, "b", {}, "found '2 3'", "t.csv:2:3"},
      {"a,b\n1,0x10\n", false, true, "b", {}, "found '0x10'", "t.csv:2:3"},
      {"a,b\n1,--2\n", false, true, "b", {}, "found '--2'", "t.csv:2:3"},
      {"a,b\r\n1,2\r\n3,4,5\r\n", false, true, "b", {}, "found row 2 with 3 fields", "t.csv:3:1"},
      {"a,b\n", false, true, "b", {}, "found no data rows", "t.csv:1:1"},
      {"a b\n1 2\n  3 4 5\n", true, true, "b", {}, "found row 2 with 3 fields", "t.csv:3:3"},
      {"a,b\n\"1\",\"2\n3,4\n", false, true, "b", {}, "never closed", "t.csv:2:5"},
      {"1,2\n3\n", false, false, "col2", {}, "expected 2 fields, as in the first row", "t.csv:2:1"},
      {"a;b\n1;2\n", false, true, "b", {}, "expected one of: 'a;b'", "t.csv:1:1"},
      {std::string("\x01\xff,\x00\n\x00\n", 7), false, true, "b", {}, "found row 1 with 1 field", "t.csv:2:1"},
      {"a,b\n1,\"\x01\"\n", false, true, "b", {}, "found '\\x01'", "t.csv:2:3"},
  };
  REQUIRE(cases.size() >= 20);
  for (const Bad& bad : cases) {
    INFO("input: " << bad.text);
    CsvOptions opt;
    opt.whitespace_delimited = bad.whitespace;
    opt.header = bad.header;
    try {
      table_to_dataset(parse_csv(bad.text, "t.csv", opt), bad.target, bad.features, "t");
      FAIL("no error");
    } catch (const InputError& e) {
      CHECK_THAT(e.message(), Catch::Contains(bad.fragment));
      CHECK(e.where() == bad.where);
    }
  }
}

TEST_CASE("CSV: random byte soup parses or fails with InputError, rows stay rectangular", "[data]") {
  std::mt19937_64 rng(20240611);
  const std::string alphabet = ",\"\n\r \ta1.";
  int parsed = 0;
  for (int trial = 0; trial < 3000; ++trial) {
    std::string text(rng() % 24, ' ');
    for (char& c : text) c = alphabet[rng() % alphabet.size()];
    CsvOptions opt;
    opt.whitespace_delimited = trial % 2 == 1;
    opt.header = trial % 3 != 0;
    try {
      const CsvTable t = parse_csv(text, "soup.csv", opt);
      ++parsed;
      REQUIRE(t.rows.size() == t.row_line.size());
      for (std::size_t i = 0; i < t.rows.size(); ++i) {
        REQUIRE(t.rows[i].size() == t.header.size());
        REQUIRE(t.cell_start[i].size() == t.header.size());
        if (i > 0) REQUIRE(t.row_line[i] > t.row_line[i - 1]);
      }
    } catch (const InputError& e) {
      REQUIRE(e.where().rfind("soup.csv:", 0) == 0);
    }
  }
  CHECK(parsed > 100);
}

TEST_CASE("IDX: gzip images and labels written by the test", "[data]") {
  const std::string pixels = {0, 51, char(255), 102, 10, 20, 30, 40, char(200), 0, 0, 1};
  const std::string images = temp_path("imgs-idx3-ubyte.gz"), labels = temp_path("lbls-idx1-ubyte.gz");
  write_gzip(images, idx_bytes(0x00000803, {3, 2, 2}, pixels));
  write_gzip(labels, idx_bytes(0x00000801, {3}, std::string{7, 0, 9}));
  const Dataset d = load_idx_dataset(images, labels, "tiny");
  REQUIRE(d.rows() == 3);
  REQUIRE(d.cols() == 4);
  CHECK(d.X(0, 2) == 1.0);
  CHECK(d.X(0, 1) == 51.0 / 255.0);
  CHECK(d.X(2, 0) == 200.0 / 255.0);
  CHECK(d.y == (Vec(3) << 7, 0, 9).finished());
  CHECK(d.features[3] == "px_1_1");
  CHECK(d.sha256 == sha256_hex(read_raw_file(images) + read_raw_file(labels)));
  const Dataset two = load_idx_dataset(images, labels, "tiny", 1.0, 2);
  CHECK(two.rows() == 2);
  CHECK(two.X(1, 3) == 40.0);
  // Plain (uncompressed) IDX files read the same.
  write_file(temp_path("plain-idx1"), idx_bytes(0x00000801, {3}, std::string{7, 0, 9}));
  CHECK(load_idx_dataset(images, temp_path("plain-idx1"), "tiny").y == d.y);
}

TEST_CASE("IDX: malformed files are InputErrors with byte offsets", "[data]") {
  const std::string images = temp_path("ok-idx3.gz");
  write_gzip(images, idx_bytes(0x00000803, {2, 1, 2}, std::string(4, '\x05')));
  auto labels_with = [&](const std::string& bytes) {
    const std::string path = temp_path("bad-idx1.gz");
    write_gzip(path, bytes);
    return path;
  };
  auto message_for = [&](const std::string& labels) -> std::string {
    try {
      load_idx_dataset(images, labels, "bad");
    } catch (const InputError& e) {
      return e.what();
    }
    return "no error";
  };
  CHECK_THAT(message_for(labels_with(idx_bytes(0x00000803, {2}, "ab"))),
             Catch::Contains(":byte 0: found magic number 0x00000803; expected 0x00000801"));
  CHECK_THAT(message_for(labels_with(idx_bytes(0x00000801, {5}, "ab"))),
             Catch::Contains("after 2 data bytes; expected 5"));
  CHECK_THAT(message_for(labels_with(idx_bytes(0x00000801, {3}, "abc"))),
             Catch::Contains("found 3 labels; expected 2, one per image"));
  CHECK_THAT(message_for(labels_with(idx_bytes(0x00000801, {2}, "abcd"))),
             Catch::Contains("found 2 bytes after the data"));
  CHECK_THAT(message_for(labels_with(std::string("\0\0", 2))), Catch::Contains("inside the 4-byte magic"));
  CHECK_THAT(message_for(labels_with(std::string("\0\0\x08\x01\0", 5))), Catch::Contains("inside the dimensions"));
  write_file(temp_path("not-gzip.gz"), idx_bytes(0x00000801, {2}, "ab"));
  CHECK_THAT(message_for(temp_path("not-gzip.gz")), Catch::Contains("not gzip"));
  std::string cut = read_raw_file(labels_with(idx_bytes(0x00000801, {2000}, std::string(2000, 'x'))));
  write_file(temp_path("cut.gz"), cut.substr(0, cut.size() / 2));
  CHECK_THAT(message_for(temp_path("cut.gz")), Catch::Contains("truncated"));
  CHECK_THAT(message_for(temp_path("missing.gz")), Catch::Contains("cannot read"));
}
