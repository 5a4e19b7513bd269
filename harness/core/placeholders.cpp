#include "stepgate/core/placeholders.hpp"

#include <stdexcept>

#include <fmt/format.h>

namespace stepgate {

std::string expand_placeholders(std::string_view arg,
                                const std::function<std::optional<std::string>(std::string_view)>& lookup) {
  std::string out;
  for (std::size_t i = 0; i < arg.size(); ++i) {
    const char c = arg[i];
    if ((c == '{' || c == '}') && i + 1 < arg.size() && arg[i + 1] == c) {
      out += c;
      ++i;
      continue;
    }
    if (c != '{') {
      out += c;
      continue;
    }
    const auto end = arg.find('}', i);
    if (end == std::string_view::npos)
      throw std::invalid_argument(fmt::format("'{{' without a closing '}}' in \"{}\"", arg));
    const std::string_view name = arg.substr(i + 1, end - i - 1);
    const std::optional<std::string> value = lookup(name);
    if (!value)
      throw std::invalid_argument(fmt::format("unknown placeholder {{{}}} in \"{}\"; expected one of {{rate}}, "
                                              "{{seed}}, {{budget}}, {{optimizer}}, {{optimizer.kind}}, "
                                              "{{optimizer.FIELD}}, {{schedule.kind}}, {{schedule.FIELD}}, {{scaling}}, "
                                              "{{case}}, {{out}}",
                                              name, arg));
    out += *value;
    i = end;
  }
  return out;
}

std::string exact_number(double v) { return fmt::format("{}", v); }

std::optional<std::string> placeholder_value(std::string_view name, const PlaceholderValues& v) {
  if (name == "rate") return v.rate;
  if (name == "seed") return v.seed;
  if (name == "budget") return v.budget;
  if (name == "optimizer") return v.optimizer;
  if (name == "scaling") return v.scaling;
  if (name == "case") return v.case_id;
  if (name == "out") return v.out;
  if (v.fields && (name.starts_with("optimizer.") || name.starts_with("schedule."))) {
    const auto it = v.fields->find(std::string(name));
    if (it != v.fields->end()) return it->second;
  }
  return std::nullopt;
}

bool uses_placeholder(const std::vector<std::string>& argv, std::string_view name) {
  bool used = false;
  for (const std::string& arg : argv) {
    try {
      expand_placeholders(arg, [&](std::string_view n) -> std::optional<std::string> {
        used = used || n == name;
        return std::string();
      });
    } catch (const std::invalid_argument&) {
      // validation reports it; here it only does not count
    }
  }
  return used;
}

}  // namespace stepgate
