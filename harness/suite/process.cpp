// The part of a suite that starts a program: `command` of a command problem and `produce` of a
// data set share argv, cwd, env and timeout, read here once.
#include <filesystem>

#include <fmt/format.h>

#include "stepgate/suite/suite_sections.hpp"

namespace stepgate::suite_detail {

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
}

}  // namespace stepgate::suite_detail
