# Locating nilstep's third-party libraries.
#
# Debian 12 ships FLINT 2.9, Arb and Calcium as separate packages without
# pkg-config files for FLINT, so every library is found with find_path and
# find_library. A missing library does not stop configuration at once: all
# misses are collected first, so that one message can name every Debian
# package to install (see nilstep_report_missing_deps).
#
# Each library found becomes an imported target nilstep::<name>. Its include
# directory is an imported interface directory, so the compiler treats those
# headers as system headers and our -Werror does not apply to them.

include_guard(GLOBAL)
include(CheckCSourceCompiles)
include(CMakePushCheckState)

set_property(GLOBAL PROPERTY NILSTEP_MISSING_PACKAGES "")
set_property(GLOBAL PROPERTY NILSTEP_MISSING_DETAILS "")

function(_nilstep_note_missing package detail)
    set_property(GLOBAL APPEND PROPERTY NILSTEP_MISSING_PACKAGES "${package}")
    set_property(GLOBAL APPEND PROPERTY NILSTEP_MISSING_DETAILS "${detail}")
endfunction()

# nilstep_find_dep(<target> LABEL <text> HEADER <relative header path>
#                  NAMES <library names...> PACKAGE <debian package>)
#
# Looks for the header and the library. On success defines the imported
# target nilstep::<target> and the cache entries NILSTEP_<TARGET>_INCLUDE_DIR
# and NILSTEP_<TARGET>_LIBRARY (set those by hand to use a copy installed
# elsewhere, or give CMAKE_PREFIX_PATH). On failure records the package.
function(nilstep_find_dep target)
    cmake_parse_arguments(PARSE_ARGV 1 arg "" "LABEL;HEADER;PACKAGE" "NAMES")
    string(TOUPPER "${target}" upper)
    string(MAKE_C_IDENTIFIER "${upper}" upper)
    set(inc_var "NILSTEP_${upper}_INCLUDE_DIR")
    set(lib_var "NILSTEP_${upper}_LIBRARY")

    find_path(${inc_var} NAMES "${arg_HEADER}"
              DOC "Directory that contains ${arg_HEADER} (${arg_LABEL})")
    find_library(${lib_var} NAMES ${arg_NAMES}
                 DOC "The ${arg_LABEL} library")
    mark_as_advanced(${inc_var} ${lib_var})

    set(problems "")
    if(NOT ${inc_var})
        list(APPEND problems "header <${arg_HEADER}> not found")
    endif()
    if(NOT ${lib_var})
        list(JOIN arg_NAMES "/" names)
        list(APPEND problems "library lib${names} not found")
    endif()
    if(problems)
        list(JOIN problems ", " problems)
        _nilstep_note_missing("${arg_PACKAGE}"
            "${arg_LABEL}: ${problems} -> Debian package ${arg_PACKAGE}")
        return()
    endif()

    message(STATUS "${arg_LABEL}: ${${lib_var}} (headers in ${${inc_var}})")
    add_library(nilstep::${target} UNKNOWN IMPORTED)
    set_target_properties(nilstep::${target} PROPERTIES
        IMPORTED_LOCATION "${${lib_var}}"
        INTERFACE_INCLUDE_DIRECTORIES "${${inc_var}}")
endfunction()

# Finds wide-character ncurses through CMake's own FindCurses module.
function(nilstep_find_curses)
    set(CURSES_NEED_WIDE TRUE)
    set(CURSES_NEED_NCURSES TRUE)
    find_package(Curses QUIET)
    if(NOT CURSES_FOUND)
        _nilstep_note_missing("libncurses-dev"
            "ncursesw: wide-character curses.h or libncursesw not found -> Debian package libncurses-dev")
        return()
    endif()
    # CURSES_LIBRARIES would add the forms library too, which we do not use.
    set(libs ${CURSES_LIBRARY} ${CURSES_EXTRA_LIBRARY})
    message(STATUS "ncursesw: ${libs} (headers in ${CURSES_INCLUDE_DIRS})")
    add_library(nilstep::curses INTERFACE IMPORTED)
    set_target_properties(nilstep::curses PROPERTIES
        INTERFACE_LINK_LIBRARIES "${libs}"
        INTERFACE_INCLUDE_DIRECTORIES "${CURSES_INCLUDE_DIRS}")
endfunction()

# Stops configuration if anything was missing, naming the packages.
function(nilstep_report_missing_deps)
    get_property(packages GLOBAL PROPERTY NILSTEP_MISSING_PACKAGES)
    get_property(details GLOBAL PROPERTY NILSTEP_MISSING_DETAILS)
    if(NOT packages)
        return()
    endif()
    list(REMOVE_DUPLICATES packages)
    list(JOIN packages " " package_words)
    list(JOIN details "\n  " detail_lines)
    message(FATAL_ERROR
        "nilstep cannot be built: required libraries are missing.\n"
        "  ${detail_lines}\n"
        "Install the missing Debian package(s) with\n"
        "  apt-get install ${package_words}\n"
        "or run `make deps` (which runs .ci/install-deps). If a library is "
        "installed in an unusual place, pass -DCMAKE_PREFIX_PATH=<prefix> or "
        "set the NILSTEP_<NAME>_INCLUDE_DIR / NILSTEP_<NAME>_LIBRARY cache "
        "entries.")
endfunction()

# nilstep_check_usable(<result var> LABEL <text> PACKAGE <debian package>
#                      LIBRARIES <targets or paths...> SOURCE <C program>)
#
# Compiles and links a small program against libraries that were found, to
# catch mismatched or broken installations (for example headers whose
# internal "flint/..." includes do not resolve). A failed check is not cached,
# so fixing the installation and re-running cmake is enough.
function(nilstep_check_usable var)
    cmake_parse_arguments(PARSE_ARGV 1 arg "" "LABEL;PACKAGE;SOURCE" "LIBRARIES")
    cmake_push_check_state(RESET)
    set(CMAKE_REQUIRED_QUIET TRUE)
    set(CMAKE_REQUIRED_LIBRARIES ${arg_LIBRARIES})
    set(CMAKE_REQUIRED_DEFINITIONS ${NILSTEP_FEATURE_DEFINITIONS})
    check_c_source_compiles("${arg_SOURCE}" ${var})
    cmake_pop_check_state()
    if(NOT ${var})
        unset(${var} CACHE)
        message(FATAL_ERROR
            "${arg_LABEL} was found, but a small program using it does not "
            "compile and link (the compiler output is in the CMake logs under "
            "${CMAKE_BINARY_DIR}/CMakeFiles). Reinstall the "
            "Debian package: apt-get install --reinstall ${arg_PACKAGE}")
    endif()
    message(STATUS "${arg_LABEL}: a test program compiles and links")
endfunction()
