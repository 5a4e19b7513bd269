// The parts of command problems: placeholders, the exact text of {rate}, and child processes
// that are stopped as a group and reaped (README, "Gating your own training code").
#include <catch2/catch.hpp>
#include <chrono>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <random>
#include <signal.h>

#include "stepgate/core/error.hpp"
#include "stepgate/core/placeholders.hpp"
#include "stepgate/run/child_process.hpp"

using namespace stepgate;

TEST_CASE("placeholders: {rate} round-trips exactly through its text", "[commands]") {
  std::mt19937_64 rng(20261202);
  for (int i = 0; i < 100000; ++i) {
    double x;
    const std::uint64_t bits = rng();
    std::memcpy(&x, &bits, sizeof x);
    if (!std::isfinite(x)) continue;
    const std::string text = exact_number(x);
    INFO(text);
    REQUIRE(std::strtod(text.c_str(), nullptr) == x);
  }
  for (double x : {0.1, 0.30000000000000004, 1e-300, 5e-324, 1.7976931348623157e308, 2.0 / 3.0, 1e-4, 17.68})
    CHECK(std::strtod(exact_number(x).c_str(), nullptr) == x);
  CHECK(exact_number(0.1) == "0.1");  // the shortest text, not 0.10000000000000001
  CHECK(exact_number(1e-4) == "0.0001");
}

TEST_CASE("placeholders: whole arguments, inside arguments, literal braces, errors", "[commands]") {
  auto lookup = [](std::string_view n) -> std::optional<std::string> {
    if (n == "rate") return "0.05";
    if (n == "optimizer.beta") return "0.9";
    return std::nullopt;
  };
  CHECK(expand_placeholders("{rate}", lookup) == "0.05");
  CHECK(expand_placeholders("--lr={rate},beta={optimizer.beta}", lookup) == "--lr=0.05,beta=0.9");
  CHECK(expand_placeholders("{{rate}}", lookup) == "{rate}");
  CHECK(expand_placeholders("plain", lookup) == "plain");
  CHECK_THROWS_WITH(expand_placeholders("--lr {learning_rate}", lookup), Catch::Contains("{learning_rate}"));
  CHECK_THROWS_WITH(expand_placeholders("{rate", lookup), Catch::Contains("without a closing"));
}

TEST_CASE("child process: SIGTERM ignored and a grandchild in the group, both gone after stop", "[commands]") {
  const std::string script = std::string(STEPGATE_SOURCE_DIR) + "/tests/e2e/trainers/ignore_term.py";
  if (!std::filesystem::exists("/usr/bin/python3")) {
    WARN("python3 unavailable");
    return;
  }
  ChildOptions o;
  o.argv = {"/usr/bin/python3", script, "--lr", "1", "--seed", "1", "--steps", "10"};
  ChildProcess child(o);
  long grandchild = 0;
  std::vector<std::string> lines;
  const auto until = std::chrono::steady_clock::now() + std::chrono::seconds(20);
  while (grandchild == 0 && std::chrono::steady_clock::now() < until) {
    child.read_lines(lines, std::chrono::milliseconds(50));
    for (const std::string& l : lines)
      if (l.rfind("child pid ", 0) == 0) grandchild = std::stol(l.substr(10));
  }
  REQUIRE(grandchild > 0);
  const pid_t pid = child.pid();
  const auto t0 = std::chrono::steady_clock::now();
  const ChildExit ex = child.stop(0.3);
  const double took = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  CHECK(ex.signalled);
  CHECK(ex.code == SIGKILL);  // SIGTERM was ignored, so the grace period ran out
  CHECK(took < 2.0);
  // Neither is left, not even as a zombie: the child was reaped, the grandchild (reparented to
  // this process, a child subreaper) too.
  CHECK_FALSE(std::filesystem::exists("/proc/" + std::to_string(pid)));
  CHECK_FALSE(std::filesystem::exists("/proc/" + std::to_string(grandchild)));
}

TEST_CASE("child process: exit status, stderr tail, a program that does not exist", "[commands]") {
  ChildOptions o;
  o.argv = {"/bin/sh", "-c", "echo one; echo 'it broke' >&2; exit 3"};
  ChildProcess child(o);
  std::vector<std::string> lines;
  while (child.read_lines(lines, std::chrono::milliseconds(100))) {
  }
  const ChildExit ex = child.wait();
  CHECK_FALSE(ex.signalled);
  CHECK(ex.code == 3);
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] == "one");
  CHECK(child.stderr_tail() == "it broke");
  // A program that cannot be started at all is a ToolError naming it (exit 3 in the CLI).
  ChildOptions missing;
  missing.argv = {"/no/such/trainer"};
  CHECK_THROWS_WITH(ChildProcess(missing), Catch::Contains("cannot execute '/no/such/trainer'") &&
                                               Catch::Contains("No such file"));
  ChildOptions elsewhere;
  elsewhere.argv = {"/bin/true"};
  elsewhere.cwd = "/no/such/folder";
  CHECK_THROWS_WITH(ChildProcess(elsewhere), Catch::Contains("cannot enter the working directory"));
}
