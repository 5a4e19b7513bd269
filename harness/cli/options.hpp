// Boost.Program_options glue shared by the subcommands: parse, turn every option error into an
// InputError (exit 2), and print help.
#pragma once
#include <boost/program_options.hpp>
#include <string>
#include <vector>

namespace stepgate::cli {

namespace po = boost::program_options;

struct Parsed {
  po::variables_map vm;
  bool help = false;
};

/// Parses `args` with the named options and positional arguments; "--help" sets help and
/// prints `usage` and the options. Unknown options and missing values are InputErrors.
Parsed parse_options(const std::vector<std::string>& args, po::options_description options,
                     const po::positional_options_description& positional, const std::string& usage);

}  // namespace stepgate::cli
