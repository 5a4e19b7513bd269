#include "stepgate/core/json_fields.hpp"

#include <cmath>

#include "stepgate/core/error.hpp"

namespace stepgate {

using nlohmann::json;

json finite_or_null(double v) { return std::isfinite(v) ? json(v) : json(nullptr); }

namespace {

// "string \"abc\"", "number 1.5", "null", "object", ... : enough to recognise the bad value.
std::string describe(const json* j) {
  if (j == nullptr) return "no such field";
  if (j->is_structured() || j->is_null()) return j->type_name();
  std::string text = j->dump(-1, ' ', false, json::error_handler_t::replace);
  if (text.size() > 40) text = text.substr(0, 37) + "...";
  return std::string(j->type_name()) + " " + text;
}

}  // namespace

JsonField::JsonField(const json& j, std::string path, json::json_pointer at)
    : JsonField(&j, std::move(path), std::move(at)) {}

void JsonField::fail(std::string_view expected) const {
  throw InputError(where(), "expected " + std::string(expected) + ", found " + describe(json_));
}

const json& JsonField::value() const {
  if (json_ == nullptr) fail("a value");
  return *json_;
}

bool JsonField::has(const std::string& key) const {
  return json_ != nullptr && json_->is_object() && json_->contains(key);
}

JsonField JsonField::operator[](const std::string& key) const {
  if (json_ == nullptr || !json_->is_object()) fail("an object");
  const auto it = json_->find(key);
  return JsonField(it == json_->end() ? nullptr : &*it, path_, at_ / key);
}

std::size_t JsonField::array_size() const {
  if (json_ == nullptr || !json_->is_array()) fail("an array");
  return json_->size();
}

JsonField JsonField::operator[](std::size_t i) const {
  const std::size_t n = array_size();
  return JsonField(i < n ? &(*json_)[i] : nullptr, path_, at_ / i);
}

double JsonField::number_or_missing() const {
  const nlohmann::json& j = value();
  if (j.is_null()) return std::nan("");
  if (!j.is_number()) fail("a number or null");
  return j.get<double>();
}

std::string JsonField::string() const {
  const nlohmann::json& j = value();
  if (!j.is_string()) fail("a string");
  return j.get<std::string>();
}

std::string JsonField::sha256() const {
  std::string s = string();
  const bool hex = s.size() == 64 && s.find_first_not_of("0123456789abcdef") == std::string::npos;
  if (!s.empty() && !hex) fail("a SHA-256 digest (64 lower-case hex digits) or \"\"");
  return s;
}

}  // namespace stepgate
