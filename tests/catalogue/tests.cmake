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
