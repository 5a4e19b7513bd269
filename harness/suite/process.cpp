// The part of a suite that starts a program: `command` of a command problem and `produce` of a
// data set share argv, cwd, env and timeout, read here once.
#include <unistd.h>

#include <cstdlib>
#include <filesystem>

#include <fmt/format.h>

#include "stepgate/core/quote_text.hpp"
#include "stepgate/suite/suite_sections.hpp"

namespace stepgate::suite_detail {

namespace {

// The program must exist now: found at validation (exit 2, with its pointer), not as a failure
// of every run after the sweep. As execvp finds it: a name with '/' from the working directory
// the process gets, any other name on PATH. A name with a placeholder is checked when it runs.
void check_program(const Node& at, const CommandSpec& spec, std::string_view role) {
  const std::string& program = spec.argv.front();
  if (program.find('{') != std::string::npos) return;
  const auto runnable = [](const std::filesystem::path& p) {
    std::error_code ec;
    return std::filesystem::is_regular_file(p, ec) && ::access(p.c_str(), X_OK) == 0;
  };
  if (program.find('/') != std::string::npos) {
    const std::filesystem::path p = std::filesystem::path(program).is_absolute() ? std::filesystem::path(program)
                                                                                  : std::filesystem::path(spec.cwd) / program;
    if (!runnable(p))
      at.fail(fmt::format("found the {} program {}, which is not an executable file ({}); expected a program that "
                          "exists", role, quote_text(program, 200),
                          std::filesystem::exists(p) ? "not executable or not a file" : "no such file: " + p.string()));
    return;
  }
  const char* path = std::getenv("PATH");
  std::string dirs = path ? path : "/usr/local/bin:/usr/bin:/bin";
  for (std::size_t at_dir = 0; at_dir <= dirs.size();) {
    const std::size_t end = std::min(dirs.find(':', at_dir), dirs.size());
    const std::string dir = dirs.substr(at_dir, end - at_dir);
    if (runnable(std::filesystem::path(dir.empty() ? "." : dir) / program)) return;
    at_dir = end + 1;
  }
  at.fail(fmt::format("found the {} program {}, which is not on PATH; expected a program that exists (give its path, "
                      "or install it)", role, quote_text(program, 200)));
}

}  // namespace

void read_process(const ObjectNode& o, CommandSpec& spec, std::string_view role) {
  const Node argv = o.require("argv");
  spec.argv = argv.strings();
  if (spec.argv.empty() || spec.argv.front().empty())
    argv.fail("found an empty argv; expected [program, arguments...] (never a shell string)");
  const std::filesystem::path suite_dir = std::filesystem::path(o.node().file()).parent_path();
  spec.cwd = suite_dir.empty() ? "." : suite_dir.string();
  if (auto n = o.find("cwd")) {
    spec.cwd = resolve_path(o.node(), n->string());
    if (!std::filesystem::is_directory(spec.cwd))
      n->fail(fmt::format("found \"{}\", which is not a folder (relative to the suite file: {}); expected the "
                          "working directory of the {}",
                          n->string(), spec.cwd, role));
  }
  if (auto n = o.find("env")) {
    if (!n->json().is_object()) n->expected("an object of environment variables (name -> text)");
    for (const auto& item : n->json().items()) {
      const Node v = n->member(item.key());
      if (!v.json().is_string()) v.expected("a string");
      if (item.key().empty() || item.key().find('=') != std::string::npos)
        v.fail(fmt::format("found variable name \"{}\"; expected a name without '='", item.key()));
      spec.env[item.key()] = v.string();
    }
  }
  if (auto n = o.find("timeout"))
    spec.timeout = n->number_if([](double v) { return v > 0 && v <= 86400 * 7; }, "seconds > 0 (at most a week)");
  // A NUL would end the string where the system reads it: the program would get another
  // argument or variable than the suite says.
  for (std::size_t i = 0; i < spec.argv.size(); ++i)
    if (spec.argv[i].find('\0') != std::string::npos)
      argv.element(i).fail("found a NUL character (\\u0000), which cannot be passed to a program; expected text without it");
  for (const auto& [k, v] : spec.env)
    if (k.find('\0') != std::string::npos || v.find('\0') != std::string::npos)
      o.require("env").member(k).fail("found a NUL character (\\u0000) in a variable, which cannot be passed to a "
                                      "program; expected text without it");
  check_program(argv.element(0), spec, role);
}

}  // namespace stepgate::suite_detail
