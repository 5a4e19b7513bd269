# The hostile-input catalogue: the stepgate binary as a black box against a table of bad inputs
# (exit code, where the message points, no output left behind), and the escaping test: every
# string of a results file, given markup, terminal escapes and control bytes, is either refused
# with its pointer or written inert into HTML, Markdown, JUnit XML and the terminal. Debian's
# /usr/bin/python3 only: the scripts use nothing outside the standard library.
if(EXISTS /usr/bin/python3)
  foreach(entry "catalogue.py|hostile inputs are refused with exit 2, a place and no outputs|900"
                "escaping.py|hostile strings in results are escaped for every output format|300")
    string(REPLACE "|" ";" parts "${entry}")
    list(GET parts 0 script)
    list(GET parts 1 title)
    list(GET parts 2 timeout)
    add_test(NAME "catalogue: ${title}"
             COMMAND /usr/bin/python3 ${CMAKE_CURRENT_LIST_DIR}/${script}
                     $<TARGET_FILE:stepgate> ${PROJECT_SOURCE_DIR})
    set_tests_properties("catalogue: ${title}" PROPERTIES LABELS catalogue TIMEOUT ${timeout})
  endforeach()
endif()
