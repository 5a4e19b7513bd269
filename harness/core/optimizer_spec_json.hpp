// JSON form of an OptimizerSpec (as stored in results.json, "optimizer"): every field is
// written, the schedule as a nested object; numbers that are not finite become null.
#pragma once
#include <string>

#include <nlohmann/json.hpp>

#include "stepgate/core/optimizer_spec.hpp"

namespace stepgate {

/// {"label","kind","beta","beta1","beta2","rho","eps","batch_size","sampling",
///  "schedule":{"kind","factor","every","decay","floor","warmup"}}; the kind's parameters only,
/// and "sampling" only with batch_size > 0.
nlohmann::json to_json(const OptimizerSpec& spec);

/// Inverse of to_json. Every field above is mandatory, except "sampling" (absent: epochs, what
/// versions before it did); unknown extra fields are ignored.
/// Throws InputError(path + "#" + pointer of the bad field, "expected ..., found ..."); `at` is
/// the pointer of `j` inside the file. Does not validate() ranges: a stored spec is data.
/// Reads an optimizer entry of results.json; `pointer` is where `j` lies in the file `path`
/// (for messages). InputError at the field that is wrong.
OptimizerSpec optimizer_spec_from_json(const nlohmann::json& j, const std::string& path,
                                       const std::string& pointer = "");

}  // namespace stepgate
