# The hostile-input catalogue: the stepgate binary as a black box against a table of bad inputs
# (exit code, where the message points, no output left behind). Debian's /usr/bin/python3 only:
# the script uses nothing outside the standard library.
if(EXISTS /usr/bin/python3)
  add_test(NAME "catalogue: hostile inputs are refused with exit 2, a place and no outputs"
           COMMAND /usr/bin/python3 ${CMAKE_CURRENT_LIST_DIR}/catalogue.py
                   $<TARGET_FILE:stepgate> ${PROJECT_SOURCE_DIR})
  set_tests_properties("catalogue: hostile inputs are refused with exit 2, a place and no outputs"
                       PROPERTIES LABELS catalogue TIMEOUT 900)
endif()

# Every string of a results file, given markup, terminal escapes and control bytes, is either
# refused with its pointer or written inert into HTML, Markdown, JUnit XML and the terminal.
if(EXISTS /usr/bin/python3)
  add_test(NAME "catalogue: hostile strings in results are escaped for every output format"
           COMMAND /usr/bin/python3 ${CMAKE_CURRENT_LIST_DIR}/escaping.py
                   $<TARGET_FILE:stepgate> ${PROJECT_SOURCE_DIR})
  set_tests_properties("catalogue: hostile strings in results are escaped for every output format"
                       PROPERTIES LABELS catalogue TIMEOUT 300)
endif()
