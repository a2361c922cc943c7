# Test registration helpers for nilstep.
#
# Every test runs with the working directory tests/ in the source tree and
# with these environment variables:
#   NILSTEP_SOURCE_DIR  the source tree (find golden files, scenarios, ...)
#   NILSTEP_BUILD_DIR   the build tree
#   NILSTEP_BINARY      absolute path of the built nilstep program; only set
#                       once ui/ has sources and the program target exists
# A test that cannot run (no program yet, no tmux, ...) exits with status 77;
# ctest then reports it as skipped instead of failed.

include_guard(GLOBAL)

# Tests that drive the program depend on the fixture below, which brings the
# nilstep target up to date before they start (ctest itself builds nothing).
function(nilstep_setup_binary_fixture)
    if(NOT TARGET nilstep)
        return()
    endif()
    add_test(NAME nilstep_program_built
             COMMAND "${CMAKE_COMMAND}" --build "${CMAKE_BINARY_DIR}"
                     --target nilstep --config $<CONFIG>)
    set_tests_properties(nilstep_program_built PROPERTIES
        FIXTURES_SETUP nilstep_program
        LABELS build
        TIMEOUT 900)
endfunction()

# nilstep_test_properties(<test> LABEL <label> [NEEDS_BINARY])
function(nilstep_test_properties test)
    cmake_parse_arguments(PARSE_ARGV 1 arg "NEEDS_BINARY" "LABEL" "")
    set(env
        "NILSTEP_SOURCE_DIR=${CMAKE_SOURCE_DIR}"
        "NILSTEP_BUILD_DIR=${CMAKE_BINARY_DIR}")
    if(TARGET nilstep)
        list(APPEND env "NILSTEP_BINARY=$<TARGET_FILE:nilstep>")
    endif()
    set_tests_properties(${test} PROPERTIES
        ENVIRONMENT "${env}"
        LABELS "${arg_LABEL}"
        SKIP_RETURN_CODE 77
        TIMEOUT "${NILSTEP_TEST_TIMEOUT}")
    if(arg_NEEDS_BINARY AND TARGET nilstep)
        set_tests_properties(${test} PROPERTIES FIXTURES_REQUIRED nilstep_program)
    endif()
endfunction()
