// The values of a safe range as a file gives them (results.json, a baseline), checked against
// their ranges and against each other before anything trusts them: a negative edge, a
// precision of 1e308 or a headroom that is not edge / pinned is refused with its JSON pointer.
#pragma once
#include "stepgate/core/json_node.hpp"
#include "stepgate/core/results.hpp"

namespace stepgate {

/// Throws InputError(at + "/KEY", ...) at the first value out of range: rates (floor, edge,
/// the edge bracket, blowup, best_rate, pinned) > 0 and finite, iterations >= 0, precision in
/// (0, 1] as a suite sets it, edge_spread >= 1, floor <= edge, bracket lo <= hi, a ragged top
/// above the edge, and headroom = edge / pinned (to 1e-9) when both are known, else none.
/// Missing values (NaN, written null) pass. `at` is the object holding the keys; the bracket
/// is reported at "edge_bracket", the ragged top at `ragged_key` (results: "ragged_zone",
/// baselines: "ragged_top").
void check_safe_range(const SafeRange& s, const JsonField& at, const char* ragged_key = "ragged_zone");

}  // namespace stepgate
