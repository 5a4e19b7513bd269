#include "stepgate/core/gate_tolerances.hpp"

namespace stepgate {

std::string_view to_string(Severity s) {
  switch (s) {
    case Severity::pass: return "pass";
    case Severity::warn: return "warn";
    case Severity::fail: return "fail";
  }
  return "fail";
}

}  // namespace stepgate
