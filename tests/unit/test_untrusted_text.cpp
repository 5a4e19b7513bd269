// Text from untrusted files on its way into a parse or a message: the JSON limits every reader
// applies first (NUL bytes, nesting, numbers beyond a double), the quoting of values inside
// messages, the terminal-safe form of a whole message, and the gate tolerances' one table of
// ranges as the results reader applies it.
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <sstream>
#include <string>

#include <nlohmann/json.hpp>

#include "stepgate/core/visible_output.hpp"
#include "stepgate/core/error.hpp"
#include "stepgate/core/gate_tolerances.hpp"
#include "stepgate/core/gate_tolerances_json.hpp"
#include "stepgate/core/json_node.hpp"
#include "stepgate/core/json_text.hpp"
#include "stepgate/core/quote_text.hpp"

using namespace stepgate;

namespace {

std::string limit_error(std::string_view text) {
  try {
    check_json_limits(text, "f.json");
  } catch (const InputError& e) {
    return e.text();
  }
  return "";
}

}  // namespace

TEST_CASE("a NUL byte anywhere in JSON text is refused at its line and column", "[json]") {
  using namespace std::string_literals;
  // nlohmann takes NUL for the end of input: without this check "{}\0junk" would parse as {}.
  const std::string after = "{\"a\": 1}\n\0 junk {{"s;
  CHECK(limit_error(after).rfind("f.json:2:1: found a NUL byte", 0) == 0);
  const std::string inside = "{\"a\": \"x\0y\"}"s;
  CHECK(limit_error(inside).rfind("f.json:1:9: found a NUL byte", 0) == 0);
  CHECK_FALSE(within_json_limits(inside));
  // Written as an escape, a NUL is ordinary string content.
  CHECK(limit_error(R"({"a": "x\u0000y"})").empty());
}

TEST_CASE("nesting deeper than the limit and numbers beyond a double are refused with a place", "[json]") {
  const std::string ok(kMaxJsonDepth, '[');
  CHECK(limit_error(ok + std::string(kMaxJsonDepth, ']')).empty());
  const std::string deep = "\n" + std::string(kMaxJsonDepth + 1, '[');
  CHECK(limit_error(deep).rfind("f.json:2:" + std::to_string(kMaxJsonDepth + 1) + ": found arrays", 0) == 0);
  CHECK(limit_error(R"({"x": 1e400})").rfind("f.json:1:7: found the number 1e400", 0) == 0);
  CHECK(limit_error(R"({"x": -1e308, "y": 1e-400})").empty());  // in range; underflow is fine
  // Brackets and exponents inside strings are text, not structure.
  CHECK(limit_error(R"({"x": "[[[[1e999"})").empty());
}

TEST_CASE("quoted values and messages show control bytes escaped, never raw", "[messages]") {
  using namespace std::string_literals;
  CHECK(quote_text("bowl\0hidden"s) == "'bowl\\x00hidden'");
  CHECK(quote_text(std::string(50, 'a'), 10) == "'aaaaaaaaaa'...");
  // The CLI's stream filter keeps line feeds, tabs and UTF-8, and shows ESC, CR, NUL and DEL.
  std::ostringstream sink;
  VisibleBuf filter(sink.rdbuf());
  std::ostream shown(&filter);
  shown << "a\tb\nc caf\xc3\xa9 " << ("\x1b[31mred\r\x7f"s + '\0') << 'x' << '\x01';
  shown.flush();
  CHECK(sink.str() == "a\tb\nc caf\xc3\xa9 \\x1b[31mred\\x0d\\x7f\\x00x\\x01");
  // InputError::text keeps what follows a NUL, where what() (a C string) stops.
  const InputError e("f.json#/name", "found 'a\0b'"s);
  CHECK(e.text() == "f.json#/name: found 'a\0b'"s);
  CHECK(std::string(e.what()) == "f.json#/name: found 'a");
}

TEST_CASE("gate tolerances read from results obey the same ranges as in a suite", "[gate]") {
  auto read = [](const nlohmann::json& gate) {
    const nlohmann::json doc = {{"gate", gate}};
    return gate_tolerances_from_json(JsonField(doc, "r.json")["gate"]);
  };
  auto error_of = [&](const nlohmann::json& gate) {
    try {
      read(gate);
    } catch (const InputError& e) {
      return e.text();
    }
    return std::string();
  };
  // Every table key round-trips through to_json.
  GateTolerances g;
  g.edge_moved = 0.1;
  g.theory_slack = 0.5;
  g.case_added = Severity::fail;
  const GateTolerances back = read(to_json(g));
  CHECK(back.edge_moved == 0.1);
  CHECK(back.theory_slack == 0.5);
  CHECK(back.case_added == Severity::fail);
  CHECK(to_json(g).size() == gate_keys().size());

  CHECK(error_of({{"edge_moved", nullptr}}) == "r.json#/gate/edge_moved: expected a number >= 0, found null");
  CHECK(error_of({{"edge_moved", -1}}).rfind("r.json#/gate/edge_moved: expected a number >= 0", 0) == 0);
  CHECK(error_of({{"pinned_headroom", 0.5}}).rfind("r.json#/gate/pinned_headroom: expected a number >= 1", 0) == 0);
  CHECK(error_of({{"theory_slack", 2}}).rfind("r.json#/gate/theory_slack: expected a number in [0, 1]", 0) == 0);
  CHECK(error_of({{"min_lre", "6"}}).rfind("r.json#/gate/min_lre:", 0) == 0);
  CHECK(error_of({{"case_added", "maybe"}}).rfind("r.json#/gate/case_added:", 0) == 0);
  // The bounds themselves are admitted.
  CHECK(error_of({{"min_lre", 17}, {"theory_slack", 0}, {"pinned_headroom", 1}}).empty());
}
