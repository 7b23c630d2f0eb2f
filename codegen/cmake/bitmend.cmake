# bitmend.cmake -- generate a spec's C module at build time and compile it into a target.
#
#   find_program(BITMEND_EXECUTABLE bitmend REQUIRED)
#   execute_process(COMMAND "${BITMEND_EXECUTABLE}" --cmake-dir OUTPUT_VARIABLE BITMEND_CMAKE_DIR
#                   OUTPUT_STRIP_TRAILING_WHITESPACE COMMAND_ERROR_IS_FATAL ANY)
#   include("${BITMEND_CMAKE_DIR}/bitmend.cmake")
#   bitmend_add_spec(firmware specs/soil_probe.toml [PROFILE small] [NAME soil_probe] [OUTPUT_DIR dir])
#
# The module's .c joins the target's sources and its folder the target's include path (PUBLIC), so
# `#include "soil_probe.h"` works in the target and in whatever links it.  `bitmend generate` runs at build
# time, not at configure time: a clean build folder generates everything, and the depfile bitmend writes
# (the spec, the templates, the version stamp) regenerates the module when the spec or bitmend changes.
# Needs CMake 3.20 (DEPFILE with the Makefile generators).

cmake_minimum_required(VERSION 3.20)

if(NOT BITMEND_EXECUTABLE)
  find_program(BITMEND_EXECUTABLE bitmend REQUIRED)
endif()

function(bitmend_add_spec target spec)
  cmake_parse_arguments(PARSE_ARGV 2 ARG "" "PROFILE;NAME;OUTPUT_DIR" "")
  if(ARG_UNPARSED_ARGUMENTS)
    message(FATAL_ERROR "bitmend_add_spec: unknown arguments ${ARG_UNPARSED_ARGUMENTS}")
  endif()
  get_filename_component(spec_path "${spec}" ABSOLUTE)
  if(NOT EXISTS "${spec_path}")
    message(FATAL_ERROR "bitmend_add_spec: ${spec_path}: no such spec file")
  endif()
  # The module's name is the spec's [code] name (the only `name` key a spec has), unless NAME says.
  set(name "${ARG_NAME}")
  if(NOT name)
    file(STRINGS "${spec_path}" line REGEX "^[ \t]*name[ \t]*=[ \t]*[\"'][a-z][a-z0-9_]*[\"']" LIMIT_COUNT 1)
    string(REGEX REPLACE "^[^\"']*[\"']([a-z0-9_]+)[\"'].*$" "\\1" name "${line}")
  endif()
  if(NOT name MATCHES "^[a-z][a-z0-9_]*$")
    message(FATAL_ERROR "bitmend_add_spec: ${spec_path}: no [code] name found; pass NAME")
  endif()
  set(dir "${ARG_OUTPUT_DIR}")
  if(NOT dir)
    set(dir "${CMAKE_CURRENT_BINARY_DIR}/bitmend")
  endif()
  get_filename_component(dir "${dir}" ABSOLUTE BASE_DIR "${CMAKE_CURRENT_BINARY_DIR}")
  set(profile_args "")
  if(ARG_PROFILE)
    set(profile_args --profile "${ARG_PROFILE}")
  endif()
  set(outputs "${dir}/${name}.c" "${dir}/${name}.h")
  add_custom_command(
    OUTPUT ${outputs}
    COMMAND "${BITMEND_EXECUTABLE}" generate "${spec_path}" -o "${dir}" --depfile "${dir}/${name}.d"
            ${profile_args}
    # bitmend leaves unchanged files alone; the stamp tells the build tool the outputs are current
    COMMAND "${CMAKE_COMMAND}" -E touch_nocreate ${outputs}
    DEPENDS "${spec_path}" "${BITMEND_EXECUTABLE}"
    DEPFILE "${dir}/${name}.d"
    COMMENT "bitmend: ${name} from ${spec}"
    VERBATIM)
  target_sources(${target} PRIVATE ${outputs})
  target_include_directories(${target} PUBLIC "${dir}")
endfunction()
