# One warning set for every target of the project (library, front end, tests, benchmarks, fuzz targets).
# -DREPEL_WERROR=ON turns them into errors; scripts/test.sh (the thorough tier, what CI runs) sets it. Only with GCC:
# clang's -Wconversion also implies -Wsign-conversion, a stricter set the code is not written against.
option(REPEL_WERROR "Treat compiler warnings as errors (GCC)" OFF)
function(repel_warnings target)
  # -Wno-missing-field-initializers: the settings structs of the front door are meant to be filled by designated
  # initializers naming only what differs from the defaults (`BuildSettings{.refine = false}`), and GCC 12 warns
  # on every member such an initializer leaves to its default member initializer.
  target_compile_options(${target} PRIVATE -Wall -Wextra -Wpedantic -Wshadow -Wconversion -Wno-missing-field-initializers)
  # GCC 12 (Debian bookworm) reports -Wrestrict inside libstdc++ for `"text" + std::string(...)` at -O2 and above,
  # a false positive fixed in GCC 13 (GCC bug 105329).
  if(CMAKE_CXX_COMPILER_ID STREQUAL "GNU" AND CMAKE_CXX_COMPILER_VERSION VERSION_LESS 13)
    target_compile_options(${target} PRIVATE -Wno-restrict)
  endif()
  if(REPEL_WERROR AND CMAKE_CXX_COMPILER_ID STREQUAL "GNU")
    target_compile_options(${target} PRIVATE -Werror)
  endif()
endfunction()
