#include "stepgate/cli/options.hpp"

#include <iostream>

#include "stepgate/core/error.hpp"

namespace stepgate::cli {

Parsed parse_options(const std::vector<std::string>& args, po::options_description options,
                     const po::positional_options_description& positional, const std::string& usage) {
  options.add_options()("help,h", "show this help");
  Parsed p;
  try {
    po::store(po::command_line_parser(args).options(options).positional(positional).run(), p.vm);
    if (p.vm.count("help")) {
      std::cout << usage << "\n\n" << options << "\n";
      p.help = true;
      return p;
    }
    po::notify(p.vm);
  } catch (const po::error& e) {
    throw InputError("command line", std::string(e.what()) + "\nusage: " + usage);
  }
  return p;
}

}  // namespace stepgate::cli
