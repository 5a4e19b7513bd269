# find_package(stepgate) for projects that link the library: defines stepgate::stepgate.
# The public dependencies (Eigen, fmt, nlohmann-json) are in the headers; the private ones
# (OpenSSL, zlib, oneTBB, pugixml) are needed to link the static library.
include(CMakeFindDependencyMacro)
find_dependency(Eigen3 3.4 NO_MODULE)
find_dependency(fmt)
find_dependency(nlohmann_json 3)
find_dependency(OpenSSL)
find_dependency(ZLIB)
find_dependency(TBB)
find_dependency(pugixml)
include("${CMAKE_CURRENT_LIST_DIR}/stepgateTargets.cmake")
