#include "stepgate/cli/options.hpp"

#include <algorithm>
#include <cctype>
#include <iostream>
#include <set>

#include "stepgate/core/error.hpp"

namespace stepgate::cli {

namespace {

// The names behind positional arguments ("suite", "results"): shown as SUITE, RESULTS...
std::set<std::string> positional_names(const po::positional_options_description& positional) {
  std::set<std::string> names;
  const unsigned count = std::min(positional.max_total_count(), 16u);
  for (unsigned i = 0; i < count; ++i) names.insert(positional.name_for_position(i));
  if (positional.max_total_count() > count && count > 0) names.insert(positional.name_for_position(count));
  return names;
}

std::string upper(std::string s) {
  for (char& c : s) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
  return s;
}

// Boost names every option "--NAME", positional ones too; a user never typed --suite.
std::string user_words(std::string message, const std::set<std::string>& positional) {
  for (const std::string& name : positional) {
    const std::string required = "the option '--" + name + "' is required but missing";
    if (const auto at = message.find(required); at != std::string::npos)
      message.replace(at, required.size(), "missing the argument " + upper(name));
  }
  for (const std::string& name : positional)
    for (const std::string& form : {"'--" + name + "'", "--" + name}) {
      for (std::size_t at = message.find(form); at != std::string::npos; at = message.find(form, at))
        message.replace(at, form.size(), "the argument " + upper(name)), at += name.size();
    }
  return message;
}

}  // namespace

Parsed parse_options(const std::vector<std::string>& args, po::options_description options,
                     const po::positional_options_description& positional, const std::string& usage) {
  options.add_options()("help,h", "show this help");
  const std::set<std::string> names = positional_names(positional);
  Parsed p;
  try {
    po::store(po::command_line_parser(args).options(options).positional(positional).run(), p.vm);
    if (p.vm.count("help")) {
      // Help lists the options a user types; the positional arguments are in the usage line.
      // The positional arguments are listed by the word the usage line shows (SUITE), not as
      // Boost's "--suite arg".
      po::options_description visible;
      std::string arguments;
      for (const auto& o : options.options()) {
        if (!names.count(o->long_name())) {
          visible.add(o);
          continue;
        }
        const std::string word = upper(o->long_name()) + (positional.max_total_count() > 1 ? "..." : "");
        arguments += "  " + word + std::string(word.size() < 22 ? 22 - word.size() : 1, ' ') + o->description() + "\n";
      }
      std::cout << usage << "\n\n";
      if (!arguments.empty()) std::cout << "arguments:\n" << arguments << "\n";
      std::cout << visible << "\n";
      p.help = true;
      return p;
    }
    po::notify(p.vm);
  } catch (const po::error& e) {
    throw InputError("command line", user_words(e.what(), names) + "\nusage: " + usage);
  }
  return p;
}

}  // namespace stepgate::cli
