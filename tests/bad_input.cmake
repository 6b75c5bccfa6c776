# One malformed scene of tests/data/bad against the real CLI (issue 6).
#   -DCLI=c2path  -DFILE=tests/data/bad/X.yaml  -DLOC=LINE:COL|LINE:*  -DTEXT=...  -DWORK=scratch dir
# Both `c2path check FILE` and `c2path export FILE -o OUT` must exit 2, print nothing on stdout and
# exactly one line `FILE:LINE:COL: error: MESSAGE` on stderr (FILE as given on the command line,
# LINE:COL as expected, MESSAGE containing TEXT), and write nothing: a new OUT is not created, an
# earlier OUT keeps its bytes, and no temporary file is left beside it. The same file on standard
# input (`c2path check -`) must give the same error attributed to <stdin>.
# With -DLARGE=bytes, FILE is first written here: one byte more than the 64 MiB scene cap; with
# -DLARGE=values, a 16 MB file of more than kMaxYamlValues (8,000,000) YAML values.
cmake_minimum_required(VERSION 3.20)
foreach(v CLI FILE LOC TEXT WORK)
  if(NOT DEFINED ${v})
    message(FATAL_ERROR "bad_input.cmake: -D${v}=... is required")
  endif()
endforeach()

file(REMOVE_RECURSE ${WORK})
file(MAKE_DIRECTORY ${WORK}/out)
if(LARGE STREQUAL "bytes")
  string(REPEAT "# padding to make the file larger than the scene size cap.........\n" 64 block)  # 4 KiB
  string(REPEAT "${block}" 256 block)  # 1 MiB
  file(WRITE ${FILE} "")
  foreach(i RANGE 1 64)
    file(APPEND ${FILE} "${block}")
  endforeach()
  file(APPEND ${FILE} "x")
elseif(LARGE STREQUAL "values")
  # 8,000,000 numbers in one flow list after 'format' and its value: 2 values beyond the cap.
  string(REPEAT "1," 1000 block)  # 1,000 values
  string(REPEAT "${block}" 1000 block)  # 1,000,000 values
  file(WRITE ${FILE} "format: 1\nname: [")
  foreach(i RANGE 1 8)
    file(APPEND ${FILE} "${block}")
  endforeach()
  file(APPEND ${FILE} "1]\n")
elseif(LARGE)
  message(FATAL_ERROR "LARGE must be bytes or values")
endif()
get_filename_component(dir ${FILE} DIRECTORY)
get_filename_component(name ${FILE} NAME)

string(REPLACE ":" ";" loc_parts "${LOC}")
list(GET loc_parts 0 want_line)
list(GET loc_parts 1 want_col)

function(expect_error what shown rc out err)
  if(NOT rc EQUAL 2)
    message(FATAL_ERROR "${what}: exit ${rc}, expected 2\nstdout: ${out}\nstderr: ${err}")
  endif()
  if(NOT out STREQUAL "")
    message(FATAL_ERROR "${what}: printed on stdout for bad input:\n${out}")
  endif()
  string(REGEX MATCHALL "\n" newlines "${err}")
  list(LENGTH newlines n)
  if(NOT n EQUAL 1 OR NOT err MATCHES "\n$")
    message(FATAL_ERROR "${what}: stderr must be exactly one line, got ${n} newline(s):\n${err}")
  endif()
  string(REGEX REPLACE "([][.*+?^$()|\\\\])" "\\\\\\1" shown_re "${shown}")
  if(NOT err MATCHES "^${shown_re}:([0-9]+):([0-9]+): error: ([^\n]+)\n$")
    message(FATAL_ERROR "${what}: stderr does not read '${shown}:LINE:COL: error: MESSAGE':\n${err}")
  endif()
  set(line ${CMAKE_MATCH_1})
  set(col ${CMAKE_MATCH_2})
  set(msg "${CMAKE_MATCH_3}")
  if(NOT line EQUAL want_line OR (NOT want_col STREQUAL "*" AND NOT col EQUAL want_col))
    message(FATAL_ERROR "${what}: error at ${line}:${col}, expected ${LOC}:\n${err}")
  endif()
  string(FIND "${msg}" "${TEXT}" at)
  if(at LESS 0)
    message(FATAL_ERROR "${what}: message lacks '${TEXT}':\n${err}")
  endif()
endfunction()

# check, run beside the file so that the message names it exactly as given
execute_process(COMMAND ${CLI} check ${name} WORKING_DIRECTORY ${dir}
                RESULT_VARIABLE rc OUTPUT_VARIABLE out ERROR_VARIABLE err)
expect_error("check ${name}" "${name}" "${rc}" "${out}" "${err}")

# the same bytes on standard input
execute_process(COMMAND ${CLI} check - INPUT_FILE ${FILE}
                RESULT_VARIABLE rc OUTPUT_VARIABLE out ERROR_VARIABLE err)
expect_error("check - < ${name}" "<stdin>" "${rc}" "${out}" "${err}")

# export to a new file: nothing created
execute_process(COMMAND ${CLI} export ${name} -o ${WORK}/out/new.csv WORKING_DIRECTORY ${dir}
                RESULT_VARIABLE rc OUTPUT_VARIABLE out ERROR_VARIABLE err)
expect_error("export ${name} -o new.csv" "${name}" "${rc}" "${out}" "${err}")
if(EXISTS ${WORK}/out/new.csv)
  message(FATAL_ERROR "export ${name}: created its output for bad input")
endif()

# export over an earlier file: the earlier bytes stay
set(earlier "t,x,x.vel,x.acc\n0,1,0,0\n")
file(WRITE ${WORK}/out/old.csv "${earlier}")
file(SHA256 ${WORK}/out/old.csv before)
execute_process(COMMAND ${CLI} export ${name} -o ${WORK}/out/old.csv WORKING_DIRECTORY ${dir}
                RESULT_VARIABLE rc OUTPUT_VARIABLE out ERROR_VARIABLE err)
expect_error("export ${name} -o old.csv" "${name}" "${rc}" "${out}" "${err}")
file(SHA256 ${WORK}/out/old.csv after)
if(NOT before STREQUAL after)
  message(FATAL_ERROR "export ${name}: changed an earlier output file")
endif()
file(GLOB left RELATIVE ${WORK}/out ${WORK}/out/* ${WORK}/out/.*)
if(NOT left STREQUAL "old.csv")
  message(FATAL_ERROR "export ${name}: left files beside the output: ${left}")
endif()
if(LARGE)
  file(REMOVE ${FILE})
endif()
file(REMOVE_RECURSE ${WORK})
