#include "stepgate/core/json_node.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "stepgate/core/error.hpp"

namespace stepgate {

nlohmann::json finite_or_null(double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr); }

nlohmann::json text_or_null(const std::string& s) { return s.empty() ? nlohmann::json(nullptr) : nlohmann::json(s); }

std::string pointer_token(std::string_view key) {
  std::string token = "/";
  for (char c : key) {
    if (c == '~')
      token += "~0";
    else if (c == '/')
      token += "~1";
    else
      token += c;
  }
  return token;
}

std::size_t edit_distance(std::string_view a, std::string_view b) {
  // Optimal string alignment: three rows of the dynamic programme.
  std::vector<std::size_t> before(b.size() + 1), previous(b.size() + 1), current(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) previous[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    current[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t cost = a[i - 1] == b[j - 1] ? 0 : 1;
      current[j] = std::min({previous[j] + 1, current[j - 1] + 1, previous[j - 1] + cost});
      if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1])
        current[j] = std::min(current[j], before[j - 2] + 1);
    }
    before.swap(previous);
    previous.swap(current);
  }
  return previous[b.size()];
}

std::string did_you_mean(std::string_view word, const std::vector<std::string>& options) {
  std::string lower(word);
  std::transform(lower.begin(), lower.end(), lower.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  const std::string* best = nullptr;
  std::size_t best_distance = std::numeric_limits<std::size_t>::max();
  for (const std::string& option : options) {
    std::size_t d = edit_distance(lower, option);
    const std::size_t common = std::min(lower.size(), option.size());
    const bool prefix = common >= 3 && lower.compare(0, common, option, 0, common) == 0;
    if (d > 2 && !prefix) continue;
    if (prefix) d = std::min<std::size_t>(d, 2);
    if (d < best_distance) best = &option, best_distance = d;
  }
  return best ? " (did you mean '" + *best + "'?)" : "";
}

std::string join(const std::vector<std::string>& words) { return fmt::format("{}", fmt::join(words, ", ")); }

template <class J>
std::string describe_json(const J* value) {
  if (value == nullptr) return "nothing (no such key)";
  if (value->is_array()) return value->empty() ? "an empty array" : "an array";
  if (value->is_object()) return value->empty() ? "an empty object" : "an object";
  std::string text = value->dump(-1, ' ', false, J::error_handler_t::replace);
  if (text.size() > 60) text = text.substr(0, 57) + "...";
  return text;
}

template std::string describe_json(const nlohmann::json*);
template std::string describe_json(const nlohmann::ordered_json*);

template <class J>
void BasicNode<J>::fail(const std::string& message) const {
  throw InputError(where(), message);
}

template <class J>
void BasicNode<J>::expected(std::string_view expected) const {
  fail(fmt::format("expected {}, found {}", expected, describe_json(value_)));
}

template <class J>
const J& BasicNode<J>::json() const {
  if (value_ == nullptr) expected("a value");
  return *value_;
}

template <class J>
bool BasicNode<J>::has(std::string_view key) const {
  return value_ != nullptr && value_->is_object() && value_->contains(key);
}

template <class J>
BasicNode<J> BasicNode<J>::operator[](std::string_view key) const {
  if (value_ == nullptr || !value_->is_object()) expected("an object");
  const auto it = value_->find(key);
  return BasicNode(it == value_->end() ? nullptr : &*it, file_, pointer_ + pointer_token(key));
}

template <class J>
BasicNode<J> BasicNode<J>::member(std::string_view key) const {
  BasicNode m = (*this)[key];
  if (!m.exists()) fail(fmt::format("missing required key '{}'", key));
  return m;
}

template <class J>
std::size_t BasicNode<J>::array_size() const {
  if (value_ == nullptr || !value_->is_array()) expected("an array");
  return value_->size();
}

template <class J>
BasicNode<J> BasicNode<J>::operator[](std::size_t i) const {
  const std::size_t n = array_size();
  return BasicNode(i < n ? &(*value_)[i] : nullptr, file_, fmt::format("{}/{}", pointer_, i));
}

template <class J>
std::vector<BasicNode<J>> BasicNode<J>::elements() const {
  const std::size_t n = array_size();
  std::vector<BasicNode> out;
  out.reserve(n);
  for (std::size_t i = 0; i < n; ++i) out.push_back((*this)[i]);
  return out;
}

template <class J>
double BasicNode<J>::number() const {
  if (!json().is_number()) expected("a number");
  const double v = value_->template get<double>();
  if (!std::isfinite(v)) expected("a finite number");
  return v;
}

template <class J>
double BasicNode<J>::number_or_missing() const {
  const J& j = json();
  if (j.is_null()) return std::nan("");
  if (!j.is_number()) expected("a number or null");
  return j.template get<double>();
}

template <class J>
long BasicNode<J>::integer() const {
  const J& j = json();
  if (j.is_number_unsigned()) {
    const auto u = j.template get<std::uint64_t>();
    if (u > static_cast<std::uint64_t>(std::numeric_limits<long>::max()))
      expected("a whole number below 9.2e18 (this one is too large)");
    return static_cast<long>(u);
  }
  if (j.is_number_integer()) return j.template get<long>();
  const double v = j.is_number() ? j.template get<double>() : std::numeric_limits<double>::quiet_NaN();
  // 1e4 is a whole number written the short way; 2.5 is not.
  if (!(std::isfinite(v) && v == std::floor(v))) expected("a whole number");
  if (std::fabs(v) >= 9.0e15) expected("a whole number below 9e15 (this one is too large)");
  return static_cast<long>(v);
}

template <class J>
std::uint64_t BasicNode<J>::seed() const {
  if (json().is_number_unsigned()) return value_->template get<std::uint64_t>();
  const long v = integer();
  if (v < 0) expected("a whole number >= 0");
  return static_cast<std::uint64_t>(v);
}

template <class J>
bool BasicNode<J>::boolean() const {
  if (!json().is_boolean()) expected("true or false");
  return value_->template get<bool>();
}

template <class J>
const std::string& BasicNode<J>::string() const {
  if (!json().is_string()) expected("a string");
  return value_->template get_ref<const std::string&>();
}

template <class J>
std::string BasicNode<J>::string_or_empty() const {
  const J& j = json();
  if (j.is_null()) return {};
  if (!j.is_string()) expected("a string or null");
  return j.template get<std::string>();
}

template <class J>
std::string BasicNode<J>::sha256() const {
  const J& j = json();
  if (!j.is_null() && !j.is_string()) expected("a SHA-256 digest (64 lower-case hex digits) or null");
  std::string s = string_or_empty();
  const bool hex = s.size() == 64 && s.find_first_not_of("0123456789abcdef") == std::string::npos;
  if (!s.empty() && !hex) expected("a SHA-256 digest (64 lower-case hex digits) or null");
  return s;
}

template <class J>
std::vector<std::string> BasicNode<J>::strings() const {
  if (!json().is_array()) expected("an array of strings");
  std::vector<std::string> out;
  for (const BasicNode& e : elements()) out.push_back(e.string());
  return out;
}

template <class J>
const std::string& BasicNode<J>::choice(const std::vector<std::string>& options, std::string_view what) const {
  if (!json().is_string()) expected(fmt::format("a {} (one of: {})", what, join(options)));
  const std::string& s = string();
  if (std::find(options.begin(), options.end(), s) == options.end())
    fail(fmt::format("unknown {} '{}'{}; expected one of: {}", what, s, did_you_mean(s, options), join(options)));
  return s;
}

template class BasicNode<nlohmann::json>;
template class BasicNode<nlohmann::ordered_json>;

}  // namespace stepgate
