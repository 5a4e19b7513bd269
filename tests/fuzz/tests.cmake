# libFuzzer targets for the readers of untrusted input (tests/fuzz/README.md): built only with
# -DSTEPGATE_FUZZ=ON and clang, and meant with -DSTEPGATE_SANITIZE=ON (scripts/fuzz does both).
# Each target is also a test that runs its seed corpus once, so a fixed finding stays fixed.
option(STEPGATE_FUZZ "Build the libFuzzer targets in tests/fuzz (clang only)" OFF)
if(STEPGATE_FUZZ)
  if(NOT CMAKE_CXX_COMPILER_ID STREQUAL "Clang")
    message(WARNING "STEPGATE_FUZZ needs clang (libFuzzer); the fuzz targets are not built with "
                    "${CMAKE_CXX_COMPILER_ID}")
  else()
    if(NOT STEPGATE_SANITIZE)
      message(WARNING "STEPGATE_FUZZ without STEPGATE_SANITIZE finds crashes only, not memory errors or UB")
    endif()
    # Coverage instrumentation in the library, so the fuzzer sees the paths inside the readers;
    # the fuzzer's main and runtime are linked into the targets only.
    target_compile_options(stepgate_lib PRIVATE -fsanitize=fuzzer-no-link)
    foreach(target suite csv idx results command)
      set(name fuzz_${target})
      add_executable(${name} ${CMAKE_CURRENT_LIST_DIR}/${name}.cpp)
      target_link_libraries(${name} PRIVATE stepgate_lib)
      target_compile_options(${name} PRIVATE ${STEPGATE_WARNINGS} -fsanitize=fuzzer)
      target_link_options(${name} PRIVATE -fsanitize=fuzzer)
      target_compile_definitions(${name} PRIVATE STEPGATE_SOURCE_DIR="${PROJECT_SOURCE_DIR}")
      # -runs=0: execute every seed once, no fuzzing.
      add_test(NAME "fuzz: ${name} runs its seed corpus"
               COMMAND ${name} -runs=0 ${CMAKE_CURRENT_LIST_DIR}/corpus/${name})
      set_tests_properties("fuzz: ${name} runs its seed corpus" PROPERTIES LABELS fuzz TIMEOUT 300)
    endforeach()
  endif()
endif()
