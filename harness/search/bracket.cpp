#include "stepgate/search/bracket.hpp"

#include <cmath>
#include <stdexcept>

namespace stepgate {

Bracket narrow_bracket(double lo, double hi, const SectionOptions& opt,
                       const std::function<std::vector<bool>(std::span<const double>)>& is_lower) {
  if (!(lo > 0.0) || !(hi > lo)) throw std::invalid_argument("a bracket needs 0 < lo < hi");
  if (!(opt.precision > 0.0) || opt.lanes < 1) throw std::invalid_argument("bad section options");
  Bracket b{lo, hi, 0, 0};
  std::vector<double> rates(static_cast<std::size_t>(opt.lanes));
  while (b.hi / b.lo > 1.0 + opt.precision && b.rounds < opt.max_rounds) {
    const double llo = std::log(b.lo), step = (std::log(b.hi) - llo) / (opt.lanes + 1);
    for (int i = 0; i < opt.lanes; ++i) rates[static_cast<std::size_t>(i)] = std::exp(llo + step * (i + 1));
    const std::vector<bool> lower = is_lower(rates);
    if (lower.size() != rates.size()) throw std::logic_error("is_lower answered the wrong number of rates");
    ++b.rounds;
    b.runs += opt.lanes;
    std::size_t first_upper = rates.size();
    for (std::size_t i = 0; i < rates.size(); ++i)
      if (!lower[i]) { first_upper = i; break; }
    const double new_hi = first_upper < rates.size() ? rates[first_upper] : b.hi;
    double new_lo = b.lo;
    for (std::size_t i = 0; i < first_upper; ++i)
      if (lower[i]) new_lo = rates[i];
    b.lo = new_lo;
    b.hi = new_hi;
  }
  return b;
}

}  // namespace stepgate
