# c2path-view without a display: exit 2 and exactly one line on stderr.
# VIEW is c2path-view, or c2path with ARG=view (which starts c2path-view).
execute_process(COMMAND ${CMAKE_COMMAND} -E env --unset=DISPLAY --unset=WAYLAND_DISPLAY ${VIEW} ${ARG} ${SCENE}
                RESULT_VARIABLE rc OUTPUT_VARIABLE out ERROR_VARIABLE err TIMEOUT 60)
if(NOT rc EQUAL 2)
  message(FATAL_ERROR "exit ${rc}, expected 2\nstdout: ${out}\nstderr: ${err}")
endif()
string(REGEX MATCHALL "\n" newlines "${err}")
list(LENGTH newlines n)
if(NOT n EQUAL 1 OR NOT err MATCHES "^c2path-view: no display")
  message(FATAL_ERROR "expected one line saying there is no display, got:\n${err}")
endif()
