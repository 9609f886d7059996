# One static library per part: planmill_<part> is built from src/<part>/**/*.cpp (globbed, so a new
# file needs no edit here) and promises the headers include/planmill/<part>/.
#
#   planmill_part(<part> [PUBLIC <item>...] [PRIVATE <item>...] [EXCEPT <file>...])
#
# An item is a lower part by its name (base, io, ...) or an outside target (planmill_hdf5,
# spdlog::spdlog, ...). PUBLIC: the part's headers include it; PRIVATE: only its sources do.
# EXCEPT names files of src/<part>/ that stay out of the library (the CLI's main.cpp).
#
# The flow is the order of the calls: a part may use only parts declared before it, so a circle
# cannot be written down. Headers are seen only by what links the part: each part gets an include
# root of its own under <build>/parts/<part>/ (include/planmill/<part> and private/<part>, links to
# the source folders), so an include of a part the target does not link fails to build.
function(planmill_part part)
  cmake_parse_arguments(PARSE_ARGV 1 ARG "" "" "PUBLIC;PRIVATE;EXCEPT")
  if(ARG_UNPARSED_ARGUMENTS)
    message(FATAL_ERROR "planmill_part(${part}): unknown arguments ${ARG_UNPARSED_ARGUMENTS}")
  endif()
  foreach(scope PUBLIC PRIVATE)
    set(libs_${scope})
    foreach(item IN LISTS ARG_${scope})
      if(item MATCHES "^[a-z]+$")
        if(NOT TARGET planmill_${item})
          message(FATAL_ERROR "part ${part} uses part ${item}, which is not below it in the flow "
                              "(a part may use only parts declared before it, docs/architecture.md)")
        endif()
        list(APPEND libs_${scope} planmill_${item})
      else()
        list(APPEND libs_${scope} ${item})
      endif()
    endforeach()
  endforeach()

  file(GLOB_RECURSE sources CONFIGURE_DEPENDS ${PROJECT_SOURCE_DIR}/src/${part}/*.cpp)
  foreach(file IN LISTS ARG_EXCEPT)
    list(REMOVE_ITEM sources ${PROJECT_SOURCE_DIR}/src/${part}/${file})
  endforeach()
  add_library(planmill_${part} STATIC ${sources})

  set(root ${PROJECT_BINARY_DIR}/parts/${part})
  file(MAKE_DIRECTORY ${root}/include/planmill ${root}/private)
  if(IS_DIRECTORY ${PROJECT_SOURCE_DIR}/include/planmill/${part})
    file(CREATE_LINK ${PROJECT_SOURCE_DIR}/include/planmill/${part} ${root}/include/planmill/${part} SYMBOLIC)
    target_include_directories(planmill_${part} PUBLIC ${root}/include)
  endif()
  file(CREATE_LINK ${PROJECT_SOURCE_DIR}/src/${part} ${root}/private/${part} SYMBOLIC)
  target_include_directories(planmill_${part} PRIVATE ${root}/private)

  target_link_libraries(planmill_${part} PUBLIC planmill_flags ${libs_PUBLIC} PRIVATE ${libs_PRIVATE})
  planmill_warnings(planmill_${part})
  set_property(GLOBAL APPEND PROPERTY PLANMILL_PARTS planmill_${part})
endfunction()
