# Runs the tacet binary with the arguments in ${CASE}.cmd (one per line; "@"
# stands for the golden folder) and compares stdout, then stderr, with
# ${CASE}.expect and the exit status with ${CASE}.status (default 0).
file(STRINGS ${CASE}.cmd lines)
set(args "")
foreach(line ${lines})
  string(REPLACE "@" "${GOLDEN_DIR}" line "${line}")
  list(APPEND args "${line}")
endforeach()
execute_process(COMMAND ${TACET} ${args}
                OUTPUT_VARIABLE out ERROR_VARIABLE err RESULT_VARIABLE status)
set(expected_status 0)
if(EXISTS ${CASE}.status)
  file(STRINGS ${CASE}.status expected_status)
endif()
# Paths in messages are written relative to the golden folder so the file does
# not depend on where the checkout lives.
string(REPLACE "${GOLDEN_DIR}/" "" out "${out}")
string(REPLACE "${GOLDEN_DIR}/" "" err "${err}")
set(actual "${out}${err}")
if(NOT EXISTS ${CASE}.expect)
  file(WRITE ${CASE}.actual "${actual}")
  message(FATAL_ERROR "no ${CASE}.expect; the output is in ${CASE}.actual:\n${actual}")
endif()
file(READ ${CASE}.expect expected)
if(NOT actual STREQUAL expected)
  file(WRITE ${CASE}.actual "${actual}")
  message(FATAL_ERROR "output differs from ${CASE}.expect (written to ${CASE}.actual):\n${actual}")
endif()
if(NOT status STREQUAL expected_status)
  message(FATAL_ERROR "exit status ${status}, expected ${expected_status}")
endif()
