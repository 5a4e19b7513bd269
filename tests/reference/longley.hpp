// NIST StRD Longley data and certified values, shared by the reference tests.
#pragma once
#include "stepgate/analysis/reference.hpp"
#include "stepgate/core/dataset.hpp"
#include "stepgate/data/csv.hpp"

namespace stepgate::testdata {

/// suites/data/longley.csv: a byte copy of statsmodels 0.13.5's longley.csv (Debian
/// python3-statsmodels), which holds NIST StRD's Longley (1967) data; public domain.
inline Dataset longley() {
  return load_csv_dataset(STEPGATE_SOURCE_DIR "/suites/data/longley.csv", CsvOptions{}, "TOTEMP",
                          {"GNPDEFL", "GNP", "UNEMP", "ARMED", "POP", "YEAR"}, "longley");
}

/// NIST StRD, Linear Least Squares Regression, Longley: certified parameter values (15
/// significant digits); the same numbers are in statsmodels 0.13.5,
/// regression/tests/results/results_regression.py, class Longley.
inline ReferenceValues longley_certified() {
  ReferenceValues r;
  r.source = "NIST StRD Longley, certified values";
  r.names = {"GNPDEFL", "GNP", "UNEMP", "ARMED", "POP", "YEAR", "intercept"};
  r.values.resize(7);
  r.values << 15.0618722713733, -0.358191792925910e-01, -2.02022980381683, -1.03322686717359,
      -0.511041056535807e-01, 1829.15146461355, -3482258.63459582;
  r.digits = 15;
  return r;
}

}  // namespace stepgate::testdata
